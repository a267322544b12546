package main

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"
)

// Faults and load, against a freshly started binary (issue "Hold under hostile input, load and
// storage faults"). Each case states the promise it checks; the figures it measures are
// logged (go test -v -run Faults) and quoted in the README's "Under faults and load".
//
// The fast cases run in `go test ./...`; -faults adds the slow ones (the 48 MB job body, CPU
// after a batch client disconnects). .ci/run passes -faults.

// J is the JSON media type.
const J = "application/json"

var slowFaults = flag.Bool("faults", false, "also run the slow fault cases (large bodies, CPU after disconnect)")

// procStatus reads a field (kB) of /proc/PID/status, e.g. VmHWM (peak resident memory).
func procStatus(t *testing.T, pid int, field string) int {
	t.Helper()
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/status", pid))
	if err != nil {
		t.Skipf("no /proc here: %v", err)
	}
	for _, line := range strings.Split(string(b), "\n") {
		if strings.HasPrefix(line, field+":") {
			f := strings.Fields(line)
			n, _ := strconv.Atoi(f[1])
			return n
		}
	}
	t.Fatalf("%s not in /proc/%d/status", field, pid)
	return 0
}

// cpuSeconds is the user+system CPU time of a process, from /proc/PID/stat (clock ticks of
// 1/100 s, the Linux default).
func cpuSeconds(t *testing.T, pid int) float64 {
	t.Helper()
	b, err := os.ReadFile(fmt.Sprintf("/proc/%d/stat", pid))
	if err != nil {
		t.Skipf("no /proc here: %v", err)
	}
	s := string(b)
	f := strings.Fields(s[strings.LastIndexByte(s, ')')+2:])
	ut, _ := strconv.ParseFloat(f[11], 64)
	st, _ := strconv.ParseFloat(f[12], 64)
	return (ut + st) / 100
}

func problemOf(t *testing.T, b []byte) map[string]any {
	t.Helper()
	var p map[string]any
	if err := json.Unmarshal(b, &p); err != nil {
		t.Fatalf("not a JSON problem: %s", b)
	}
	return p
}

// TestFaultsHostileInput: oversized item lists are refused while they are read, with memory
// bounded; structures over the work bound get 422 "structure-too-complex".
func TestFaultsHostileInput(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	s := startService(t, filepath.Join(t.TempDir(), "f.db"))
	pid := s.cmd.Process.Pid

	// a ladder of 60 fused rings with an olefin in every other ring: 12 olefins analysed × 60 rings
	var lad strings.Builder
	lad.WriteString("C1CCC2")
	for k := 3; k <= 60; k++ {
		fmt.Fprintf(&lad, map[bool]string{true: "C=C%%%02d", false: "CC%%%02d"}[k%2 == 1], k)
	}
	lad.WriteString("CCCC=C%60")
	for k := 59; k > 1; k-- {
		fmt.Fprintf(&lad, map[bool]string{true: "C=C%%%02d", false: "CC%%%02d"}[k%2 == 0], k)
	}
	lad.WriteString("C1")
	st, b, _ := call(t, "POST", s.base+"/v1/screen", J, strings.NewReader(`{"smiles":"`+lad.String()+`"}`))
	if p := problemOf(t, b); st != 422 || !strings.HasSuffix(fmt.Sprint(p["type"]), "/structure-too-complex") || p["field"] != "smiles" {
		t.Errorf("ladder: %d %s, want 422 structure-too-complex on smiles", st, b)
	}
	// the same inside a batch: a problem in place, the other items screened
	st, b, _ = call(t, "POST", s.base+"/v1/screen/batch", J, strings.NewReader(`{"items":[{"id":"ok","smiles":"C1=CC2CCC1C2"},{"id":"ladder","smiles":"`+lad.String()+`"}]}`))
	if st != 200 || !bytes.Contains(b, []byte("structure-too-complex")) {
		t.Errorf("batch with ladder: %d %.300s", st, b)
	}

	// a synchronous batch far over the item limit (8 MB of empty items): 422 at item 5,001
	body := `{"items":[` + strings.TrimSuffix(strings.Repeat("{},", 2_700_000), ",") + `]}`
	st, b, _ = call(t, "POST", s.base+"/v1/screen/batch", J, strings.NewReader(body[:min(len(body), 8<<20-2)]+"]}"))
	if st != 422 && st != 400 {
		t.Errorf("8 MB batch: %d %.200s, want 422 (or 400 for the cut JSON)", st, b)
	}
	body = `{"items":[` + strings.TrimSuffix(strings.Repeat("{},", 2_000_000), ",") + `]}`
	st, b, _ = call(t, "POST", s.base+"/v1/screen/batch", J, strings.NewReader(body))
	if p := problemOf(t, b); st != 422 || p["field"] != "items" {
		t.Errorf("6 MB batch of 2,000,000 items: %d %.200s, want 422 on items", st, b)
	}
	hwm := procStatus(t, pid, "VmHWM")
	t.Logf("after a 6 MB batch of 2,000,000 empty items: peak resident memory %d MB", hwm/1024)
	if hwm > 400*1024 {
		t.Errorf("peak resident memory %d MB after a 6 MB body", hwm/1024)
	}

	if !*slowFaults {
		return
	}
	// a 48 MB job body of empty items: refused at item 200,001 with memory bounded
	body = `{"items":[` + strings.TrimSuffix(strings.Repeat("{},", 16_000_000), ",") + `]}`
	t0 := time.Now()
	st, b, _ = call(t, "POST", s.base+"/v1/jobs", J, strings.NewReader(body))
	if p := problemOf(t, b); st != 422 || p["field"] != "items" {
		t.Errorf("48 MB job body: %d %.200s, want 422 on items", st, b)
	}
	hwm = procStatus(t, pid, "VmHWM")
	t.Logf("48 MB job body of 16,000,000 empty items: 422 after %v, peak resident memory %d MB", time.Since(t0).Round(time.Millisecond), hwm/1024)
	if hwm > 600*1024 {
		t.Errorf("peak resident memory %d MB after a 48 MB body (limit 600 MB)", hwm/1024)
	}
	// nothing of it was stored
	st, b, _ = call(t, "GET", s.base+"/v1/monomers", "", nil)
	if st != 200 {
		t.Errorf("list after refused job: %d", st)
	}
}

