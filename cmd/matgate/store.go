package main

import (
	"fmt"
	"log/slog"

	"github.com/hibiken/asynq"
	"github.com/spf13/cobra"

	"matgate/worker"
)

func newStoreCmd(e *env) *cobra.Command {
	c := &cobra.Command{
		Use:   "store",
		Short: "Look after serve's records directory",
	}
	c.AddCommand(newStorePendingCmd(e))
	for _, sub := range c.Commands() {
		wrapArgs(sub)
	}
	return c
}

func newStorePendingCmd(e *env) *cobra.Command {
	var replay bool
	c := &cobra.Command{
		Use:   "pending",
		Short: "List the finished records that are in Redis but not in the records directory; --replay stores them",
		Long: `store pending lists the records that workers finished and left in Redis
but that are not files in the records directory yet: jobs whose store
task has not run, waits for a retry, or gave up while the directory
failed (a full disk). serve stores them by itself once the directory works
again (every store.reconcile_interval); this command shows them.

--replay stores them now, through the same checks and signing as serve
(a record that is not its job's is refused and its job failed). It needs
the directory's write lock, so it runs only while serve is stopped.

Configuration as serve's: --config, MATGATE_* environment, --store and
--redis. Exit 0 after a listing, or when --replay stored every pending
record; 1 when --replay refused some (their jobs are failed); 3 when Redis
or the directory fails (with --replay: the records left stay pending).`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			cfg, err := loadConfig(cmd, map[string]string{"store.dir": "store", "redis.url": "redis"})
			if err != nil {
				return err
			}
			rdb, err := cfg.redisClient()
			if err != nil {
				return err
			}
			defer rdb.Close()
			ctx := cmd.Context()
			if !replay {
				s, err := worker.OpenDirStoreReadOnly(cfg.Store.Dir)
				if err != nil {
					return invalid("%v", err)
				}
				defer s.Close()
				ps, err := worker.ListPending(ctx, rdb, s.Has)
				if err != nil {
					return &exitError{code: exitInternal, err: err}
				}
				for _, p := range ps {
					if p.Problem != "" {
						fmt.Fprintf(e.stdout, "%s  (unreadable: %s)\n", p.ID, p.Problem)
						continue
					}
					fmt.Fprintf(e.stdout, "%s  %s r%d %s, created %s\n", p.ID, p.CardID, p.Revision, p.Verdict, p.Created)
				}
				fmt.Fprintf(e.stdout, "%d record(s) in Redis and not in %s\n", len(ps), cfg.Store.Dir)
				return nil
			}
			log := slog.New(slog.NewTextHandler(e.stderr, nil))
			store, err := worker.OpenStore(cfg.Store.Dir, worker.StoreOptions{Log: log})
			if err != nil {
				return &exitError{code: exitInternal, err: fmt.Errorf("%w (while serve runs, it stores pending records by itself)", err)}
			}
			defer store.Close()
			key, err := serveSignKey(cfg, log)
			if err != nil {
				return err
			}
			insp := asynq.NewInspectorFromRedisClient(rdb)
			defer insp.Close()
			m := &worker.Materializer{Redis: rdb, Store: store, Key: key, Inspector: insp, Log: log}
			r := m.Reconcile(ctx)
			fmt.Fprintf(e.stdout, "%d record(s) pending: %d stored, %d refused (their jobs failed)\n", len(r.Pending), r.Stored, r.Refused)
			if r.Err != nil {
				return &exitError{code: exitInternal, err: r.Err}
			}
			if r.Refused > 0 {
				return &exitError{code: exitFailed}
			}
			return nil
		},
	}
	addConfigFlag(c)
	c.Flags().String("store", "", "records directory (store.dir; default matgate-records)")
	c.Flags().String("redis", "", "Redis URL (redis.url; default redis://127.0.0.1:6379/0)")
	c.Flags().BoolVar(&replay, "replay", false, "store the pending records now (serve must be stopped)")
	return c
}
