package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"net/http"
	"os"
	"runtime"
	"strings"
	"sync"
	"time"

	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"
	"github.com/spf13/cobra"

	"ringsieve/data"
	"ringsieve/screening"
	"ringsieve/screening/batch"
)

// WorkerConfig is the configuration of `ringsieve worker`.
type WorkerConfig struct {
	DBPath      string
	Workers     int           // screening goroutines (0: one per core)
	Name        string        // worker name recorded with claims and in metrics ("": host-pid)
	MetricsAddr string        // serve /metrics and /healthz here ("" : off)
	Lease       time.Duration // chunk lease
	LogLevel    string
}

func workerCmd(getenv func(string) string) *cobra.Command {
	cfg := WorkerConfig{DBPath: "ringsieve.db", Lease: batch.DefaultLease, LogLevel: "info"}
	if v := getenv("RINGSIEVE_DB"); v != "" {
		cfg.DBPath = v
	}
	if v := getenv("RINGSIEVE_LOG_LEVEL"); v != "" {
		cfg.LogLevel = v
	}
	cmd := &cobra.Command{
		Use:   "worker",
		Short: "Work jobs only (no HTTP API): claim chunks from the shared database, screen them, store the results",
		Long: `Work jobs only: claim chunks of queued jobs under a lease, screen them and store their results.
Any number of workers and serve replicas may share one PostgreSQL database (--db postgres://…);
a worker that dies loses only its lease and its chunk is claimed again. SIGINT/SIGTERM give the
chunk in progress back before exit.`,
		Args: cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			return work(cmd.Context(), cfg, cmd.ErrOrStderr())
		},
	}
	f := cmd.Flags()
	f.StringVar(&cfg.DBPath, "db", cfg.DBPath, "PostgreSQL URL (postgres://…) or SQLite file (env RINGSIEVE_DB)")
	f.IntVar(&cfg.Workers, "workers", cfg.Workers, "screening goroutines (0: one per core)")
	f.StringVar(&cfg.Name, "name", cfg.Name, "worker name in claims, logs and metrics (default host-pid)")
	f.StringVar(&cfg.MetricsAddr, "metrics-addr", cfg.MetricsAddr, "serve /metrics and /healthz on HOST:PORT (off when empty)")
	f.DurationVar(&cfg.Lease, "lease", cfg.Lease, "how long a claimed chunk stays with this worker without renewal")
	f.StringVar(&cfg.LogLevel, "log-level", cfg.LogLevel, "debug, info, warn or error (env RINGSIEVE_LOG_LEVEL)")
	return cmd
}

// workerMetrics are one worker's figures: items screened (rate() gives items/s), chunks
// claimed and chunks lost to another worker after a lease ran out.
type workerMetrics struct {
	reg                      *prometheus.Registry
	items, claims, leaseLost prometheus.Counter
	itemsPerSecond           prometheus.Gauge
}

func newWorkerMetrics(name string) *workerMetrics {
	l := prometheus.Labels{"worker": name}
	m := &workerMetrics{reg: prometheus.NewRegistry()}
	m.items = prometheus.NewCounter(prometheus.CounterOpts{Name: "ringsieve_worker_items_total", Help: "Job items screened and stored by this worker.", ConstLabels: l})
	m.claims = prometheus.NewCounter(prometheus.CounterOpts{Name: "ringsieve_worker_chunks_claimed_total", Help: "Job chunks claimed by this worker.", ConstLabels: l})
	m.leaseLost = prometheus.NewCounter(prometheus.CounterOpts{Name: "ringsieve_worker_lease_lost_total", Help: "Chunks this worker gave up because their lease passed to another worker.", ConstLabels: l})
	m.itemsPerSecond = prometheus.NewGauge(prometheus.GaugeOpts{Name: "ringsieve_worker_items_per_second", Help: "Items stored per second over the last minute.", ConstLabels: l})
	m.reg.MustRegister(m.items, m.claims, m.leaseLost, m.itemsPerSecond, prometheus.NewGoCollector(), prometheus.NewProcessCollector(prometheus.ProcessCollectorOpts{}))
	return m
}