// cyclooctenes returns n distinct substituted cyclooctenes (force-field work of tens of
// milliseconds each, no two sharing a cache entry).
func cyclooctenes(n int) []string {
	var out []string
	subs := []string{"C", "O", "OC", "CC", "C(=O)OC", "CO", "N(C)C", "C#N", "F", "Cl"}
	for k := 1; len(out) < n; k++ {
		for pos := 0; pos < 3 && len(out) < n; pos++ {
			for _, sub := range subs {
				if len(out) == n {
					break
				}
				chain := strings.Repeat("C", k) + sub
				ring := []string{"C1=CCC(" + chain + ")CCCC1", "C1=CCCC(" + chain + ")CCC1", "C1=CC(" + chain + ")CCCCC1"}[pos]
				out = append(out, ring)
			}
		}
	}
	return out
}

// TestFaultsBatchStopsWhenClientGoes: a synchronous batch stops screening when its client
// disconnects (CPU time of the server process measured from /proc).
func TestFaultsBatchStopsWhenClientGoes(t *testing.T) {
	if testing.Short() || !*slowFaults {
		t.Skip("slow fault case: go test -run Faults -faults")
	}
	s := startService(t, filepath.Join(t.TempDir(), "f.db"))
	pid := s.cmd.Process.Pid
	var items []string
	for i, smi := range cyclooctenes(3000) {
		items = append(items, fmt.Sprintf(`{"id":"c%d","smiles":%q}`, i, smi))
	}
	body := `{"conditions":{"thermo_method":"forcefield"},"items":[` + strings.Join(items, ",") + `]}`
	ctx, cancel := context.WithCancel(context.Background())
	req, _ := http.NewRequestWithContext(ctx, "POST", s.base+"/v1/screen/batch", strings.NewReader(body))
	req.Header.Set("Content-Type", J)
	done := make(chan error, 1)
	go func() {
		res, err := http.DefaultClient.Do(req)
		if err == nil {
			res.Body.Close()
		}
		done <- err
	}()
	time.Sleep(1500 * time.Millisecond)
	busy := cpuSeconds(t, pid)
	cancel()
	<-done
	time.Sleep(300 * time.Millisecond) // items in progress finish
	before := cpuSeconds(t, pid)
	time.Sleep(3 * time.Second)
	after := cpuSeconds(t, pid)
	t.Logf("batch of 3,000 force-field items: %.2f CPU-s in the first 1.5 s; after the client left: %.2f CPU-s in the next 3 s", busy, after-before)
	if busy < 0.5 {
		t.Skipf("the batch did not load the server (%.2f CPU-s): nothing to measure", busy)
	}
	if after-before > 0.3 {
		t.Errorf("the server burned %.2f CPU-s in the 3 s after the client disconnected", after-before)
	}
}

