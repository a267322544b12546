package api

import (
	"context"
	"io"
	"log/slog"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"strings"
	"testing"

	"ringsieve/data"
)

func benchServer(b *testing.B) http.Handler {
	st, err := data.Open(context.Background(), filepath.Join(b.TempDir(), "bench.db"))
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { st.Close() })
	cfg := DefaultConfig()
	cfg.ServeOnly = true
	return New(cfg, st, slog.New(slog.NewTextHandler(io.Discard, &slog.HandlerOptions{Level: slog.LevelWarn}))).Handler()
}

// BenchmarkScreenHandler is one POST /v1/screen through the whole handler chain (no network):
// the service's own cost per request beside the screening itself.
func BenchmarkScreenHandler(b *testing.B) {
	h := benchServer(b)
	body := `{"smiles":"CN1C(=O)C2C3C=CC(C3)C2C1=O","conditions":{"thermo_method":"table"}}`
	b.ReportAllocs()
	for b.Loop() {
		req := httptest.NewRequest("POST", "/v1/screen", strings.NewReader(body))
		req.Header.Set("Content-Type", "application/json")
		w := httptest.NewRecorder()
		h.ServeHTTP(w, req)
		if w.Code != 200 {
			b.Fatalf("%d %s", w.Code, w.Body)
		}
	}
}

// BenchmarkHealthHandler is GET /healthz the same way (it reads the store).
func BenchmarkHealthHandler(b *testing.B) {
	h := benchServer(b)
	b.ReportAllocs()
	for b.Loop() {
		req := httptest.NewRequest("GET", "/healthz", nil)
		w := httptest.NewRecorder()
		h.ServeHTTP(w, req)
	}
}
