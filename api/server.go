package api

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net/http"
	"strings"
	"sync"
	"time"

	"github.com/gin-gonic/gin"

	"ringsieve/data"
)

// Config holds the HTTP layer's settings; zero fields take the defaults of DefaultConfig.
type Config struct {
	MaxBodyBytes int64 // request body limit for JSON
	MaxFileBytes int64 // request body limit for file uploads
	BatchLimit   int   // most items in one synchronous batch
	JobLimit     int   // most items in one job
	Workers      int   // job worker pool size (0: one per core)
	CORSOrigins  []string
	RequireKeys  bool // API keys required for writes
	KeysForReads bool // and for reads
	RatePerKey   float64
	RateBurst    int
}

// DefaultConfig returns the defaults.
func DefaultConfig() Config {
	return Config{MaxBodyBytes: 8 << 20, MaxFileBytes: 64 << 20, BatchLimit: 5000, JobLimit: 200000, RatePerKey: 200, RateBurst: 400}
}

// Server holds what handlers need.
type Server struct {
	cfg     Config
	store   *data.Store
	log     *slog.Logger
	metrics *metrics
	jobs    *jobRunner
	// idemMu serializes Idempotency-Key handling so a retried POST never creates two jobs.
	idemMu sync.Mutex
	// limiters holds one token bucket per API key id (*rate.Limiter).
	limiters sync.Map
}

// New builds a server over an open store. Start background work with Start.
func New(cfg Config, store *data.Store, log *slog.Logger) *Server {
	def := DefaultConfig()
	if cfg.MaxBodyBytes <= 0 {
		cfg.MaxBodyBytes = def.MaxBodyBytes
	}
	if cfg.MaxFileBytes <= 0 {
		cfg.MaxFileBytes = def.MaxFileBytes
	}
	if cfg.BatchLimit <= 0 {
		cfg.BatchLimit = def.BatchLimit
	}
	if cfg.JobLimit <= 0 {
		cfg.JobLimit = def.JobLimit
	}
	if cfg.RatePerKey <= 0 {
		cfg.RatePerKey = def.RatePerKey
	}
	if cfg.RateBurst <= 0 {
		cfg.RateBurst = def.RateBurst
	}
	s := &Server{cfg: cfg, store: store, log: log, metrics: newMetrics()}
	s.jobs = newJobRunner(s)
	return s
}

// Start launches the job workers; they stop when ctx ends. Jobs interrupted by a restart are
// resumed from their first unrecorded item.
func (s *Server) Start(ctx context.Context) error { return s.jobs.start(ctx) }

// Wait blocks until the job workers have stopped.
func (s *Server) Wait() { s.jobs.wait() }

func init() { gin.SetMode(gin.ReleaseMode) }

// Handler returns the HTTP handler with every route.
func (s *Server) Handler() http.Handler {
	r := gin.New()
	r.HandleMethodNotAllowed = true
	r.Use(s.requestID, s.recoverer, s.logRequests, s.countRequests, s.cors)
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
	r.GET("/metrics", s.metricsHandler())

	v1 := r.Group("/v1", s.auth)
	v1.POST("/screen", s.limitBody, s.idempotent, s.screen)
	v1.POST("/screen/batch", s.limitBody, s.idempotent, s.batch)
	v1.POST("/screen/compare", s.limitBody, s.idempotent, s.compare)
	v1.POST("/sweep", s.limitBody, s.idempotent, s.sweep)
	v1.POST("/plan", s.limitBody, s.idempotent, s.plan)
	v1.GET("/tables/ring-systems", s.ringTable)
	v1.POST("/monomers", s.limitBody, s.idempotent, s.createMonomer)
	v1.GET("/monomers", s.listMonomers)
	v1.GET("/monomers/:id", s.getMonomer)
	v1.PUT("/monomers/:id", s.limitBody, s.replaceMonomer)
	v1.DELETE("/monomers/:id", s.deleteMonomer)
	v1.GET("/monomers/:id/results", s.monomerResults)
	v1.POST("/jobs", s.createJob)
	v1.GET("/jobs/:id", s.getJob)
	v1.GET("/jobs/:id/results", s.jobResults)
	v1.DELETE("/jobs/:id", s.cancelJob)
	return r
}

