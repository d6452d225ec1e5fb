package worker

import (
	"crypto/rand"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/base64"
	"encoding/hex"
	"errors"
	"fmt"
	"net/http"
	"slices"
	"strings"
)

// Token scopes.
const (
	ScopeSubmit = "submit" // POST /v1/cards
	ScopeRead   = "read"   // GET /v1/jobs, /v1/records, /metrics
)

// Token is one configured API token: its name (for logs and revocation),
// the hex sha256 of the secret, never the secret itself, and its scopes.
type Token struct {
	Name   string   `json:"name" mapstructure:"name"`
	SHA256 string   `json:"sha256" mapstructure:"sha256"`
	Scopes []string `json:"scopes" mapstructure:"scopes"`
}

// Validate returns every problem of the token entry; i is its position in
// the configuration.
func (t Token) Validate(i int) []error {
	var errs []error
	where := fmt.Sprintf("auth.tokens[%d]", i)
	if t.Name == "" {
		errs = append(errs, fmt.Errorf("%s.name: empty; give each token a name", where))
	}
	if b, err := hex.DecodeString(t.SHA256); err != nil || len(b) != sha256.Size {
		errs = append(errs, fmt.Errorf("%s.sha256: %q is not 64 hex digits (matgate token new prints it)", where, t.SHA256))
	}
	if len(t.Scopes) == 0 {
		errs = append(errs, fmt.Errorf("%s.scopes: empty; use submit and/or read", where))
	}
	for _, s := range t.Scopes {
		if s != ScopeSubmit && s != ScopeRead {
			errs = append(errs, fmt.Errorf("%s.scopes: unknown scope %q; use submit and/or read", where, s))
		}
	}
	return errs
}

// NewToken returns a fresh secret (256 random bits, base64url with a "mgt_"
// prefix so that secret scanners can spot it) and its configuration entry.
func NewToken(name string, scopes []string) (secret string, entry Token) {
	var b [32]byte
	rand.Read(b[:]) // never fails (crypto/rand)
	secret = "mgt_" + base64.RawURLEncoding.EncodeToString(b[:])
	sum := sha256.Sum256([]byte(secret))
	return secret, Token{Name: name, SHA256: hex.EncodeToString(sum[:]), Scopes: scopes}
}

type authToken struct {
	name   string
	sum    []byte
	scopes []string
}

// authenticator checks bearer tokens against hashes in constant time.
type authenticator struct{ tokens []authToken }

func newAuthenticator(ts []Token) (*authenticator, error) {
	a := &authenticator{}
	var errs []error
	for i, t := range ts {
		if e := t.Validate(i); len(e) > 0 {
			errs = append(errs, e...)
			continue
		}
		sum, _ := hex.DecodeString(t.SHA256) // validated
		a.tokens = append(a.tokens, authToken{name: t.Name, sum: sum, scopes: t.Scopes})
	}
	return a, errors.Join(errs...)
}

// identify returns the token a request presents, or nil. The scheme name
// is case-insensitive (RFC 7235, sec. 2.1: "bearer" is "Bearer"). Every
// configured hash is compared, in constant time, whatever matches first,
// so the time taken tells nothing about which hash came close.
func (a *authenticator) identify(r *http.Request) *authToken {
	scheme, secret, ok := strings.Cut(r.Header.Get("Authorization"), " ")
	secret = strings.TrimLeft(secret, " ")
	if !ok || !strings.EqualFold(scheme, "Bearer") || secret == "" {
		return nil
	}
	sum := sha256.Sum256([]byte(secret))
	var found *authToken
	for i := range a.tokens {
		if subtle.ConstantTimeCompare(sum[:], a.tokens[i].sum) == 1 {
			found = &a.tokens[i]
		}
	}
	return found
}

func (t *authToken) has(scope string) bool { return slices.Contains(t.scopes, scope) }
