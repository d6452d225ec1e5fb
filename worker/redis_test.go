package worker

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

// testRedis is a private redis-server for one test: its own port on
// 127.0.0.1, its own directory, configured by flags only (never the
// machine's config or its Redis on 6379).
type testRedis struct {
	Addr string
	Dir  string
	args []string
	cmd  *exec.Cmd
	t    testing.TB
}

// startRedis starts a redis-server with persistence off, or with the extra
// flags given (e.g. AOF on), waits for PING and stops it in t.Cleanup. It
// skips the test when redis-server is missing, and fails it when CI=true.
func startRedis(t testing.TB, extra ...string) *testRedis {
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
	r := &testRedis{Addr: "127.0.0.1:" + strconv.Itoa(port), Dir: t.TempDir(), t: t}
	r.args = append([]string{"--port", strconv.Itoa(port), "--bind", "127.0.0.1", "--save", "", "--appendonly", "no",
		"--dir", r.Dir, "--maxmemory-policy", "noeviction", "--loglevel", "warning", "--logfile", "redis.log"}, extra...)
	r.start(bin)
	t.Cleanup(r.stop)
	return r
}

func (r *testRedis) start(bin string) {
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
			r.stop()
			r.t.Fatalf("redis-server on %s does not answer PING: %v", r.Addr, err)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// restart stops the server (SIGKILL: nothing gets a chance to flush) and
// starts it again on the same port and directory.
func (r *testRedis) restart() {
	r.t.Helper()
	bin := r.cmd.Path
	r.stop()
	r.start(bin)
}

func (r *testRedis) stop() {
	if r.cmd == nil || r.cmd.Process == nil {
		return
	}
	r.cmd.Process.Kill()
	r.cmd.Wait()
	r.cmd = nil
}

// client returns a go-redis client of the server, closed in t.Cleanup.
func (r *testRedis) client(t testing.TB) *redis.Client {
	c := redis.NewClient(&redis.Options{Addr: r.Addr, ContextTimeoutEnabled: true})
	t.Cleanup(func() { c.Close() })
	return c
}

func (r *testRedis) URL() string { return fmt.Sprintf("redis://%s/0", r.Addr) }
