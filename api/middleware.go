package api

import (
	"bytes"
	"crypto/rand"
	"crypto/sha256"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"net/http"
	"regexp"
	"strconv"
	"strings"
	"time"

	"github.com/gin-gonic/gin"
	"github.com/prometheus/client_golang/prometheus"
	"github.com/prometheus/client_golang/prometheus/promhttp"
	"golang.org/x/time/rate"

	"ringsieve/data"
)

const ctxRequestID = "request_id"
const ctxKeyID = "api_key_id"

var validRequestID = regexp.MustCompile(`^[A-Za-z0-9._-]{1,64}$`)

// requestID takes a well-formed X-Request-ID from the caller or makes one, and echoes it.
func (s *Server) requestID(c *gin.Context) {
	id := c.GetHeader("X-Request-ID")
	if !validRequestID.MatchString(id) {
		var b [8]byte
		rand.Read(b[:])
		id = hex.EncodeToString(b[:])
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
	attrs := []any{"request_id", c.GetString(ctxRequestID), "method", c.Request.Method, "path", c.Request.URL.Path,
		"status", c.Writer.Status(), "bytes", c.Writer.Size(), "duration_ms", float64(time.Since(start).Microseconds()) / 1000}
	if len(c.Errors) > 0 {
		s.log.Error("request failed", append(attrs, "err", c.Errors.String())...)
		return
	}
	if c.Writer.Status() >= 500 {
		s.log.Error("request", attrs...)
	} else {
		s.log.Debug("request", attrs...)
	}
}

// limitBody caps JSON request bodies.
func (s *Server) limitBody(c *gin.Context) {
	if c.Request.ContentLength > s.cfg.MaxBodyBytes {
		fail(c, badRequest(errTooLarge, "", fmt.Sprintf("request body exceeds %d bytes", s.cfg.MaxBodyBytes)))
		return
	}
	c.Request.Body = http.MaxBytesReader(c.Writer, c.Request.Body, s.cfg.MaxBodyBytes)
	c.Next()
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
	if !s.limiter(id).Allow() {
		c.Header("Retry-After", "1")
		fail(c, badRequest(errRateLimited, "", fmt.Sprintf("more than %.0f requests per second for this key", s.cfg.RatePerKey)))
		return
	}
	c.Next()
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
}

func newMetrics() *metrics {
	m := &metrics{reg: prometheus.NewRegistry()}
	m.requests = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "ringsieve_http_requests_total", Help: "HTTP requests by route, method and status."}, []string{"route", "method", "status"})
	m.latency = prometheus.NewHistogramVec(prometheus.HistogramOpts{Name: "ringsieve_http_request_duration_seconds", Help: "HTTP request latency by route.",
		Buckets: []float64{0.0005, 0.001, 0.002, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5, 10}}, []string{"route", "method"})
	m.screenings = prometheus.NewCounterVec(prometheus.CounterOpts{Name: "ringsieve_screenings_total", Help: "Monomers screened, by verdict (error: input refused)."}, []string{"verdict"})
	m.queue = prometheus.NewGauge(prometheus.GaugeOpts{Name: "ringsieve_job_queue_depth", Help: "Jobs queued or running."})
	m.jobItems = prometheus.NewCounter(prometheus.CounterOpts{Name: "ringsieve_job_items_screened_total", Help: "Items screened by asynchronous jobs."})
	m.reg.MustRegister(m.requests, m.latency, m.screenings, m.queue, m.jobItems,
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
	s.metrics.requests.WithLabelValues(route, c.Request.Method, strconv.Itoa(c.Writer.Status())).Inc()
	s.metrics.latency.WithLabelValues(route, c.Request.Method).Observe(time.Since(start).Seconds())
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

// idempotent makes a POST with an Idempotency-Key safe to retry: the first successful (2xx)
// response is stored with a hash of the body, and a repeat with the same key and body gets it
// back (header Idempotent-Replayed: true) without running the handler again; the same key with
// another body is a 422. Failed requests are not stored, so they can be retried as they are.
// (POST /v1/jobs does the same in its handler, hashing uploads by content.)
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
	body, err := io.ReadAll(c.Request.Body)
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			fail(c, badRequest(errTooLarge, "", fmt.Sprintf("request body exceeds %d bytes", mbe.Limit)))
			return
		}
		fail(c, badRequest(errMalformed, "", "could not read the request body"))
		return
	}
	sum := sha256.Sum256(body)
	hash := hex.EncodeToString(sum[:])
	route := c.Request.Method + " " + c.FullPath()
	s.idemMu.Lock()
	defer s.idemMu.Unlock()
	if s.replayed(c, route, key, hash) {
		return
	}
	c.Request.Body = io.NopCloser(bytes.NewReader(body))
	cw := &captureWriter{ResponseWriter: c.Writer}
	c.Writer = cw
	c.Next()
	if st := cw.Status(); st >= 200 && st < 300 {
		if err := s.store.SaveIdempotent(c.Request.Context(), route, key, hash, st, cw.buf.Bytes()); err != nil {
			s.log.Error("save idempotency record", "err", err)
		}
	}
}

// replayed answers a request whose Idempotency-Key and body were seen before with the stored
// response (or a problem when the key came with another body); it reports whether it answered.
func (s *Server) replayed(c *gin.Context, route, key, hash string) bool {
	status, resp, err := s.store.Idempotent(c.Request.Context(), route, key, hash)
	switch {
	case err == nil:
		c.Header("Idempotent-Replayed", "true")
		c.Data(status, "application/json", resp)
		c.Abort()
		return true
	case errors.Is(err, data.ErrNotFound):
		return false
	case errors.Is(err, data.ErrIdempotencyMismatch):
		fail(c, fmt.Errorf("this Idempotency-Key was used with a different request body: %w", err))
		return true
	default:
		fail(c, err)
		return true
	}
}