// TestFaultsLoadShedding: past --max-in-flight, requests get 503 with Retry-After while
// /healthz still answers; freed slots serve again.
func TestFaultsLoadShedding(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	s := startService(t, filepath.Join(t.TempDir(), "f.db"), "--max-in-flight", "2")
	// two requests whose bodies never finish hold both slots (own client: no pooled connections
	// from other tests)
	client := &http.Client{Transport: &http.Transport{DisableKeepAlives: true}}
	var writers []*io.PipeWriter
	var wg sync.WaitGroup
	for i := 0; i < 2; i++ {
		pr, pw := io.Pipe()
		writers = append(writers, pw)
		req, _ := http.NewRequest("POST", s.base+"/v1/screen", pr)
		req.Header.Set("Content-Type", J)
		wg.Add(1)
		go func() {
			defer wg.Done()
			res, err := client.Do(req)
			if err != nil {
				t.Logf("held request: %v", err)
				return
			}
			b, _ := io.ReadAll(res.Body)
			res.Body.Close()
			t.Logf("held request: %d %.100s", res.StatusCode, b)
		}()
		pw.Write([]byte(`{"smiles":`))
	}
	// wait until both are being served (the in-flight gauge; /metrics is exempt from the limit)
	deadline := time.Now().Add(10 * time.Second)
	for {
		_, m, _ := call(t, "GET", s.base+"/metrics", "", nil)
		if bytes.Contains(m, []byte("\nringsieve_http_in_flight 2\n")) {
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("the held requests never reached the server")
		}
		time.Sleep(10 * time.Millisecond)
	}
	st, b, h := call(t, "POST", s.base+"/v1/screen", J, strings.NewReader(`{"smiles":"C1=CC2CCC1C2"}`))
	if p := problemOf(t, b); st != 503 || h.Get("Retry-After") == "" || !strings.HasSuffix(fmt.Sprint(p["type"]), "/overloaded") {
		t.Errorf("third request: %d Retry-After %q %s, want 503 overloaded with Retry-After", st, h.Get("Retry-After"), b)
	}
	if st, _, _ := call(t, "GET", s.base+"/healthz", "", nil); st != 200 {
		t.Errorf("healthz while saturated: %d", st)
	}
	for _, w := range writers {
		w.Write([]byte(`"C1=CCCC1"}`))
		w.Close()
	}
	wg.Wait()
	if st, b, _ := call(t, "POST", s.base+"/v1/screen", J, strings.NewReader(`{"smiles":"C1=CC2CCC1C2"}`)); st != 200 {
		t.Errorf("after the slots were freed: %d %s", st, b)
	}
}

