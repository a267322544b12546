package api

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"mime"
	"mime/multipart"
	"net/http"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"
	"golang.org/x/time/rate"

	"ringsieve/data"
	"ringsieve/screening/batch"
)

const ctxRequestID = "request_id"
const ctxKeyID = "api_key_id"

// validRequestID reports whether a caller's request id is 1 to 64 characters of A–Z, a–z, 0–9,
// '.', '_' and '-' (checked by hand: the same pattern as a regular expression costs every
// process about 0.8 ms and 860 allocations at start-up, its bounded repetition compiled out).
func validRequestID(id string) bool {
	if len(id) == 0 || len(id) > 64 {
		return false
	}
	for i := 0; i < len(id); i++ {
		switch c := id[i]; {
		case c >= 'A' && c <= 'Z', c >= 'a' && c <= 'z', c >= '0' && c <= '9', c == '.', c == '_', c == '-':
		default:
			return false
		}
	}
	return true
}

// requestID takes a well-formed X-Request-ID from the caller or makes one, and echoes it.
// Made ids are a per-process random prefix and a counter: unique, cheap (no system call per
// request), and they sort in arrival order within one process.
func (s *Server) requestID(c *gin.Context) {
	id := c.GetHeader("X-Request-ID")
	if !validRequestID(id) {
		id = s.idPrefix + strconv.FormatUint(s.idCounter.Add(1), 36)
	}
	c.Set(ctxRequestID, id)
	c.Header("X-Request-ID", id)
	c.Next()
}

// recoverer turns a panic into a 500 problem; the panic is logged, never sent.
func (s *Server) recoverer(c *gin.Context) {
	defer func() {
		if v := recover(); v != nil {
			s.log.Error("panic", "request_id", c.GetString(ctxRequestID), "path", c.Request.URL.Path, "panic", fmt.Sprint(v))
			if !c.Writer.Written() {
				fail(c, fmt.Errorf("panic: %v", v))
			}
		}
	}()
	c.Next()
}

func (s *Server) logRequests(c *gin.Context) {
	start := time.Now()
	c.Next()
	level := slog.LevelDebug
	if len(c.Errors) > 0 || c.Writer.Status() >= 500 {
		level = slog.LevelError
	}
	if !s.log.Enabled(c.Request.Context(), level) {
		return // no attributes built for a record nobody reads
	}
	attrs := []any{"request_id", c.GetString(ctxRequestID), "method", c.Request.Method, "path", c.Request.URL.Path,
		"status", c.Writer.Status(), "bytes", c.Writer.Size(), "duration_ms", float64(time.Since(start).Microseconds()) / 1000}
	switch {
	case len(c.Errors) > 0:
		s.log.Error("request failed", append(attrs, "err", c.Errors.String())...)
	case level == slog.LevelError:
		s.log.Error("request", attrs...)
	default:
		s.log.Debug("request", attrs...)
	}
}

// cors answers browser notebooks from the configured origins ("*" allows any).
func (s *Server) cors(c *gin.Context) {
	origin := c.GetHeader("Origin")
	if origin == "" || len(s.cfg.CORSOrigins) == 0 {
		c.Next()
		return
	}
	allowed := false
	for _, o := range s.cfg.CORSOrigins {
		if o == "*" || o == origin {
			allowed = true
		}
	}
	if !allowed {
		c.Next()
		return
	}
	h := c.Writer.Header()
	h.Set("Access-Control-Allow-Origin", origin)
	h.Add("Vary", "Origin")
	h.Set("Access-Control-Expose-Headers", "ETag, X-Request-ID, Location")
	if c.Request.Method == http.MethodOptions {
		h.Set("Access-Control-Allow-Methods", "GET, POST, PUT, DELETE, OPTIONS")
		h.Set("Access-Control-Allow-Headers", "Content-Type, Authorization, X-API-Key, Idempotency-Key, If-Match, If-None-Match, X-Request-ID")
		h.Set("Access-Control-Max-Age", "600")
		c.AbortWithStatus(http.StatusNoContent)
		return
	}
	c.Next()
}