func work(ctx context.Context, cfg WorkerConfig, logOut interface{ Write([]byte) (int, error) }) error {
	tuneGC()
	screening.Warm()
	if cfg.Name == "" {
		host, _ := os.Hostname()
		cfg.Name = fmt.Sprintf("%s-%d", host, os.Getpid())
	}
	if cfg.Workers <= 0 {
		cfg.Workers = runtime.NumCPU()
	}
	log := slog.New(slog.NewJSONHandler(logOut, &slog.HandlerOptions{Level: parseLevel(cfg.LogLevel)})).With("worker", cfg.Name)
	store, err := data.Open(ctx, cfg.DBPath)
	if err != nil {
		return err
	}
	defer store.Close()
	m := newWorkerMetrics(cfg.Name)
	var mu sync.Mutex
	var stored int
	r := &batch.Runner{Store: store, Workers: cfg.Workers, Lease: cfg.Lease, Owner: cfg.Name, Log: log,
		Observe: func(outs []batch.Outcome) {
			m.items.Add(float64(len(outs)))
			mu.Lock()
			stored += len(outs)
			mu.Unlock()
		},
		OnClaim:     m.claims.Inc,
		OnLeaseLost: m.leaseLost.Inc,
	}
	workCtx, stopWork := context.WithCancel(context.WithoutCancel(ctx))
	defer stopWork()
	var wg sync.WaitGroup
	wg.Add(3)
	go func() { defer wg.Done(); r.Run(workCtx) }()
	go func() {
		defer wg.Done()
		store.ListenJobs(workCtx, func(string) { r.Notify() })
	}()
	go func() { // items per second over the last minute, logged when it changes
		defer wg.Done()
		tick := time.NewTicker(10 * time.Second)
		defer tick.Stop()
		var window []int
		for {
			select {
			case <-workCtx.Done():
				return
			case <-tick.C:
			}
			mu.Lock()
			n := stored
			stored = 0
			mu.Unlock()
			window = append(window, n)
			if len(window) > 6 {
				window = window[1:]
			}
			sum := 0
			for _, x := range window {
				sum += x
			}
			rate := float64(sum) / (10 * float64(len(window)))
			m.itemsPerSecond.Set(rate)
			if n > 0 {
				log.Info("worker progress", "items_last_10s", n, "items_per_second", rate)
			}
		}
	}()
	var hs *http.Server
	if cfg.MetricsAddr != "" {
		ln, err := net.Listen("tcp", cfg.MetricsAddr)
		if err != nil {
			return fmt.Errorf("listen %s: %w", cfg.MetricsAddr, err)
		}
		mux := http.NewServeMux()
		mux.Handle("/metrics", promhttp.HandlerFor(m.reg, promhttp.HandlerOpts{}))
		mux.HandleFunc("/healthz", func(w http.ResponseWriter, req *http.Request) {
			h := store.Health(req.Context())
			w.Header().Set("Content-Type", "application/json")
			if !h.Reachable {
				w.WriteHeader(http.StatusServiceUnavailable)
				fmt.Fprint(w, `{"status":"unavailable"}`)
				return
			}
			status := "ok"
			if !h.Writable {
				status = "degraded"
			}
			fmt.Fprintf(w, `{"status":%q,"worker":%q}`, status, cfg.Name)
		})
		hs = &http.Server{Handler: mux, ReadHeaderTimeout: 10 * time.Second}
		go hs.Serve(ln)
		log.Info("worker metrics", "addr", ln.Addr().String())
	}
	log.Info("ringsieve worker started", "db", redactDB(cfg.DBPath), "workers", cfg.Workers, "lease", cfg.Lease.String())
	<-ctx.Done()
	log.Info("worker stopping: giving back the chunk in progress")
	stopWork()
	wg.Wait()
	if hs != nil {
		sctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
		defer cancel()
		if err := hs.Shutdown(sctx); err != nil && !errors.Is(err, http.ErrServerClosed) {
			return err
		}
	}
	log.Info("worker stopped")
	return nil
}

// redactDB hides the password of a PostgreSQL URL in logs.
func redactDB(dsn string) string {
	if !strings.Contains(dsn, "://") {
		return dsn
	}
	return data.Redact(dsn)
}
