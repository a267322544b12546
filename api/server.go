package api

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"log/slog"
	"net/http"
	"runtime"
	"sync"
	"sync/atomic"
	"time"

	"github.com/gin-gonic/gin"

	"ringsieve/data"
	"ringsieve/screening/batch"
)

// Config holds the HTTP layer's settings; zero fields take the defaults of DefaultConfig.
type Config struct {
	MaxBodyBytes int64 // request body limit for JSON
	MaxFileBytes int64 // request body limit for job submissions (uploads and JSON)
	BatchLimit   int   // most items in one synchronous batch
	JobLimit     int   // most items in one job
	Workers      int   // goroutines screening job chunks (0: one per core)
	ServeOnly    bool  // no job work in this process (other processes work the jobs)
	CORSOrigins  []string
	RequireKeys  bool // API keys required for writes
	KeysForReads bool // and for reads
	RatePerKey   float64
	RateBurst    int
	// ComputeTimeout bounds one force-field request (conformer search); ComputeSlots how many
	// run at once (0: one per core).
	ComputeTimeout time.Duration
	ComputeSlots   int
	// SyncForceField bounds the force-field work of the thermodynamics in one synchronous
	// request (screen, batch, compare, plan); past it, auto estimates use the ring table with a
	// note. Jobs are not bounded this way.
	SyncForceField time.Duration
	// MaxInFlight caps the requests served at once (every address, keys or not); past it a
	// request gets 503 with Retry-After. MaxUploads caps the job submissions read at once.
	MaxInFlight int
	MaxUploads  int
}

// DefaultConfig returns the defaults.
func DefaultConfig() Config {
	return Config{MaxBodyBytes: 8 << 20, MaxFileBytes: 64 << 20, BatchLimit: 5000, JobLimit: 200000, RatePerKey: 200, RateBurst: 400,
		ComputeTimeout: 60 * time.Second, SyncForceField: 3 * time.Second, MaxInFlight: 256, MaxUploads: 4}
}

// Server holds what handlers need.
type Server struct {
	cfg     Config
	store   *data.Store
	log     *slog.Logger
	metrics *metrics
	runner  *batch.Runner
	// idemLocks serializes requests that carry the same Idempotency-Key (per key, not per server).
	idemLocks keyedMutex
	// compute bounds the force-field computations running at once.
	compute computeSlots
	// inFlight and uploads shed load (Config.MaxInFlight, MaxUploads).
	inFlight, uploads slots
	// idPrefix and idCounter make request ids (requestID).
	idPrefix  string
	idCounter atomic.Uint64
	// degraded remembers the store's last reported state (for logging changes).
	degraded atomic.Bool
	// limiters holds one token bucket per API key id (*rate.Limiter).
	limiters sync.Map
	// events wakes requests waiting for a job to finish, draining (closed by Drain) ends their
	// waits (jobwait.go)
	events    jobEvents
	draining  chan struct{}
	drainOnce sync.Once
	wg        sync.WaitGroup
}

// orDefault sets a zero or negative setting to its default.
func orDefault[T int | int64 | float64 | time.Duration](v *T, def T) {
	if *v <= 0 {
		*v = def
	}
}

