package worker

import (
	"slices"

	"github.com/hibiken/asynq"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/collectors"
)

// Metrics are the Prometheus metrics of serve, on a registry of their own.
type Metrics struct {
	Registry     *prometheus.Registry
	Duration     prometheus.Histogram // verification seconds, observed as records become files
	RedisErrors  prometheus.Counter
	Refused      *prometheus.CounterVec // requests refused by a limit, by reason: busy (503), rate (429)
	Deduplicated prometheus.Counter     // submissions answered from the body digest, without parsing
}

// NewMetrics registers the metrics and the one queue collector, which reads
// the queues' state from Redis through insp at every scrape.
func NewMetrics(insp *asynq.Inspector) *Metrics {
	m := &Metrics{
		Registry: prometheus.NewRegistry(),
		Duration: prometheus.NewHistogram(prometheus.HistogramOpts{
			Name: "matgate_verification_duration_seconds",
			Help: "Time a worker spent verifying one card.",
			// 10 ms to about 160 s: a demo card takes some 0.1 to 0.3 s
			// on one core; a large strict-profile card, minutes.
			Buckets: prometheus.ExponentialBuckets(0.01, 2, 15),
		}),
		RedisErrors: prometheus.NewCounter(prometheus.CounterOpts{
			Name: "matgate_redis_errors_total",
			Help: "Redis calls of serve that failed (submissions, reads, readiness, scrapes).",
		}),
		Refused: prometheus.NewCounterVec(prometheus.CounterOpts{
			Name: "matgate_requests_refused_total",
			Help: "Requests refused by a limit of serve: busy (503, server.max_in_flight) or rate (429, server.token_rate).",
		}, []string{"reason"}),
		Deduplicated: prometheus.NewCounter(prometheus.CounterOpts{
			Name: "matgate_submissions_deduplicated_total",
			Help: "Submissions of a body sent before, answered from its digest without parsing the card.",
		}),
	}
	m.Registry.MustRegister(m.Duration, m.RedisErrors, m.Refused, m.Deduplicated,
		&queueCollector{insp: insp, errs: m.RedisErrors},
		collectors.NewGoCollector(), collectors.NewProcessCollector(collectors.ProcessCollectorOpts{}))
	return m
}

var (
	queueDepthDesc = prometheus.NewDesc("matgate_queue_tasks", "Tasks in a queue by state.", []string{"queue", "state"}, nil)
	processedDesc  = prometheus.NewDesc("matgate_tasks_processed_total", "Tasks processed (succeeded or failed) since the queue was created.", []string{"queue"}, nil)
	failedDesc     = prometheus.NewDesc("matgate_tasks_failed_total", "Task attempts that returned an error since the queue was created.", []string{"queue"}, nil)
)

type queueCollector struct {
	insp *asynq.Inspector
	errs prometheus.Counter
}

func (c *queueCollector) Describe(ch chan<- *prometheus.Desc) {
	ch <- queueDepthDesc
	ch <- processedDesc
	ch <- failedDesc
}

func (c *queueCollector) Collect(ch chan<- prometheus.Metric) {
	for _, q := range []string{QueueVerify, QueueMaterialize} {
		info, err := queueInfo(c.insp, q)
		if err != nil {
			c.errs.Inc()
			continue
		}
		for _, s := range []struct {
			state string
			n     int
		}{{"pending", info.Pending}, {"active", info.Active}, {"scheduled", info.Scheduled},
			{"retry", info.Retry}, {"archived", info.Archived}, {"completed", info.Completed}} {
			ch <- prometheus.MustNewConstMetric(queueDepthDesc, prometheus.GaugeValue, float64(s.n), q, s.state)
		}
		ch <- prometheus.MustNewConstMetric(processedDesc, prometheus.CounterValue, float64(info.ProcessedTotal), q)
		ch <- prometheus.MustNewConstMetric(failedDesc, prometheus.CounterValue, float64(info.FailedTotal), q)
	}
}

// queueInfo returns the state of a queue, all zero for a queue that has
// never had a task (asynq's GetQueueInfo reports those as an error that
// does not wrap ErrQueueNotFound).
func queueInfo(insp *asynq.Inspector, q string) (*asynq.QueueInfo, error) {
	qs, err := insp.Queues()
	if err != nil {
		return nil, err
	}
	if !slices.Contains(qs, q) {
		return &asynq.QueueInfo{Queue: q}, nil
	}
	return insp.GetQueueInfo(q)
}