// auth checks API keys when the server requires them (writes always, reads when configured)
// and applies the per-key rate limit.
func (s *Server) auth(c *gin.Context) {
	write := c.Request.Method != http.MethodGet && c.Request.Method != http.MethodHead
	key := c.GetHeader("X-API-Key")
	if key == "" {
		if a := c.GetHeader("Authorization"); strings.HasPrefix(a, "Bearer ") {
			key = strings.TrimPrefix(a, "Bearer ")
		}
	}
	need := s.cfg.RequireKeys && (write || s.cfg.KeysForReads)
	if key == "" {
		if need {
			fail(c, badRequest(errUnauthorized, "", "this server requires an API key for this request: send X-API-Key (create one with `ringsieve keys create`)"))
			return
		}
		c.Next()
		return
	}
	id, err := s.store.CheckAPIKey(c.Request.Context(), key)
	if err != nil {
		if need {
			fail(c, badRequest(errUnauthorized, "", "unknown or revoked API key"))
			return
		}
		c.Next()
		return
	}
	c.Set(ctxKeyID, id)
	if !s.allow(c.Request.Context(), id) {
		c.Header("Retry-After", "1")
		fail(c, badRequest(errRateLimited, "", fmt.Sprintf("more than %.0f requests per second for this key", s.cfg.RatePerKey)))
		return
	}
	c.Next()
}

// allow applies the per-key rate limit: in the database when the store shares it between
// replicas (PostgreSQL), else in this process. A store that cannot answer lets the request
// through (the limit protects capacity; refusing every request would be worse).
func (s *Server) allow(ctx context.Context, id string) bool {
	if s.store.SharedRateLimits() {
		ok, err := s.store.TakeToken(ctx, id, s.cfg.RatePerKey, s.cfg.RateBurst)
		if err != nil {
			s.log.Warn("shared rate limit unavailable", "err", err)
			return true
		}
		return ok
	}
	return s.limiter(id).Allow()
}

func (s *Server) limiter(id string) *rate.Limiter {
	if l, ok := s.limiters.Load(id); ok {
		return l.(*rate.Limiter)
	}
	l, _ := s.limiters.LoadOrStore(id, rate.NewLimiter(rate.Limit(s.cfg.RatePerKey), s.cfg.RateBurst))
	return l.(*rate.Limiter)
}

// metrics are the Prometheus collectors of one server.
type metrics struct {
	reg        *prometheus.Registry
	requests   *prometheus.CounterVec
	latency    *prometheus.HistogramVec
	screenings *prometheus.CounterVec
	queue      prometheus.Gauge
	jobItems   prometheus.Counter
	shed       prometheus.Counter
	claims     prometheus.Counter
	inFlight   prometheus.Gauge
	// bound label handles (request, latencyOf)
	counters, observers sync.Map
	leaseLost           prometheus.Counter
	storeUp             prometheus.Gauge
}

func newMetrics() *metrics {
	m := &metrics{reg: prometheus.NewRegistry()}
	m.requests = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "ringsieve_http_requests_total", Help: "HTTP requests by route, method and status."}, []string{"route", "method", "status"})
	m.latency = prometheus.NewHistogramVec(prometheus.HistogramOpts{Name: "ringsieve_http_request_duration_seconds", Help: "HTTP request latency by route.",
		Buckets: []float64{0.0005, 0.001, 0.002, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10}}, []string{"route", "method"})
	m.screenings = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "ringsieve_screenings_total", Help: "Monomers screened, by verdict (error: input refused)."}, []string{"verdict"})
	m.queue = prometheus.NewGauge(prometheus.GaugeOpts{Name: "ringsieve_job_queue_depth", Help: "Jobs queued or running."})
	m.jobItems = prometheus.NewCounter(prometheus.CounterOpts{Name: "ringsieve_job_items_screened_total", Help: "Items screened by asynchronous jobs."})
	m.shed = prometheus.NewCounter(prometheus.CounterOpts{Name: "ringsieve_http_shed_total", Help: "Requests turned away with 503 because the server was at its in-flight or upload limit."})
	m.storeUp = prometheus.NewGauge(prometheus.GaugeOpts{Name: "ringsieve_store_writable", Help: "1 while the store takes writes, 0 while it is degraded (read-only, full or failing disk)."})
	m.claims = prometheus.NewCounter(prometheus.CounterOpts{Name: "ringsieve_job_chunks_claimed_total", Help: "Job chunks claimed by this process's runner."})
	m.leaseLost = prometheus.NewCounter(prometheus.CounterOpts{Name: "ringsieve_job_lease_lost_total", Help: "Job chunks this process gave up because their lease passed to another worker."})
	m.inFlight = prometheus.NewGauge(prometheus.GaugeOpts{Name: "ringsieve_http_in_flight", Help: "Requests being served now (those counted against --max-in-flight)."})
	m.reg.MustRegister(m.requests, m.latency, m.screenings, m.queue, m.jobItems, m.shed, m.storeUp, m.claims, m.leaseLost, m.inFlight,
		prometheus.NewGoCollector(), prometheus.NewProcessCollector(prometheus.ProcessCollectorOpts{}))
	return m
}