// New builds a server over an open store. Start background work with Start.
func New(cfg Config, store *data.Store, log *slog.Logger) *Server {
	def := DefaultConfig()
	orDefault(&cfg.MaxBodyBytes, def.MaxBodyBytes)
	orDefault(&cfg.MaxFileBytes, def.MaxFileBytes)
	orDefault(&cfg.BatchLimit, def.BatchLimit)
	orDefault(&cfg.JobLimit, def.JobLimit)
	orDefault(&cfg.RatePerKey, def.RatePerKey)
	orDefault(&cfg.RateBurst, def.RateBurst)
	orDefault(&cfg.SyncForceField, def.SyncForceField)
	orDefault(&cfg.ComputeTimeout, def.ComputeTimeout)
	orDefault(&cfg.MaxInFlight, def.MaxInFlight)
	orDefault(&cfg.MaxUploads, def.MaxUploads)
	if cfg.ComputeSlots <= 0 {
		cfg.ComputeSlots = runtime.NumCPU()
	}
	var rb [4]byte
	rand.Read(rb[:])
	s := &Server{cfg: cfg, store: store, log: log, metrics: newMetrics(), compute: make(computeSlots, cfg.ComputeSlots), idPrefix: hex.EncodeToString(rb[:]) + "-",
		inFlight: make(slots, cfg.MaxInFlight), uploads: make(slots, cfg.MaxUploads), draining: make(chan struct{})}
	if cfg.Workers <= 0 {
		cfg.Workers = runtime.NumCPU()
	}
	if !cfg.ServeOnly {
		s.runner = &batch.Runner{Store: store, Workers: cfg.Workers, Log: log, Observe: func(outs []batch.Outcome) {
			s.metrics.observeChunk(outs)
			s.events.fire()
		},
			OnClaim: s.metrics.claims.Inc, OnLeaseLost: s.metrics.leaseLost.Inc}
	}
	return s
}

// Start launches the background work: the job runner (when this server works jobs), the queue
// gauge and the purge of expired idempotency records; it stops when ctx ends. Jobs interrupted
// by a restart are resumed from their first unrecorded chunk.
func (s *Server) Start(ctx context.Context) error {
	if s.runner != nil {
		s.wg.Add(2)
		go func() {
			defer s.wg.Done()
			s.runner.Run(ctx)
		}()
		go func() { // jobs submitted to other replicas (PostgreSQL): start without waiting for a poll
			defer s.wg.Done()
			s.store.ListenJobs(ctx, func(string) { s.runner.Notify() })
		}()
	}
	s.wg.Add(1)
	go func() {
		defer s.wg.Done()
		s.housekeeping(ctx)
	}()
	return nil
}

// housekeeping refreshes the job-queue gauge and purges expired idempotency records.
func (s *Server) housekeeping(ctx context.Context) {
	tick := time.NewTicker(2 * time.Second)
	defer tick.Stop()
	lastPurge := time.Time{}
	for {
		s.storeHealth(ctx) // probes a write while degraded, so the state clears without callers
		if n, err := s.store.CountActiveJobs(ctx); err == nil {
			s.metrics.queue.Set(float64(n))
		}
		if time.Since(lastPurge) > time.Hour {
			if _, err := s.store.PurgeIdempotency(ctx); err != nil && ctx.Err() == nil {
				s.log.Warn("purge idempotency records", "err", err)
			}
			if n, err := s.store.PurgeAbandonedLoads(ctx); err != nil && ctx.Err() == nil {
				s.log.Warn("purge abandoned job uploads", "err", err)
			} else if n > 0 {
				s.log.Warn("purged job uploads a process left unfinished", "jobs", n)
			}
			lastPurge = time.Now()
		}
		select {
		case <-ctx.Done():
			return
		case <-tick.C:
		}
	}
}

// Wait blocks until the background work has stopped.
func (s *Server) Wait() { s.wg.Wait() }

func init() { gin.SetMode(gin.ReleaseMode) }