// TestFaultsStoreTurnsReadOnly: the database file turns immutable while serving (chattr +i,
// root on a file system that supports it; skipped elsewhere). The process stays up, writes
// get 503 with Retry-After, reads and screening go on, /healthz says degraded; when the file
// is writable again the store recovers by itself.
func TestFaultsStoreTurnsReadOnly(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	if _, err := exec.LookPath("chattr"); err != nil {
		t.Skip("chattr not available")
	}
	dir := t.TempDir()
	db := filepath.Join(dir, "f.db")
	s := startService(t, db)
	st, b, _ := call(t, "POST", s.base+"/v1/monomers", J, strings.NewReader(`{"name":"MEM-01","smiles":"C1=CC2CCC1C2"}`))
	if st != 201 {
		t.Fatalf("create: %d %s", st, b)
	}
	files, _ := filepath.Glob(db + "*")
	if out, err := exec.Command("chattr", append([]string{"+i"}, files...)...).CombinedOutput(); err != nil {
		t.Skipf("cannot make the database immutable here (%v: %s)", err, out)
	}
	defer exec.Command("chattr", append([]string{"-i"}, files...)...).Run()

	st, b, h := call(t, "POST", s.base+"/v1/monomers", J, strings.NewReader(`{"name":"MEM-02","smiles":"C1=CCCCCCC1"}`))
	if p := problemOf(t, b); st != 503 || h.Get("Retry-After") == "" || !strings.HasSuffix(fmt.Sprint(p["type"]), "/store-unavailable") {
		t.Errorf("write on an immutable file: %d %s, want 503 store-unavailable with Retry-After", st, b)
	}
	if strings.Contains(string(b), "sqlite") || strings.Contains(string(b), dir) {
		t.Errorf("the problem shows internals: %s", b)
	}
	if st, b, _ := call(t, "GET", s.base+"/v1/monomers", "", nil); st != 200 || !strings.Contains(string(b), "MEM-01") {
		t.Errorf("read while read-only: %d %.200s", st, b)
	}
	if st, _, _ := call(t, "POST", s.base+"/v1/screen", J, strings.NewReader(`{"smiles":"C1=CC2CCC1C2"}`)); st != 200 {
		t.Errorf("screening while read-only: %d", st)
	}
	var hz struct {
		Status string
		Store  struct {
			Reachable, Writable bool
			Since               string
		}
	}
	st, b, _ = call(t, "GET", s.base+"/healthz", "", nil)
	json.Unmarshal(b, &hz)
	if st != 200 || hz.Status != "degraded" || hz.Store.Writable || !hz.Store.Reachable || hz.Store.Since == "" {
		// the service's log says which write failed and whether one succeeded since
		t.Errorf("healthz while read-only: %d %s\nservice log:\n%s", st, b, s.logs)
	}
	if s.cmd.ProcessState != nil || s.cmd.Process.Signal(syscall.Signal(0)) != nil {
		t.Fatalf("the process died: %s", s.logs)
	}
	// writable again: the probe write clears the state within a few seconds
	exec.Command("chattr", append([]string{"-i"}, files...)...).Run()
	deadline := time.Now().Add(15 * time.Second)
	for time.Now().Before(deadline) {
		_, b, _ = call(t, "GET", s.base+"/healthz", "", nil)
		if json.Unmarshal(b, &hz) == nil && hz.Status == "ok" {
			break
		}
		time.Sleep(200 * time.Millisecond)
	}
	if hz.Status != "ok" {
		t.Errorf("healthz did not recover: %s", b)
	}
	if st, b, _ := call(t, "POST", s.base+"/v1/monomers", J, strings.NewReader(`{"name":"MEM-02","smiles":"C1=CCCCCCC1"}`)); st != 201 {
		t.Errorf("write after recovery: %d %s", st, b)
	}
}

// TestFaultsSecondProcessRefused: an SQLite store serves one process; a second server or a
// keys command on the same file is refused with a clear message, not left to share the work.
func TestFaultsSecondProcessRefused(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	db := filepath.Join(t.TempDir(), "f.db")
	startService(t, db)
	fi, err := os.Stat(db)
	if err != nil {
		t.Fatal(err)
	}
	if fi.Mode().Perm()&0o077 != 0 {
		t.Errorf("database file mode %v, want 0600", fi.Mode().Perm())
	}
	for _, args := range [][]string{{"serve", "--addr", "127.0.0.1:0", "--db", db}, {"keys", "list", "--db", db}} {
		cmd := exec.Command(binPath, args...)
		out, err := runWithTimeout(cmd, 20*time.Second)
		if err == nil || !strings.Contains(string(out), "in use by another process") {
			t.Errorf("%v: err %v, output %s; want a refusal naming the other process", args, err, out)
		}
	}
}

func runWithTimeout(cmd *exec.Cmd, d time.Duration) ([]byte, error) {
	var buf bytes.Buffer
	cmd.Stdout, cmd.Stderr = &buf, &buf
	if err := cmd.Start(); err != nil {
		return nil, err
	}
	done := make(chan error, 1)
	go func() { done <- cmd.Wait() }()
	select {
	case err := <-done:
		return buf.Bytes(), err
	case <-time.After(d):
		cmd.Process.Kill()
		<-done
		return buf.Bytes(), fmt.Errorf("still running after %v", d)
	}
}

