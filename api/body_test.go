package api

import (
	"bytes"
	"errors"
	"io"
	"math/rand/v2"
	"net/http"
	"net/http/httptest"
	"runtime"
	"strings"
	"testing"
	"testing/iotest"

	"github.com/gin-gonic/gin"
)

// TestReadAllSized: the body read in two steps from its announced length is the body, whatever
// the announcement (exact, unknown, too long, too short) and however the reader splits it, and a
// body that announces its length is not read through doublings (common practice: a buffer
// grown by doubling allocates about three times the bytes it ends with).
func TestReadAllSized(t *testing.T) {
	rng := rand.New(rand.NewPCG(5, 6))
	for _, size := range []int{0, 1, 511, 512, 513, readBodyFirst - 1, readBodyFirst, readBodyFirst + 1, 3 << 20} {
		body := make([]byte, size)
		for i := range body {
			body[i] = byte(rng.IntN(256))
		}
		for _, n := range []int64{int64(size), -1, int64(size) + 100, int64(size) / 2} {
			for _, half := range []bool{false, true} {
				var r io.Reader = bytes.NewReader(body)
				if half {
					r = iotest.HalfReader(r) // short reads
				}
				got, err := readAllSized(r, n)
				if err != nil {
					t.Fatalf("size %d, announced %d: %v", size, n, err)
				}
				if !bytes.Equal(got, body) {
					t.Fatalf("size %d, announced %d, short reads %v: got %d bytes, not the body", size, n, half, len(got))
				}
			}
		}
	}
	// an error other than the end is passed on
	if _, err := readAllSized(iotest.ErrReader(errors.New("gone")), 10); err == nil {
		t.Fatal("a failing reader gave no error")
	}
	// the bytes allocated for a 5 MB body that announces its length: the first part and the rest
	const size = 5 << 20
	body := make([]byte, size)
	var before, after runtime.MemStats
	runtime.ReadMemStats(&before)
	if _, err := readAllSized(bytes.NewReader(body), size); err != nil {
		t.Fatal(err)
	}
	runtime.ReadMemStats(&after)
	if got := after.TotalAlloc - before.TotalAlloc; got > size+readBodyFirst+64<<10 {
		t.Errorf("a 5 MB body with its length allocated %d bytes, more than the body and the first part", got)
	}
}

// TestReadBodyTwice: a second readBody in a request (the handler after the idempotency
// middleware) gets the same bytes without reading again, and the body put back reads from its
// start.
func TestReadBodyTwice(t *testing.T) {
	const body = `{"smiles":"C1=CC2CCC1C2"}`
	c, _ := gin.CreateTestContext(httptest.NewRecorder())
	c.Request = httptest.NewRequest(http.MethodPost, "/v1/screen", strings.NewReader(body))
	first, err := readBody(c)
	if err != nil || string(first) != body {
		t.Fatalf("first read: %q, %v", first, err)
	}
	second, err := readBody(c)
	if err != nil || string(second) != body || &second[0] != &first[0] {
		t.Fatalf("second read: %q, %v (same bytes: %v)", second, err, len(second) > 0 && &second[0] == &first[0])
	}
	again, err := io.ReadAll(c.Request.Body)
	if err != nil || string(again) != body {
		t.Fatalf("the body put back reads %q, %v", again, err)
	}
}
