package api

import (
	"github.com/gin-gonic/gin"
)

// Load shedding and browser protection.

// slots is a counting semaphore that never waits: a request either gets a slot at once or is
// turned away (503 with Retry-After), so a burst cannot pile up goroutines and memory.
type slots chan struct{}

func (s slots) tryAcquire() bool {
	select {
	case s <- struct{}{}:
		return true
	default:
		return false
	}
}

func (s slots) release() { <-s }

// limitInFlight caps the requests being served at once (Config.MaxInFlight), whatever the
// address and whether or not API keys are required. /healthz and /metrics are exempt so that a
// saturated server can still be watched.
func (s *Server) limitInFlight(c *gin.Context) {
	switch c.Request.URL.Path {
	case "/healthz", "/metrics":
		c.Next()
		return
	}
	if !s.inFlight.tryAcquire() {
		s.metrics.shed.Inc()
		fail(c, badRequest(errOverloaded, "", "the server is at its limit of requests in flight; retry after a few seconds"))
		return
	}
	s.metrics.inFlight.Inc()
	defer func() { s.metrics.inFlight.Dec(); s.inFlight.release() }()
	c.Next()
}

// limitUploads caps the job submissions read at once (Config.MaxUploads): each may hold a body
// of up to MaxFileBytes in memory, so this bounds what submissions can take together.
func (s *Server) limitUploads(c *gin.Context) {
	if !s.uploads.tryAcquire() {
		s.metrics.shed.Inc()
		fail(c, badRequest(errOverloaded, "", "the server is reading its limit of job submissions; retry after a few seconds"))
		return
	}
	defer s.uploads.release()
	c.Next()
}

// contentSecurityPolicy allows the pages only their own scripts, styles and images (the plots
// are inline SVG built by script, drawn images may be data: URLs), no framing by other sites,
// no plugins, no form posts elsewhere.
const contentSecurityPolicy = "default-src 'self'; img-src 'self' data:; object-src 'none'; base-uri 'none'; form-action 'self'; frame-ancestors 'none'"

// securityHeaders sets the browser-protection headers on every response (harmless on JSON).
func (s *Server) securityHeaders(c *gin.Context) {
	h := c.Writer.Header()
	h.Set("Content-Security-Policy", contentSecurityPolicy)
	h.Set("X-Frame-Options", "DENY")
	h.Set("X-Content-Type-Options", "nosniff")
	h.Set("Referrer-Policy", "no-referrer")
	c.Next()
}