// Health is the /healthz body.
type Health struct {
	Status string `json:"status" example:"ok"`
}

// healthz godoc
//
//	@Summary	Liveness and store readiness
//	@Tags		service
//	@Produce	json
//	@Success	200	{object}	Health
//	@Failure	503	{object}	Problem
//	@Router		/healthz [get]
func (s *Server) healthz(c *gin.Context) {
	ctx, cancel := context.WithTimeout(c.Request.Context(), 2*time.Second)
	defer cancel()
	if err := s.store.Ping(ctx); err != nil {
		s.log.Error("health check", "err", err)
		writeProblem(c, Problem{Type: problemBase + "unavailable", Title: "Store unavailable", Status: http.StatusServiceUnavailable, Detail: "the database does not answer"})
		return
	}
	c.JSON(http.StatusOK, Health{Status: "ok"})
}

// decodeJSON reads exactly one JSON object from the body into v, refusing unknown fields.
func decodeJSON(c *gin.Context, v any) error {
	ct := c.ContentType()
	if ct != "" && ct != "application/json" && !strings.HasSuffix(ct, "+json") {
		return badRequest(errUnsupported, "", "send application/json (got "+ct+")")
	}
	body, err := io.ReadAll(c.Request.Body)
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return badRequest(errTooLarge, "", fmt.Sprintf("request body exceeds %d bytes", mbe.Limit))
		}
		return badRequest(errMalformed, "", "could not read the request body")
	}
	return decodeJSONBytes(body, v)
}

func decodeJSONBytes(body []byte, v any) error {
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return badRequest(errMalformed, jsonErrField(err), jsonErrMessage(err))
	}
	if dec.More() {
		return badRequest(errMalformed, "", "trailing data after the JSON object")
	}
	var extra json.RawMessage
	if err := dec.Decode(&extra); err != io.EOF {
		return badRequest(errMalformed, "", "trailing data after the JSON object")
	}
	return nil
}

func jsonErrField(err error) string {
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		return jsonPath(te.Field)
	}
	if msg := err.Error(); strings.HasPrefix(msg, "json: unknown field ") {
		return strings.Trim(strings.TrimPrefix(msg, "json: unknown field "), `"`)
	}
	return ""
}

// jsonPath drops the Go names of embedded structs from a decoder field path
// ("MonomerSource.smiles" → "smiles").
func jsonPath(field string) string {
	var keep []string
	for _, p := range strings.Split(field, ".") {
		if p != "" && !(p[0] >= 'A' && p[0] <= 'Z') {
			keep = append(keep, p)
		}
	}
	return strings.Join(keep, ".")
}

func jsonErrMessage(err error) string {
	var se *json.SyntaxError
	if errors.As(err, &se) {
		return fmt.Sprintf("malformed JSON at byte %d: %s", se.Offset, se.Error())
	}
	var te *json.UnmarshalTypeError
	if errors.As(err, &te) {
		if f := jsonPath(te.Field); f != "" {
			return fmt.Sprintf("field %q: expected %s (got JSON %s) at byte %d", f, te.Type, te.Value, te.Offset)
		}
		return fmt.Sprintf("expected %s (got JSON %s) at byte %d", te.Type, te.Value, te.Offset)
	}
	if errors.Is(err, io.EOF) {
		return "empty request body: send a JSON object"
	}
	if errors.Is(err, io.ErrUnexpectedEOF) {
		return "request body ends in the middle of the JSON object"
	}
	msg := err.Error()
	if strings.HasPrefix(msg, "json: unknown field ") {
		return "unknown field " + strings.TrimPrefix(msg, "json: unknown field ")
	}
	return "malformed JSON: " + strings.TrimPrefix(msg, "json: ")
}