func (s *Server) countRequests(c *gin.Context) {
	start := time.Now()
	c.Next()
	route := c.FullPath()
	if route == "" {
		route = "unmatched"
	}
	s.metrics.request(route, c.Request.Method, c.Writer.Status()).Inc()
	s.metrics.latencyOf(route, c.Request.Method).Observe(time.Since(start).Seconds())
}

// request returns the request counter of a route, method and status, looked up once and then
// kept (the label lookup hashes three strings on every request otherwise).
func (m *metrics) request(route, method string, status int) prometheus.Counter {
	key := route + "\x00" + method + "\x00" + strconv.Itoa(status)
	if c, ok := m.counters.Load(key); ok {
		return c.(prometheus.Counter)
	}
	c, _ := m.counters.LoadOrStore(key, m.requests.WithLabelValues(route, method, strconv.Itoa(status)))
	return c.(prometheus.Counter)
}

// latencyOf returns the latency histogram of a route and method, kept after the first lookup.
func (m *metrics) latencyOf(route, method string) prometheus.Observer {
	key := route + "\x00" + method
	if o, ok := m.observers.Load(key); ok {
		return o.(prometheus.Observer)
	}
	o, _ := m.observers.LoadOrStore(key, m.latency.WithLabelValues(route, method))
	return o.(prometheus.Observer)
}

func (s *Server) metricsHandler() gin.HandlerFunc {
	h := promhttp.HandlerFor(s.metrics.reg, promhttp.HandlerOpts{})
	return gin.WrapH(h)
}

// captureWriter records a response body so that it can be replayed for an Idempotency-Key.
type captureWriter struct {
	gin.ResponseWriter
	buf bytes.Buffer
}

func (w *captureWriter) Write(b []byte) (int, error) {
	w.buf.Write(b)
	return w.ResponseWriter.Write(b)
}

// idempotent makes a POST with an Idempotency-Key safe to retry, for every POST route (the one
// idempotency path). The key is scoped to the caller's API key. A repeat with the same key and
// body gets the first response back (header Idempotent-Replayed: true) without running the
// handler again; the same key with another body is a 422. A write (monomer, job, saved result)
// records the key in its own transaction, so a crash between the write and the response leaves
// a record from which the response is rebuilt, never a second write. Requests with one key are
// served one at a time; failed requests are not recorded and can be retried as they are.
func (s *Server) idempotent(c *gin.Context) {
	key := c.GetHeader("Idempotency-Key")
	if key == "" {
		c.Next()
		return
	}
	if len(key) > 200 {
		fail(c, badRequest(errMalformed, "Idempotency-Key", "Idempotency-Key longer than 200 characters"))
		return
	}
	body, err := readBody(c)
	if err != nil {
		fail(c, err)
		return
	}
	id := data.Idempotency{Scope: c.GetString(ctxKeyID), Route: c.Request.Method + " " + c.FullPath(), Key: key,
		BodyHash: requestHash(c.GetHeader("Content-Type"), body)}
	unlock := s.idemLocks.lock(id.Scope + "\x00" + id.Route + "\x00" + id.Key)
	defer unlock()
	if s.replayed(c, id) {
		return
	}
	c.Request = c.Request.WithContext(data.WithIdempotency(c.Request.Context(), id))
	cw := &captureWriter{ResponseWriter: c.Writer}
	c.Writer = cw
	c.Next()
	data.FaultPoint("idempotent-write-after-commit")
	if st := cw.Status(); st >= 200 && st < 300 {
		s.saveIdempotent(c, id, st, cw.buf.Bytes())
	}
}

