package main

import (
	"crypto/x509"
	"encoding/json"
	"errors"
	"fmt"
	"net"
	"net/url"
	"os"
	"reflect"
	"slices"
	"strings"
	"time"

	"github.com/go-viper/mapstructure/v2"
	"github.com/redis/go-redis/v9"
	"github.com/spf13/cobra"
	"github.com/spf13/viper"

	"matgate/schema"
	"matgate/worker"
)

// Config is the configuration of serve and worker. viper fills it from,
// lowest first: the defaults below, the --config file, MATGATE_*
// environment variables ("." becomes "_": MATGATE_REDIS_URL), and flags.
// Nothing but loadConfig reads viper. deploy/matgate.example.yaml documents
// every key.
type Config struct {
	Redis struct {
		URL    string `mapstructure:"url"`     // redis://[user:password@]host:port/db, rediss:// for TLS
		CAFile string `mapstructure:"ca_file"` // PEM CA certificates a rediss:// server's certificate must chain to; "": the system's
	} `mapstructure:"redis"`
	Server struct {
		Listen          string        `mapstructure:"listen"`           // host:port of the HTTP API
		ReadTimeout     time.Duration `mapstructure:"read_timeout"`     // a whole request, body included
		WriteTimeout    time.Duration `mapstructure:"write_timeout"`    // a whole response
		ShutdownTimeout time.Duration `mapstructure:"shutdown_timeout"` // grace for requests and tasks on SIGTERM
		MaxInFlight     int           `mapstructure:"max_in_flight"`    // card submissions and report renderings at once; 503 beyond
		TokenRate       float64       `mapstructure:"token_rate"`       // requests a second per token, sustained; 429 beyond
		TokenBurst      int           `mapstructure:"token_burst"`      // requests a token may make at once above the rate
	} `mapstructure:"server"`
	Store struct {
		Dir                string        `mapstructure:"dir"`                 // the records directory (serve only)
		Create             bool          `mapstructure:"create"`              // make dir a records directory if it is not one
		SignKey            string        `mapstructure:"sign_key"`            // ed25519 private key (PEM) that signs records and checkpoints; "": beside dir
		ReconcileInterval  time.Duration `mapstructure:"reconcile_interval"`  // how often serve stores records left in Redis
		CheckpointInterval time.Duration `mapstructure:"checkpoint_interval"` // how often serve appends a signed checkpoint
	} `mapstructure:"store"`
	Auth struct {
		Tokens []worker.Token `mapstructure:"tokens"`
	} `mapstructure:"auth"`
	Worker struct {
		Concurrency int `mapstructure:"concurrency"` // 0: the number of cores
	} `mapstructure:"worker"`
	Verify struct {
		Profile string        `mapstructure:"profile"` // for cards that name none
		Budget  time.Duration `mapstructure:"budget"`  // one verification's time limit
	} `mapstructure:"verify"`
}

// configDefaults holds every key's default; a key without one would be
// invisible to environment variables (viper reads the environment only
// for keys it knows).
var configDefaults = map[string]any{
	"redis.url":                 "redis://127.0.0.1:6379/0",
	"redis.ca_file":             "",
	"server.listen":             "127.0.0.1:8080",
	"server.max_in_flight":      worker.DefaultMaxInFlight,
	"server.token_rate":         worker.DefaultTokenRate,
	"server.token_burst":        worker.DefaultTokenBurst,
	"server.read_timeout":       "30s",
	"server.write_timeout":      "60s",
	"server.shutdown_timeout":   "30s",
	"store.dir":                 "matgate-records",
	"store.create":              false,
	"store.sign_key":            "",
	"store.reconcile_interval":  worker.DefaultReconcileInterval.String(),
	"store.checkpoint_interval": worker.DefaultCheckpointInterval.String(),
	"auth.tokens":               []any{},
	"worker.concurrency":        0,
	"verify.profile":            schema.ProfileStandard,
	"verify.budget":             worker.DefaultBudget.String(),
}

// addConfigFlag adds --config to a command.
func addConfigFlag(c *cobra.Command) {
	c.Flags().String("config", "", "configuration file (YAML); see deploy/matgate.example.yaml")
}

// loadConfig builds the Config of a command: flags maps configuration keys
// to the command's flag names, and only flags given on the command line
// override (a flag's own default never beats the file or the
// environment). Every problem comes back at once, as an invalid-input
// error.
func loadConfig(cmd *cobra.Command, flags map[string]string) (*Config, error) {
	v := viper.New()
	for k, d := range configDefaults {
		v.SetDefault(k, d)
	}
	v.SetEnvPrefix("MATGATE")
	v.SetEnvKeyReplacer(strings.NewReplacer(".", "_"))
	v.AutomaticEnv()
	if f := cmd.Flags().Lookup("config"); f != nil && f.Value.String() != "" {
		v.SetConfigFile(f.Value.String())
		v.SetConfigType("yaml")
		if err := v.ReadInConfig(); err != nil {
			return nil, invalid("--config %s: %v", f.Value.String(), err)
		}
	}
	for key, name := range flags {
		if f := cmd.Flags().Lookup(name); f != nil && f.Changed {
			if err := v.BindPFlag(key, f); err != nil {
				return nil, err
			}
		}
	}
	var c Config
	hook := mapstructure.ComposeDecodeHookFunc(
		mapstructure.StringToTimeDurationHookFunc(),
		jsonStringToSlice, // MATGATE_AUTH_TOKENS='[{"name":...}]'
		mapstructure.StringToSliceHookFunc(","),
	)
	if err := v.UnmarshalExact(&c, viper.DecodeHook(hook)); err != nil {
		return nil, invalid("configuration: %v (every key is listed in deploy/matgate.example.yaml)", err)
	}
	if err := c.Validate(); err != nil {
		return nil, invalid("configuration:\n%v", err)
	}
	return &c, nil
}

