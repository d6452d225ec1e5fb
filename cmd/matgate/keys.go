package main

import (
	"crypto/ed25519"
	"crypto/x509"
	"encoding/pem"
	"errors"
	"fmt"
	"io/fs"
	"log/slog"
	"os"
	"path/filepath"
	"strings"

	"matgate/checks"
)

// readPrivateKey reads an ed25519 private key, PEM-encoded PKCS #8 ("PRIVATE
// KEY"), as `matgate record keygen` writes it.
func readPrivateKey(path string) (ed25519.PrivateKey, error) {
	der, err := readPEM(path, "PRIVATE KEY")
	if err != nil {
		return nil, err
	}
	k, err := x509.ParsePKCS8PrivateKey(der)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	priv, ok := k.(ed25519.PrivateKey)
	if !ok {
		return nil, fmt.Errorf("%s: a %T, not an ed25519 key", path, k)
	}
	return priv, nil
}

// readPublicKey reads an ed25519 public key, PEM-encoded PKIX ("PUBLIC KEY").
func readPublicKey(path string) (ed25519.PublicKey, error) {
	der, err := readPEM(path, "PUBLIC KEY")
	if err != nil {
		return nil, err
	}
	k, err := x509.ParsePKIXPublicKey(der)
	if err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	pub, ok := k.(ed25519.PublicKey)
	if !ok {
		return nil, fmt.Errorf("%s: a %T, not an ed25519 key", path, k)
	}
	return pub, nil
}

func readPEM(path, typ string) ([]byte, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	blk, _ := pem.Decode(b)
	if blk == nil || blk.Type != typ {
		return nil, fmt.Errorf("%s: no PEM block %q", path, typ)
	}
	return blk.Bytes, nil
}

// writeKeyPair writes a new ed25519 key pair as PREFIX.key (private, mode
// 0600) and PREFIX.pub; it refuses to overwrite either.
func writeKeyPair(prefix string) (ed25519.PublicKey, error) {
	pub, priv, err := ed25519.GenerateKey(nil)
	if err != nil {
		return nil, err
	}
	p8, err := x509.MarshalPKCS8PrivateKey(priv)
	if err != nil {
		return nil, err
	}
	pk, err := x509.MarshalPKIXPublicKey(pub)
	if err != nil {
		return nil, err
	}
	for _, f := range []struct {
		path string
		mode os.FileMode
		blk  *pem.Block
	}{
		{prefix + ".key", 0o600, &pem.Block{Type: "PRIVATE KEY", Bytes: p8}},
		{prefix + ".pub", 0o644, &pem.Block{Type: "PUBLIC KEY", Bytes: pk}},
	} {
		w, err := os.OpenFile(f.path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, f.mode)
		if err != nil {
			return nil, err
		}
		if err := pem.Encode(w, f.blk); err != nil {
			w.Close()
			return nil, err
		}
		if err := w.Close(); err != nil {
			return nil, err
		}
	}
	return pub, nil
}

// signKeyPath is the private key with which serve signs records and
// checkpoints: store.sign_key, or, when that is empty, DIR.sign.key beside
// the records directory DIR (outside it, so that a copy of the records
// never carries the key). configured says which.
func (c *Config) signKeyPath() (path string, configured bool) {
	if c.Store.SignKey != "" {
		return c.Store.SignKey, true
	}
	return filepath.Clean(c.Store.Dir) + ".sign.key", false
}

// serveSignKey reads serve's signing key. When store.sign_key is not set
// and DIR.sign.key does not exist (the records directory's first start),
// it makes a key pair there (DIR.sign.key, mode 0600, and DIR.sign.pub)
// and logs where; a configured key that is missing is an error.
func serveSignKey(c *Config, log *slog.Logger) (ed25519.PrivateKey, error) {
	path, configured := c.signKeyPath()
	priv, err := readPrivateKey(path)
	if err == nil || configured || !errors.Is(err, fs.ErrNotExist) {
		if err != nil {
			return nil, invalid("store.sign_key: %v", err)
		}
		return priv, nil
	}
	prefix := strings.TrimSuffix(path, ".key")
	pub, err := writeKeyPair(prefix)
	if err != nil {
		return nil, &exitError{code: exitInternal, err: fmt.Errorf("make the signing key %s: %w", path, err)}
	}
	log.Warn("store: made a new signing key for records and ledger checkpoints; give auditors the public key",
		"key", path, "public_key", prefix+".pub", "key_id", checks.KeyID(pub))
	return readPrivateKey(path)
}