func (s *Server) saveIdempotent(c *gin.Context, id data.Idempotency, status int, body []byte) {
	ctx, cancel := context.WithTimeout(context.WithoutCancel(c.Request.Context()), 5*time.Second)
	defer cancel()
	if err := s.store.SaveIdempotent(ctx, id, status, body); err != nil {
		s.log.Error("save idempotency record", "err", err, "request_id", c.GetString(ctxRequestID))
	}
}

// replayed answers a request whose Idempotency-Key and body were seen before with the stored
// response, rebuilt from the created resource when the response was not recorded (or a problem
// when the key came with another body); it reports whether it answered.
func (s *Server) replayed(c *gin.Context, id data.Idempotency) bool {
	r, err := s.store.Idempotent(c.Request.Context(), id)
	switch {
	case errors.Is(err, data.ErrNotFound):
		return false
	case errors.Is(err, data.ErrIdempotencyMismatch):
		fail(c, fmt.Errorf("this Idempotency-Key was used with a different request body: %w", err))
		return true
	case err != nil:
		fail(c, err)
		return true
	}
	status, body := r.Status, r.Response
	if status == 0 {
		status, body, err = s.rebuild(c, id.Route, r.Resource)
		if err != nil {
			fail(c, err)
			return true
		}
		s.saveIdempotent(c, id, status, body)
	}
	c.Header("Idempotent-Replayed", "true")
	c.Data(status, "application/json", body)
	c.Abort()
	return true
}

// rebuild renders the response of a write whose response was never recorded, from what it
// created.
func (s *Server) rebuild(c *gin.Context, route, resource string) (int, []byte, error) {
	ctx := c.Request.Context()
	switch route {
	case "POST /v1/monomers":
		m, err := s.store.GetMonomer(ctx, resource)
		if err != nil {
			return 0, nil, err
		}
		c.Header("Location", "/v1/monomers/"+m.ID)
		c.Header("ETag", etag(m))
		b, err := json.Marshal(m)
		return http.StatusCreated, b, err
	case "POST /v1/jobs":
		j, err := s.store.GetJob(ctx, resource)
		if err != nil {
			return 0, nil, err
		}
		c.Header("Location", "/v1/jobs/"+j.ID)
		b, err := json.Marshal(jobCreated(j, nil))
		return http.StatusAccepted, b, err
	case "POST /v1/screen":
		r, err := s.store.GetSavedResult(ctx, resource)
		if err != nil {
			return 0, nil, err
		}
		resp := ScreenResponse{MonomerID: r.MonomerID, SavedResultID: r.ID}
		if err := json.Unmarshal(r.Result, &resp.Result); err != nil {
			return 0, nil, fmt.Errorf("saved result %d: %w", r.ID, err)
		}
		b, err := json.Marshal(resp)
		return http.StatusOK, b, err
	}
	return 0, nil, fmt.Errorf("no response recorded for %s %s", route, resource)
}

// requestHash identifies a submission's content for Idempotency-Key checks: the raw body for
// JSON; for multipart uploads the form fields and file contents, so that the random multipart
// boundary of a retried upload does not make it look different.
func requestHash(contentType string, body []byte) string {
	h := sha256.New()
	ct, params, _ := mime.ParseMediaType(contentType)
	if ct == "multipart/form-data" && params["boundary"] != "" {
		mr := multipart.NewReader(bytes.NewReader(body), params["boundary"])
		var parts []string // one digest per part, sorted: field order does not matter
		for {
			part, err := mr.NextPart()
			if err != nil {
				break
			}
			ph := sha256.New()
			fmt.Fprintf(ph, "%s\x00%s\x00", part.FormName(), part.FileName())
			io.Copy(ph, part)
			parts = append(parts, hex.EncodeToString(ph.Sum(nil)))
		}
		sort.Strings(parts)
		for _, p := range parts {
			h.Write([]byte(p))
		}
		return "multipart:" + hex.EncodeToString(h.Sum(nil))
	}
	h.Write([]byte(ct + "\n"))
	h.Write(body)
	return hex.EncodeToString(h.Sum(nil))
}

// observeChunk counts the items of a stored job chunk (the runner's metrics hook).
func (m *metrics) observeChunk(outs []batch.Outcome) {
	m.jobItems.Add(float64(len(outs)))
	for _, o := range outs {
		v := o.Verdict
		if o.Failed {
			v = "error"
		}
		m.screenings.WithLabelValues(v).Inc()
	}
}