// Handler returns the HTTP handler with every route.
func (s *Server) Handler() http.Handler {
	r := gin.New()
	r.HandleMethodNotAllowed = true
	r.Use(s.requestID, s.recoverer, s.logRequests, s.countRequests, s.securityHeaders, s.limitInFlight, s.cors)
	r.NoRoute(func(c *gin.Context) {
		fail(c, badRequest(errNotFoundPath, "", "no endpoint at "+c.Request.Method+" "+c.Request.URL.Path))
	})
	r.NoMethod(func(c *gin.Context) {
		writeProblem(c, Problem{Type: problemBase + "method-not-allowed", Title: "Method not allowed", Status: http.StatusMethodNotAllowed,
			Detail: c.Request.Method + " is not allowed on " + c.Request.URL.Path, Instance: c.Request.URL.Path, RequestID: c.GetString(ctxRequestID)})
	})

	r.GET("/healthz", s.healthz)
	r.GET("/openapi.json", s.openapiJSON)
	r.GET("/docs", s.docsPage)
	r.GET("/", s.indexPage)
	r.GET("/static/*file", s.static)
	r.GET("/metrics", s.auth, s.metricsHandler()) // behind keys when reads need them

	json, file := s.bodyLimit(s.cfg.MaxBodyBytes), s.bodyLimit(s.cfg.MaxFileBytes)
	v1 := r.Group("/v1", s.auth)
	v1.POST("/screen", json, s.idempotent, s.screen)
	v1.POST("/screen/batch", json, s.idempotent, s.batch)
	v1.POST("/screen/compare", json, s.idempotent, s.compare)
	v1.POST("/sweep", json, s.idempotent, s.sweep)
	v1.POST("/plan", json, s.idempotent, s.plan)
	v1.POST("/conformers", json, s.idempotent, s.conformers)
	v1.GET("/tables/ring-systems", s.ringTable)
	v1.GET("/depict", s.depictImage)
	v1.POST("/monomers", json, s.idempotent, s.createMonomer)
	v1.GET("/monomers", s.listMonomers)
	v1.GET("/monomers/:id", s.getMonomer)
	v1.PUT("/monomers/:id", json, s.replaceMonomer)
	v1.DELETE("/monomers/:id", s.deleteMonomer)
	v1.GET("/monomers/:id/results", s.monomerResults)
	v1.POST("/jobs", s.limitUploads, file, s.idempotent, s.createJob)
	v1.GET("/jobs/:id", s.getJob)
	v1.GET("/jobs/:id/results", s.jobResults)
	v1.DELETE("/jobs/:id", s.cancelJob)
	return r
}

// Health is the /healthz body: the process is up (the status code says so) and whether the
// store answers reads and takes writes. Status is "ok", or "degraded" while writes fail
// (reads and screening go on; writes get 503 with Retry-After).
type Health struct {
	Status string      `json:"status" example:"ok"`
	Store  StoreHealth `json:"store"`
}

// StoreHealth is the store's part of /healthz.
type StoreHealth struct {
	Reachable bool `json:"reachable" example:"true"`
	Writable  bool `json:"writable" example:"true"`
	// Since is when writes started failing (RFC 3339, UTC), absent while writable.
	Since string `json:"since,omitempty"`
}

// healthz godoc
//
//	@Summary		Liveness and store readiness
//	@Description	200 while the process serves and the store answers reads: status "ok", or "degraded" while the store cannot take writes (store.writable false, since when). 503 when the store does not answer at all.
//	@Tags			service
//	@Produce		json
//	@Success		200	{object}	Health
//	@Failure		503	{object}	Problem
//	@Router			/healthz [get]
func (s *Server) healthz(c *gin.Context) {
	ctx, cancel := context.WithTimeout(c.Request.Context(), 2*time.Second)
	defer cancel()
	h := s.storeHealth(ctx)
	if !h.Reachable {
		writeProblem(c, Problem{Type: problemBase + "unavailable", Title: "Store unavailable", Status: http.StatusServiceUnavailable,
			Detail: "the database does not answer", Instance: c.Request.URL.Path, RequestID: c.GetString(ctxRequestID)})
		return
	}
	out := Health{Status: "ok", Store: StoreHealth{Reachable: true, Writable: h.Writable}}
	if !h.Writable {
		out.Status = "degraded"
		out.Store.Since = h.Since.UTC().Format(time.RFC3339)
	}
	c.JSON(http.StatusOK, out)
}

// storeHealth asks the store (which probes a write while degraded), updates the gauge and logs
// changes of state.
func (s *Server) storeHealth(ctx context.Context) data.Health {
	h := s.store.Health(ctx)
	up := 0.0
	if h.Writable && h.Reachable {
		up = 1
	}
	s.metrics.storeUp.Set(up)
	if was := s.degraded.Swap(!h.Writable); was != !h.Writable {
		if h.Writable {
			s.log.Info("store takes writes again")
		} else {
			s.log.Error("store degraded: writes fail", "since", h.Since, "err", h.Detail)
		}
	}
	return h
}