// TestFaultsIdempotencyAcrossCrash: a process that dies just before or just after committing
// a write with an Idempotency-Key leaves either nothing or the write with its key; the
// client's retry creates exactly one monomer (fault-injection build, -tags faultinject).
func TestFaultsIdempotencyAcrossCrash(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	faultBin := filepath.Join(filepath.Dir(binPath), "ringsieve-faultinject")
	if _, err := os.Stat(faultBin); err != nil {
		if out, err := exec.Command("go", "build", "-tags", "faultinject", "-o", faultBin, ".").CombinedOutput(); err != nil {
			t.Fatalf("build with faultinject: %v\n%s", err, out)
		}
	}
	for _, point := range []string{"idempotent-write-before-commit", "idempotent-write-after-commit"} {
		t.Run(point, func(t *testing.T) {
			db := filepath.Join(t.TempDir(), "f.db")
			s := startServiceBin(t, faultBin, []string{"RINGSIEVE_FAULT=" + point}, db)
			body := `{"name":"MEM-07","smiles":"C1=CC2CC1C(C(=O)OC)C2"}`
			req, _ := http.NewRequest("POST", s.base+"/v1/monomers", strings.NewReader(body))
			req.Header.Set("Content-Type", J)
			req.Header.Set("Idempotency-Key", "notebook-entry-7")
			if res, err := http.DefaultClient.Do(req); err == nil {
				res.Body.Close()
				t.Fatalf("the fault point did not end the process (status %d)", res.StatusCode)
			}
			s.cmd.Wait()
			if code := s.cmd.ProcessState.ExitCode(); code != 86 {
				t.Fatalf("exit status %d, want 86 (fault injected): %s", code, s.logs)
			}
			s2 := startService(t, db)
			st, b, h := call(t, "POST", s2.base+"/v1/monomers", J, strings.NewReader(body), "Idempotency-Key", "notebook-entry-7")
			if st != 201 {
				t.Fatalf("retry: %d %s", st, b)
			}
			st2, b2, _ := call(t, "POST", s2.base+"/v1/monomers", J, strings.NewReader(body), "Idempotency-Key", "notebook-entry-7")
			if st2 != 201 || !bytes.Equal(b, b2) {
				t.Errorf("second retry: %d %s, want the first retry's answer", st2, b2)
			}
			_, lb, _ := call(t, "GET", s2.base+"/v1/monomers", "", nil)
			if n := strings.Count(string(lb), `"MEM-07"`); n != 1 {
				t.Errorf("%d monomers after the crash and retries, want 1: %s", n, lb)
			}
			t.Logf("%s: retry answered %d (replayed %q), one monomer stored", point, st, h.Get("Idempotent-Replayed"))
		})
	}
}

// TestFaultsMetricsAndPages: /metrics needs a key under --require-keys all; pages carry a
// Content-Security-Policy and frame protection.
func TestFaultsMetricsAndPages(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	db := filepath.Join(t.TempDir(), "f.db")
	out, err := exec.Command(binPath, "keys", "create", "--db", db, "membrane-lab").CombinedOutput()
	if err != nil {
		t.Fatalf("keys create: %v %s", err, out)
	}
	var secret string
	for _, line := range strings.Split(string(out), "\n") {
		if strings.HasPrefix(line, "secret:") {
			secret = strings.TrimSpace(strings.TrimPrefix(line, "secret:"))
		}
	}
	s := startService(t, db, "--require-keys", "all")
	if st, _, _ := call(t, "GET", s.base+"/metrics", "", nil); st != 401 {
		t.Errorf("/metrics without a key: %d, want 401", st)
	}
	if st, b, _ := call(t, "GET", s.base+"/metrics", "", nil, "X-API-Key", secret); st != 200 || !bytes.Contains(b, []byte("ringsieve_http_requests_total")) {
		t.Errorf("/metrics with a key: %d", st)
	}
	for _, page := range []string{"/", "/docs"} {
		st, _, h := call(t, "GET", s.base+page, "", nil)
		csp := h.Get("Content-Security-Policy")
		if st != 200 || !strings.Contains(csp, "default-src 'self'") || !strings.Contains(csp, "frame-ancestors 'none'") ||
			h.Get("X-Frame-Options") != "DENY" || h.Get("X-Content-Type-Options") != "nosniff" {
			t.Errorf("%s: %d CSP %q X-Frame-Options %q", page, st, csp, h.Get("X-Frame-Options"))
		}
	}
}
