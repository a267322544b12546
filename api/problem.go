package api

import (
	"errors"
	"net/http"

	"github.com/gin-gonic/gin"

	"ringsieve/data"
	"ringsieve/screening"
	"ringsieve/screening/batch"
)

// Problem is an RFC 9457 problem details body (application/problem+json).
type Problem struct {
	Type     string `json:"type"`
	Title    string `json:"title"`
	Status   int    `json:"status"`
	Detail   string `json:"detail"`
	Instance string `json:"instance,omitempty"`
	// Position is the 0-based character offset of a SMILES error.
	Position *int `json:"position,omitempty"`
	// Field names the request field at fault, when known.
	Field string `json:"field,omitempty"`
	// RequestID repeats the X-Request-ID of the request.
	RequestID string `json:"request_id,omitempty"`
}

// Errors of the HTTP layer itself.
var (
	errMalformed      = errors.New("malformed request body")
	errTooLarge       = errors.New("request body too large")
	errUnsupported    = errors.New("unsupported media type")
	errNotFoundPath   = errors.New("no such endpoint")
	errPrecondition   = errors.New("precondition failed")
	errUnauthorized   = errors.New("missing or invalid API key")
	errRateLimited    = errors.New("rate limit exceeded")
	errBusy           = errors.New("every force-field slot is busy; try again shortly")
	errComputeTimeout = errors.New("the computation did not finish within the server's time limit")
	errOverloaded     = errors.New("the server is at its limit of requests in flight; retry shortly")
)

// requestError wraps a sentinel with a message safe to show the client.
type requestError struct {
	kind  error
	msg   string
	field string
}

func (e *requestError) Error() string { return e.msg }
func (e *requestError) Unwrap() error { return e.kind }

func badRequest(kind error, field, msg string) error {
	return &requestError{kind: kind, msg: msg, field: field}
}

// errorMap is the one table from domain and HTTP-layer errors to status codes and problem types.
// The first entry whose sentinel matches (errors.Is) wins; anything unmatched is a 500 whose
// detail never shows internals.
var errorMap = []struct {
	err    error
	status int
	typ    string
	title  string
	detail string // fixed text instead of the error's own (when that would show internals)
}{
	{errMalformed, http.StatusBadRequest, "malformed-request", "Malformed request", ""},
	{errTooLarge, http.StatusRequestEntityTooLarge, "body-too-large", "Request body too large", ""},
	{errUnsupported, http.StatusUnsupportedMediaType, "unsupported-media-type", "Unsupported media type", ""},
	{screening.ErrSMILES, http.StatusUnprocessableEntity, "invalid-smiles", "Invalid SMILES", ""},
	{screening.ErrNotCovered, http.StatusUnprocessableEntity, "not-covered-by-force-field", "Structure outside the force field", ""},
	{screening.ErrBudget, http.StatusUnprocessableEntity, "over-work-budget", "Over the work budget", ""},
	{screening.ErrEmbedding, http.StatusUnprocessableEntity, "no-3d-structure", "No 3-D structure found", ""},
	{errBusy, http.StatusServiceUnavailable, "busy", "Busy", ""},
	{errComputeTimeout, http.StatusServiceUnavailable, "compute-timeout", "Computation timed out", ""},
	{screening.ErrTooComplex, http.StatusUnprocessableEntity, "structure-too-complex", "Structure too complex", ""},
	{screening.ErrInvalid, http.StatusUnprocessableEntity, "invalid-value", "Invalid value", ""},
	{data.ErrNotFound, http.StatusNotFound, "not-found", "Not found", ""},
	{errNotFoundPath, http.StatusNotFound, "not-found", "Not found", ""},
	{data.ErrConflict, http.StatusPreconditionFailed, "version-conflict", "Version conflict", ""},
	{data.ErrDuplicate, http.StatusConflict, "duplicate-structure", "Structure already stored", ""},
	{data.ErrIdempotencyMismatch, http.StatusUnprocessableEntity, "idempotency-key-reused", "Idempotency key reused", ""},
	{errPrecondition, http.StatusPreconditionFailed, "precondition-failed", "Precondition failed", ""},
	{errUnauthorized, http.StatusUnauthorized, "unauthorized", "Unauthorized", ""},
	{errRateLimited, http.StatusTooManyRequests, "rate-limited", "Too many requests", ""},
	{data.ErrJobFinished, http.StatusConflict, "job-finished", "Job already finished", ""},
	{data.ErrIdempotencyInFlight, http.StatusConflict, "idempotency-key-in-flight", "Request with this key in progress", ""},
	{data.ErrUnavailable, http.StatusServiceUnavailable, "store-unavailable", "Store cannot take writes",
		"the store cannot take writes at the moment (for example a read-only or full disk); nothing was written — retry later; reads still work"},
	{errOverloaded, http.StatusServiceUnavailable, "overloaded", "Server busy", ""},
}

// retryAfterSeconds is the Retry-After sent with every 503 (design choice: long enough for a
// burst to pass or a disk to be freed, short enough for a pipeline's retry loop).
const retryAfterSeconds = "5"

const problemBase = "https://ringsieve.invalid/problems/"

// problemFor maps an error to its problem body.
func problemFor(err error) Problem {
	for _, e := range errorMap {
		if errors.Is(err, e.err) {
			p := Problem{Type: problemBase + e.typ, Title: e.title, Status: e.status, Detail: err.Error()}
			if e.detail != "" {
				p.Detail = e.detail
			}
			var se *screening.SMILESError
			if errors.As(err, &se) {
				pos := se.Pos
				p.Position = &pos
				p.Field = "smiles"
			}
			var fe *screening.FieldError
			if errors.As(err, &fe) {
				p.Field = fe.Field
			}
			var ie *batch.ItemError
			if errors.As(err, &ie) {
				p.Field, p.Position = ie.Field, ie.Position
			}
			var re *requestError
			if errors.As(err, &re) && re.field != "" {
				p.Field = re.field
			}
			if p.Field == "" && errors.Is(err, screening.ErrTooComplex) {
				p.Field = "smiles"
			}
			return p
		}
	}
	return Problem{Type: problemBase + "internal", Title: "Internal error", Status: http.StatusInternalServerError,
		Detail: "the server could not complete the request; it has been logged"}
}

// fail writes err as problem+json and aborts the request.
func fail(c *gin.Context, err error) {
	p := problemFor(err)
	p.Instance = c.Request.URL.Path
	p.RequestID = c.GetString(ctxRequestID)
	if p.Status >= 500 {
		c.Error(err) // logged by the logging middleware, never sent
	}
	if p.Status == http.StatusServiceUnavailable && c.Writer.Header().Get("Retry-After") == "" {
		c.Header("Retry-After", retryAfterSeconds)
	}
	writeProblem(c, p)
}

func writeProblem(c *gin.Context, p Problem) {
	c.Header("Content-Type", "application/problem+json")
	c.AbortWithStatusJSON(p.Status, p) // keeps the Content-Type set above
}
