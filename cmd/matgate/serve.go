package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"net/http"

	"github.com/hibiken/asynq"
	"github.com/spf13/cobra"

	"matgate/worker"
)

func newServeCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "serve",
		Short: "Run the HTTP API and the records directory's writer",
		Long: `serve answers the HTTP API (POST /v1/cards, GET /v1/jobs/{id},
/v1/records..., /healthz, /readyz, /metrics), enqueues verifications on
Redis for matgate worker processes, and is the one writer of the records
directory: it checks each finished record that a worker left in Redis
(its digest and verdict hold, it is the job's card), signs it with its
key (store.sign_key; made beside the records directory on the first
start when not set) and turns it into immutable files and a ledger line.
Every store.reconcile_interval it stores the records that Redis holds and
the directory does not (after the directory failed); every
store.checkpoint_interval it appends a signed checkpoint of the ledger to
checkpoints.jsonl for auditors to keep (matgate ledger checkpoint). Stop it with SIGTERM or Ctrl-C: requests in flight finish, the
materialize task in flight goes back to the queue.

Configuration: defaults < --config file < MATGATE_* environment < flags;
see deploy/matgate.example.yaml.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			cfg, err := loadConfig(cmd, map[string]string{"server.listen": "listen", "store.dir": "store", "store.create": "create-store", "redis.url": "redis"})
			if err != nil {
				return err
			}
			return serve(cmd.Context(), e, cfg, nil)
		},
	}
	addConfigFlag(c)
	c.Flags().String("listen", "", "host:port of the HTTP API (server.listen; default 127.0.0.1:8080)")
	c.Flags().String("store", "", "records directory (store.dir; default matgate-records)")
	c.Flags().Bool("create-store", false, "make the records directory if it is not one yet (store.create); without it serve refuses a directory without its marker, such as an unmounted volume")
	c.Flags().String("redis", "", "Redis URL (redis.url; default redis://127.0.0.1:6379/0)")
	return c
}

// serve runs until ctx ends; ready, when set, is told the listening
// address (tests use port 0).
func serve(ctx context.Context, e *env, cfg *Config, ready func(addr string)) error {
	log := slog.New(slog.NewTextHandler(e.stderr, nil))
	rdb, err := cfg.redisClient()
	if err != nil {
		return err
	}
	defer rdb.Close()
	store, err := worker.OpenStore(cfg.Store.Dir, worker.StoreOptions{Create: cfg.Store.Create, Log: log})
	if err != nil {
		return &exitError{code: exitInternal, err: err}
	}
	defer store.Close()
	key, err := serveSignKey(cfg, log)
	if err != nil {
		return err
	}
	client := asynq.NewClientFromRedisClient(rdb)
	defer client.Close()
	insp := asynq.NewInspectorFromRedisClient(rdb)
	defer insp.Close()
	metrics := worker.NewMetrics(insp)
	api, err := worker.NewAPI(worker.APIConfig{
		Redis: rdb, Queue: client, Inspector: insp, Store: store, Metrics: metrics,
		Tokens: cfg.Auth.Tokens, Settings: worker.Settings{ToolVersion: toolOf().Version},
		Budget: cfg.Verify.Budget, DefaultProfile: cfg.Verify.Profile, Log: log,
		MaxInFlight: cfg.Server.MaxInFlight, TokenRate: cfg.Server.TokenRate, TokenBurst: cfg.Server.TokenBurst,
	})
	if err != nil {
		return invalid("configuration: %v", err)
	}
	mat := &worker.Materializer{Redis: rdb, Store: store, Key: key, Inspector: insp, Observe: metrics.Duration.Observe, Log: log}
	msrv, mux := worker.NewMaterializeServer(rdb, mat,
		worker.ServerOptions{ShutdownTimeout: cfg.Server.ShutdownTimeout, Logger: asynqLogger{log}, LogLevel: asynq.WarnLevel})
	if err := msrv.Start(mux); err != nil {
		return &exitError{code: exitInternal, err: fmt.Errorf("materialize queue: %w", err)}
	}
	defer msrv.Shutdown()
	upkeep, stopUpkeep := context.WithCancel(ctx)
	upkeepDone := make(chan struct{})
	go func() {
		defer close(upkeepDone)
		worker.Upkeep(upkeep, mat, worker.UpkeepOptions{Reconcile: cfg.Store.ReconcileInterval, Checkpoint: cfg.Store.CheckpointInterval})
	}()
	defer func() { stopUpkeep(); <-upkeepDone }()
	hs := worker.NewHTTPServer(cfg.Server.Listen, api, worker.HTTPTimeouts{Read: cfg.Server.ReadTimeout, Write: cfg.Server.WriteTimeout})
	ln, err := net.Listen("tcp", cfg.Server.Listen)
	if err != nil {
		return &exitError{code: exitInternal, err: err}
	}
	if len(cfg.Auth.Tokens) == 0 {
		log.Warn("no tokens configured (auth.tokens): every API request will be refused; create one with matgate token new")
	}
	log.Info("serving", "addr", "http://"+ln.Addr().String(), "store", cfg.Store.Dir, "version", version)
	if ready != nil {
		ready(ln.Addr().String())
	}
	served := make(chan error, 1)
	go func() { served <- hs.Serve(ln) }()
	select {
	case err := <-served:
		return &exitError{code: exitInternal, err: err}
	case <-ctx.Done():
	}
	log.Info("shutting down")
	sctx, cancel := context.WithTimeout(context.Background(), cfg.Server.ShutdownTimeout)
	defer cancel()
	if err := hs.Shutdown(sctx); err != nil && !errors.Is(err, http.ErrServerClosed) {
		return &exitError{code: exitInternal, err: fmt.Errorf("shutdown: %w", err)}
	}
	return nil
}

// asynqLogger routes asynq's log lines through slog.
type asynqLogger struct{ l *slog.Logger }

func (a asynqLogger) Debug(args ...any) { a.l.Debug(fmt.Sprint(args...)) }
func (a asynqLogger) Info(args ...any)  { a.l.Info(fmt.Sprint(args...)) }
func (a asynqLogger) Warn(args ...any)  { a.l.Warn(fmt.Sprint(args...)) }
func (a asynqLogger) Error(args ...any) { a.l.Error(fmt.Sprint(args...)) }
func (a asynqLogger) Fatal(args ...any) { a.l.Error(fmt.Sprint(args...)) }
