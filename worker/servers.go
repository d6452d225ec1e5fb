package worker

import (
	"time"

	"github.com/hibiken/asynq"
	"github.com/redis/go-redis/v9"
)

// ServerOptions tune an asynq server of matgate. Zero values mean asynq's
// defaults, except where a field says otherwise.
type ServerOptions struct {
	Concurrency     int           // verify: zero means the number of cores; materialize: always 1
	CheckInterval   time.Duration // how often an idle server polls its queue; zero means DefaultCheckInterval
	ShutdownTimeout time.Duration // how long Shutdown waits for running tasks before requeueing them
	Logger          asynq.Logger
	LogLevel        asynq.LogLevel
	ErrorHandler    asynq.ErrorHandler
}

// DefaultCheckInterval is how often an idle server polls its queue (asynq
// sleeps between half and one and a half of it). asynq's own default, 1 s,
// adds about a second to a card that reaches an idle worker; 10 ms adds
// about 10 ms (BenchmarkQueue) for some 100 read-only Redis calls a second
// per idle process, which append nothing to the AOF.
const DefaultCheckInterval = 10 * time.Millisecond

func (o ServerOptions) config(queue string, concurrency int) asynq.Config {
	if o.CheckInterval <= 0 {
		o.CheckInterval = DefaultCheckInterval
	}
	return asynq.Config{
		Concurrency:       concurrency,
		Queues:            map[string]int{queue: 1},
		RetryDelayFunc:    RetryDelay,
		TaskCheckInterval: o.CheckInterval,
		ShutdownTimeout:   o.ShutdownTimeout,
		Logger:            o.Logger,
		LogLevel:          o.LogLevel,
		ErrorHandler:      o.ErrorHandler,
	}
}

// NewVerifyServer returns the asynq server of matgate worker, serving the
// verify queue with h. It shares rdb and does not close it.
func NewVerifyServer(rdb redis.UniversalClient, h *Handler, o ServerOptions) (*asynq.Server, *asynq.ServeMux) {
	mux := asynq.NewServeMux()
	mux.Handle(TypeVerify, h)
	return asynq.NewServerFromRedisClient(rdb, o.config(QueueVerify, o.Concurrency)), mux
}

// NewMaterializeServer returns the asynq server of matgate serve: the
// materialize queue, one task at a time, since serve is the one writer of
// the records directory and the ledger is a sequence.
func NewMaterializeServer(rdb redis.UniversalClient, m *Materializer, o ServerOptions) (*asynq.Server, *asynq.ServeMux) {
	mux := asynq.NewServeMux()
	mux.Handle(TypeMaterialize, m)
	return asynq.NewServerFromRedisClient(rdb, o.config(QueueMaterialize, 1)), mux
}
