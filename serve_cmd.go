package main

import (
	"context"
	"errors"
	"fmt"
	"log/slog"
	"net"
	"net/http"
	"os"
	"runtime/debug"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"ringsieve/api"
	"ringsieve/data"
	"ringsieve/screening"
)

// Config is the service configuration: defaults, then environment, then flags.
type Config struct {
	Addr            string
	DBPath          string
	ReadTimeout     time.Duration
	WriteTimeout    time.Duration
	IdleTimeout     time.Duration
	ShutdownTimeout time.Duration
	LogLevel        string
	API             api.Config
}

// DefaultConfig is the configuration a newcomer gets from `go run . serve`.
func DefaultConfig() Config {
	return Config{
		Addr:            "127.0.0.1:8080",
		DBPath:          "ringsieve.db",
		ReadTimeout:     30 * time.Second,
		WriteTimeout:    120 * time.Second,
		IdleTimeout:     120 * time.Second,
		ShutdownTimeout: 20 * time.Second,
		LogLevel:        "info",
		API:             api.DefaultConfig(),
	}
}

func serveCmd(getenv func(string) string) *cobra.Command {
	cfg := DefaultConfig()
	if v := getenv("RINGSIEVE_ADDR"); v != "" {
		cfg.Addr = v
	}
	if v := getenv("RINGSIEVE_DB"); v != "" {
		cfg.DBPath = v
	}
	if v := getenv("RINGSIEVE_LOG_LEVEL"); v != "" {
		cfg.LogLevel = v
	}
	if v := getenv("RINGSIEVE_CORS_ORIGINS"); v != "" {
		cfg.API.CORSOrigins = strings.Split(v, ",")
	}
	requireKeys := getenv("RINGSIEVE_REQUIRE_KEYS")
	var cors string
	workers := -1
	cmd := &cobra.Command{
		Use:   "serve",
		Short: "Run the HTTP service (creates and migrates the database: an SQLite file, or PostgreSQL)",
		Args:  cobra.NoArgs,
		RunE: func(cmd *cobra.Command, _ []string) error {
			if cors != "" {
				cfg.API.CORSOrigins = strings.Split(cors, ",")
			}
			switch {
			case workers == 0:
				cfg.API.ServeOnly = true
			case workers > 0:
				cfg.API.Workers = workers
			}
			switch requireKeys {
			case "writes":
				cfg.API.RequireKeys = true
			case "all":
				cfg.API.RequireKeys, cfg.API.KeysForReads = true, true
			}
			return serve(cmd.Context(), cfg, cmd.ErrOrStderr())
		},
	}
	f := cmd.Flags()
	f.StringVar(&cfg.Addr, "addr", cfg.Addr, "listen address HOST:PORT (env RINGSIEVE_ADDR)")
	f.StringVar(&cfg.DBPath, "db", cfg.DBPath, "SQLite database file, or a PostgreSQL URL postgres://… shared by replicas and workers (env RINGSIEVE_DB)")
	f.StringVar(&cfg.LogLevel, "log-level", cfg.LogLevel, "debug, info, warn or error (env RINGSIEVE_LOG_LEVEL)")
	f.StringVar(&cors, "cors-origins", "", "comma-separated origins allowed by CORS, or * (env RINGSIEVE_CORS_ORIGINS)")
	f.StringVar(&requireKeys, "require-keys", requireKeys, "API keys: off, writes or all (env RINGSIEVE_REQUIRE_KEYS; writes is forced on a non-loopback address)")
	f.IntVar(&cfg.API.BatchLimit, "batch-limit", cfg.API.BatchLimit, "most items in one synchronous batch")
	f.IntVar(&cfg.API.MaxInFlight, "max-in-flight", cfg.API.MaxInFlight, "requests served at once; more get 503 with Retry-After (healthz and metrics exempt)")
	f.IntVar(&cfg.API.MaxUploads, "max-uploads", cfg.API.MaxUploads, "job submissions read at once (each may hold a body of up to 64 MB)")
	f.IntVar(&workers, "workers", workers, "goroutines working jobs: -1 one per core, 0 none (serve only; other processes work the jobs)")
	f.DurationVar(&cfg.ShutdownTimeout, "shutdown-timeout", cfg.ShutdownTimeout, "grace period for in-flight requests on SIGINT/SIGTERM")
	return cmd
}

func parseLevel(s string) slog.Level {
	var l slog.Level
	if err := l.UnmarshalText([]byte(s)); err != nil {
		return slog.LevelInfo
	}
	return l
}

func isLoopback(addr string) bool {
	host, _, err := net.SplitHostPort(addr)
	if err != nil {
		return false
	}
	if host == "localhost" {
		return true
	}
	ip := net.ParseIP(host)
	return ip != nil && ip.IsLoopback()
}

// tuneGC raises the garbage-collector target for throughput (screening allocates many small,
// short-lived objects; memory use stays in the tens of megabytes) unless GOGC is set.
func tuneGC() {
	if os.Getenv("GOGC") == "" {
		debug.SetGCPercent(400)
	}
}

func serve(ctx context.Context, cfg Config, logOut interface{ Write([]byte) (int, error) }) error {
	tuneGC()
	log := slog.New(slog.NewJSONHandler(logOut, &slog.HandlerOptions{Level: parseLevel(cfg.LogLevel)}))
	if !isLoopback(cfg.Addr) && !cfg.API.RequireKeys {
		cfg.API.RequireKeys = true
		log.Warn("binding a non-loopback address: API keys are required for writes (create one with `ringsieve keys create`)", "addr", cfg.Addr)
	}
	store, err := data.Open(ctx, cfg.DBPath)
	if err != nil {
		return err
	}
	defer store.Close()
	screening.Warm() // the first request does not load the tables
	srv := api.New(cfg.API, store, log)
	workCtx, stopWork := context.WithCancel(context.Background())
	defer stopWork()
	if err := srv.Start(workCtx); err != nil {
		return err
	}
	ln, err := net.Listen("tcp", cfg.Addr)
	if err != nil {
		return fmt.Errorf("listen %s: %w", cfg.Addr, err)
	}
	hs := &http.Server{
		Handler:           srv.Handler(),
		ReadTimeout:       cfg.ReadTimeout,
		ReadHeaderTimeout: 10 * time.Second,
		WriteTimeout:      cfg.WriteTimeout,
		IdleTimeout:       cfg.IdleTimeout,
		MaxHeaderBytes:    1 << 20,
	}
	hs.RegisterOnShutdown(srv.Drain) // requests waiting for a job answer as the shutdown begins
	log.Info("ringsieve listening", "addr", ln.Addr().String(), "db", redactDB(cfg.DBPath), "api_keys_required", cfg.API.RequireKeys)
	errc := make(chan error, 1)
	go func() { errc <- hs.Serve(ln) }()
	select {
	case err := <-errc:
		return err
	case <-ctx.Done():
	}
	log.Info("shutting down", "grace", cfg.ShutdownTimeout.String())
	sctx, cancel := context.WithTimeout(context.Background(), cfg.ShutdownTimeout)
	defer cancel()
	err = hs.Shutdown(sctx)
	stopWork()
	srv.Wait()
	if err != nil && !errors.Is(err, http.ErrServerClosed) {
		return fmt.Errorf("shutdown: %w", err)
	}
	log.Info("stopped")
	return nil
}