// jsonStringToSlice decodes a JSON array given as a string (an environment
// variable) into a slice.
func jsonStringToSlice(from, to reflect.Type, data any) (any, error) {
	s, ok := data.(string)
	if !ok || from.Kind() != reflect.String || to.Kind() != reflect.Slice || !strings.HasPrefix(strings.TrimSpace(s), "[") {
		return data, nil
	}
	var out []any
	if err := json.Unmarshal([]byte(s), &out); err != nil {
		return nil, fmt.Errorf("not a JSON array: %w", err)
	}
	return out, nil
}

// Validate returns every field error, one a line, each naming its key.
func (c *Config) Validate() error {
	var errs []error
	bad := func(key, format string, args ...any) {
		errs = append(errs, fmt.Errorf("%s: %s", key, fmt.Sprintf(format, args...)))
	}
	if _, err := redis.ParseURL(c.Redis.URL); err != nil {
		bad("redis.url", "%q: %v", c.Redis.URL, err)
	}
	if _, _, err := net.SplitHostPort(c.Server.Listen); err != nil {
		bad("server.listen", "%q: want host:port: %v", c.Server.Listen, err)
	}
	if c.Server.MaxInFlight < 1 || c.Server.MaxInFlight > 1024 {
		bad("server.max_in_flight", "%d: want 1 to 1024", c.Server.MaxInFlight)
	}
	if !(c.Server.TokenRate > 0) || c.Server.TokenRate > 1e6 {
		bad("server.token_rate", "%g: want a rate above 0 requests a second (up to 1e6)", c.Server.TokenRate)
	}
	if c.Server.TokenBurst < 1 || c.Server.TokenBurst > 1<<20 {
		bad("server.token_burst", "%d: want 1 to %d requests", c.Server.TokenBurst, 1<<20)
	}
	if u, err := redis.ParseURL(c.Redis.URL); err == nil && c.Redis.CAFile != "" && u.TLSConfig == nil {
		bad("redis.ca_file", "set, but redis.url %q is not rediss:// (TLS)", redactURL(c.Redis.URL))
	}
	for _, d := range []struct {
		key string
		v   time.Duration
	}{{"server.read_timeout", c.Server.ReadTimeout}, {"server.write_timeout", c.Server.WriteTimeout}, {"server.shutdown_timeout", c.Server.ShutdownTimeout},
		{"store.reconcile_interval", c.Store.ReconcileInterval}, {"store.checkpoint_interval", c.Store.CheckpointInterval}} {
		if d.v <= 0 {
			bad(d.key, "%v: want a positive duration such as 30s", d.v)
		}
	}
	if c.Store.Dir == "" {
		bad("store.dir", "empty: name the records directory")
	}
	names := map[string]bool{}
	for i, t := range c.Auth.Tokens {
		errs = append(errs, t.Validate(i)...)
		if names[t.Name] && t.Name != "" {
			bad(fmt.Sprintf("auth.tokens[%d].name", i), "%q is used twice", t.Name)
		}
		names[t.Name] = true
	}
	if c.Worker.Concurrency < 0 || c.Worker.Concurrency > 1024 {
		bad("worker.concurrency", "%d: want 0 (the number of cores) to 1024", c.Worker.Concurrency)
	}
	if p := []string{schema.ProfileStandard, schema.ProfileStrict}; !slices.Contains(p, c.Verify.Profile) {
		bad("verify.profile", "%q: want one of %s", c.Verify.Profile, strings.Join(p, ", "))
	}
	if c.Verify.Budget <= 0 || c.Verify.Budget > 24*time.Hour {
		bad("verify.budget", "%v: want a positive duration up to 24h", c.Verify.Budget)
	}
	return errors.Join(errs...)
}

// redisClient returns the one go-redis client of a process, parsed with
// redis.ParseURL (asynq's own parser drops an ACL user name), with context
// deadlines bounding socket I/O.
func (c *Config) redisClient() (*redis.Client, error) {
	o, err := redis.ParseURL(c.Redis.URL)
	if err != nil {
		return nil, invalid("redis.url: %v", err)
	}
	o.ContextTimeoutEnabled = true
	if c.Redis.CAFile != "" {
		pem, err := os.ReadFile(c.Redis.CAFile)
		if err != nil {
			return nil, invalid("redis.ca_file: %v", err)
		}
		pool := x509.NewCertPool()
		if !pool.AppendCertsFromPEM(pem) {
			return nil, invalid("redis.ca_file %s: no PEM certificate in it", c.Redis.CAFile)
		}
		o.TLSConfig.RootCAs = pool // ParseURL set TLSConfig for rediss:// (Validate checks the scheme)
	}
	return redis.NewClient(o), nil
}

// redactURL drops the password of a Redis URL for a message.
func redactURL(s string) string {
	u, err := url.Parse(s)
	if err != nil {
		return "(unparsable URL)"
	}
	return u.Redacted()
}
