package api

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"slices"
	"strings"
	"sync"

	"github.com/gin-gonic/gin"
)

// The one body limit: routes that read a body get bodyLimit with their size, and every handler
// and middleware reads the body through readBody, which reports an oversized body as a 413
// problem wherever it is noticed.

// bodyLimit caps the request body of a route at n bytes.
func (s *Server) bodyLimit(n int64) gin.HandlerFunc {
	return func(c *gin.Context) {
		if c.Request.ContentLength > n {
			fail(c, tooLarge(n))
			return
		}
		c.Request.Body = http.MaxBytesReader(c.Writer, c.Request.Body, n)
		c.Next()
	}
}

func tooLarge(n int64) error {
	return badRequest(errTooLarge, "", fmt.Sprintf("request body exceeds %d bytes", n))
}

// readBody reads the whole (limited) request body and puts it back, so that a later reader
// (the handler after the idempotency middleware) sees it again; a second readBody in the same
// request returns the bytes already read. The buffer is sized from Content-Length in two steps
// (readBodyFirst, then the rest as announced once that much has arrived), so a 5 MB upload
// allocates about 6 MB instead of the 16 MB of doublings io.ReadAll makes, while a header that
// announces more than the client sends costs at most readBodyFirst.
func readBody(c *gin.Context) ([]byte, error) {
	if rb, ok := c.Request.Body.(*readBack); ok {
		return rb.b, nil
	}
	b, err := readAllSized(c.Request.Body, c.Request.ContentLength)
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, tooLarge(mbe.Limit)
		}
		return nil, badRequest(errMalformed, "", "could not read the request body")
	}
	rb := &readBack{b: b}
	rb.r.Reset(b)
	c.Request.Body = rb
	return b, nil
}

// readBack is a request body readBody has read, put back to be read again: as a reader from the
// start, or whole by the next readBody (one allocation per request).
type readBack struct {
	r bytes.Reader
	b []byte
}

func (rb *readBack) Read(p []byte) (int, error) { return rb.r.Read(p) }
func (rb *readBack) Close() error               { return nil }

// readBodyFirst is the most readAllSized allocates before the body's bytes arrive (design
// choice).
const readBodyFirst = 1 << 20

// readAllSized is io.ReadAll for a body that announces n bytes (n < 0: unknown): the first
// buffer holds min(n, readBodyFirst) bytes and one more (room for the read that sees the end),
// the second the rest of n; past n, or without n, it doubles.
func readAllSized(r io.Reader, n int64) ([]byte, error) {
	first := 512
	if n >= 0 {
		first = int(min(n, readBodyFirst)) + 1
	}
	b := make([]byte, 0, first)
	for {
		if len(b) == cap(b) {
			grow := len(b) // double
			if int64(len(b)) < n {
				grow = int(n) - len(b) + 1 // the rest as announced
			}
			b = slices.Grow(b, grow)
		}
		m, err := r.Read(b[len(b):cap(b)])
		b = b[:len(b)+m]
		if err == io.EOF {
			return b, nil
		}
		if err != nil {
			return b, err
		}
	}
}

// keyedMutex is a set of mutexes by key, created on demand and dropped when unused.
type keyedMutex struct {
	mu    sync.Mutex
	locks map[string]*keyedLock
}

type keyedLock struct {
	sync.Mutex
	users int
}

// lock locks key and returns its unlock function.
func (k *keyedMutex) lock(key string) func() {
	k.mu.Lock()
	if k.locks == nil {
		k.locks = map[string]*keyedLock{}
	}
	l := k.locks[key]
	if l == nil {
		l = &keyedLock{}
		k.locks[key] = l
	}
	l.users++
	k.mu.Unlock()
	l.Lock()
	return func() {
		l.Unlock()
		k.mu.Lock()
		l.users--
		if l.users == 0 {
			delete(k.locks, key)
		}
		k.mu.Unlock()
	}
}

// decodeJSON reads exactly one JSON object from the body into v, refusing unknown fields.
func decodeJSON(c *gin.Context, v any) error {
	if err := checkJSONType(c); err != nil {
		return err
	}
	body, err := readBody(c)
	if err != nil {
		return err
	}
	return decodeJSONBytes(body, v)
}

// checkJSONType refuses a body that is declared as something other than JSON (415).
func checkJSONType(c *gin.Context) error {
	ct := c.ContentType()
	if ct != "" && ct != "application/json" && !strings.HasSuffix(ct, "+json") {
		return badRequest(errUnsupported, "", "send application/json (got "+ct+")")
	}
	return nil
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
