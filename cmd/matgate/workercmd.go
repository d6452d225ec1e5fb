package main

import (
	"context"
	"fmt"
	"log/slog"
	"runtime"

	"github.com/hibiken/asynq"
	"github.com/spf13/cobra"

	"matgate/worker"
)

func newWorkerCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "worker",
		Short: "Run verifications from the queue",
		Long: `worker takes verification tasks from Redis and runs them with the same
function as matgate verify, writing each record and neutral card to Redis
for serve to store. It needs Redis and nothing else, so it scales out: run
one per machine, all on the same Redis. On SIGTERM or Ctrl-C it stops
taking tasks and puts unfinished ones back at the head of the queue.

Configuration: defaults < --config file < MATGATE_* environment < flags;
see deploy/matgate.example.yaml.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			cfg, err := loadConfig(cmd, map[string]string{"redis.url": "redis", "worker.concurrency": "concurrency", "verify.budget": "budget"})
			if err != nil {
				return err
			}
			log := slog.New(slog.NewTextHandler(e.stderr, nil))
			rdb, err := cfg.redisClient()
			if err != nil {
				return err
			}
			defer rdb.Close()
			client := asynq.NewClientFromRedisClient(rdb)
			defer client.Close()
			n := cfg.Worker.Concurrency
			if n == 0 {
				n = runtime.NumCPU()
			}
			h := &worker.Handler{Redis: rdb, Queue: client, Tool: toolOf(), Budget: cfg.Verify.Budget}
			srv, mux := worker.NewVerifyServer(rdb, h, worker.ServerOptions{
				Concurrency: n, ShutdownTimeout: cfg.Server.ShutdownTimeout,
				Logger: asynqLogger{log}, LogLevel: asynq.WarnLevel,
				ErrorHandler: asynq.ErrorHandlerFunc(func(_ context.Context, t *asynq.Task, err error) {
					log.Error("task failed", "err", err)
				}),
			})
			if err := srv.Start(mux); err != nil {
				return &exitError{code: exitInternal, err: fmt.Errorf("verify queue: %w", err)}
			}
			log.Info("working", "concurrency", n, "budget", cfg.Verify.Budget, "version", version)
			<-cmd.Context().Done()
			log.Info("shutting down: unfinished tasks go back to the queue")
			srv.Shutdown()
			return nil
		},
	}
	addConfigFlag(c)
	c.Flags().String("redis", "", "Redis URL (redis.url; default redis://127.0.0.1:6379/0)")
	c.Flags().Int("concurrency", 0, "verifications at once (worker.concurrency; default the number of cores)")
	c.Flags().Duration("budget", 0, "time limit of one verification (verify.budget; default 2m)")
	return c
}
