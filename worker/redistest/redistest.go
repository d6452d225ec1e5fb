// Package redistest starts private redis-server processes for tests: each
// on its own free 127.0.0.1 port with its own directory, configured by flags
// only (never the machine's config or its Redis on 6379). A test without
// redis-server on the PATH is skipped with a message, and fails under
// CI=true. It is imported by tests only.
package redistest

import (
	"context"
	"fmt"
	"net"
	"os"
	"os/exec"
	"strconv"
	"testing"
	"time"

	"github.com/redis/go-redis/v9"
)

// Server is a private redis-server for one test: its own port on
// 127.0.0.1, its own directory, configured by flags only (never the
// machine's config or its Redis on 6379).
type Server struct {
	Addr string
	Dir  string
	args []string
	cmd  *exec.Cmd
	t    testing.TB
}

// Start starts a redis-server with persistence off, or with the extra
// flags given (e.g. AOF on), waits for PING and stops it in t.Cleanup. It
// skips the test when redis-server is missing, and fails it when CI=true.
func Start(t testing.TB, extra ...string) *Server {
	t.Helper()
	bin, err := exec.LookPath("redis-server")
	if err != nil {
		if os.Getenv("CI") == "true" {
			t.Fatalf("redis-server not found (CI=true, so this is a failure): %v", err)
		}
		t.Skipf("redis-server not found, skipping a test that needs a real Redis: %v", err)
	}
	l, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		t.Fatal(err)
	}
	port := l.Addr().(*net.TCPAddr).Port
	l.Close()
	r := &Server{Addr: "127.0.0.1:" + strconv.Itoa(port), Dir: t.TempDir(), t: t}
	r.args = append([]string{"--port", strconv.Itoa(port), "--bind", "127.0.0.1", "--save", "", "--appendonly", "no",
		"--dir", r.Dir, "--maxmemory-policy", "noeviction", "--loglevel", "warning", "--logfile", "redis.log"}, extra...)
	r.start(bin)
	t.Cleanup(r.Stop)
	return r
}

func (r *Server) start(bin string) {
	r.t.Helper()
	r.cmd = exec.Command(bin, r.args...)
	if err := r.cmd.Start(); err != nil {
		r.t.Fatalf("start redis-server: %v", err)
	}
	c := redis.NewClient(&redis.Options{Addr: r.Addr})
	defer c.Close()
	deadline := time.Now().Add(10 * time.Second)
	for {
		ctx, cancel := context.WithTimeout(context.Background(), 200*time.Millisecond)
		err := c.Ping(ctx).Err()
		cancel()
		if err == nil {
			return
		}
		if time.Now().After(deadline) {
			r.Stop()
			r.t.Fatalf("redis-server on %s does not answer PING: %v", r.Addr, err)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// Restart stops the server (SIGKILL: nothing gets a chance to flush) and
// starts it again on the same port and directory.
func (r *Server) Restart() {
	r.t.Helper()
	bin := r.cmd.Path
	r.Stop()
	r.start(bin)
}

// Stop kills the server; Start registers it with t.Cleanup.
func (r *Server) Stop() {
	if r.cmd == nil || r.cmd.Process == nil {
		return
	}
	r.cmd.Process.Kill()
	r.cmd.Wait()
	r.cmd = nil
}

// Client returns a go-redis client of the server, closed in t.Cleanup.
func (r *Server) Client(t testing.TB) *redis.Client {
	c := redis.NewClient(&redis.Options{Addr: r.Addr, ContextTimeoutEnabled: true})
	t.Cleanup(func() { c.Close() })
	return c
}

// URL is the server's redis:// address, database 0.
func (r *Server) URL() string { return fmt.Sprintf("redis://%s/0", r.Addr) }
