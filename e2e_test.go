package main

import (
	"bufio"
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"mime/multipart"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// End-to-end tests: build the binary, start it on a free port with a temporary database, and
// drive it over real HTTP as a caller would. Skipped with -short.

var binPath string

func TestMain(m *testing.M) {
	dir, err := os.MkdirTemp("", "ringsieve-e2e")
	if err != nil {
		panic(err)
	}
	binPath = filepath.Join(dir, "ringsieve")
	out, err := exec.Command("go", "build", "-o", binPath, ".").CombinedOutput()
	if err != nil {
		fmt.Fprintf(os.Stderr, "build: %v\n%s", err, out)
		os.Exit(1)
	}
	code := m.Run()
	os.RemoveAll(dir)
	os.Exit(code)
}

type service struct {
	cmd  *exec.Cmd
	base string
	logs *bytes.Buffer
}

// startService runs `ringsieve serve` on a free loopback port and waits for /healthz.
func startService(t *testing.T, db string, extra ...string) *service {
	t.Helper()
	return startServiceBin(t, binPath, nil, db, extra...)
}

// startServiceBin is startService with another binary and extra environment variables.
func startServiceBin(t *testing.T, bin string, env []string, db string, extra ...string) *service {
	t.Helper()
	args := append([]string{"serve", "--addr", "127.0.0.1:0", "--db", db}, extra...)
	cmd := exec.Command(bin, args...)
	cmd.Env = append(os.Environ(), env...)
	stderr, _ := cmd.StderrPipe()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	s := &service{cmd: cmd, logs: &bytes.Buffer{}}
	sc := bufio.NewScanner(stderr)
	deadline := time.After(20 * time.Second)
	found := make(chan string, 1)
	go func() {
		for sc.Scan() {
			line := sc.Text()
			s.logs.WriteString(line + "\n")
			var rec map[string]any
			if json.Unmarshal([]byte(line), &rec) == nil && rec["msg"] == "ringsieve listening" {
				found <- rec["addr"].(string)
			}
		}
	}()
	select {
	case addr := <-found:
		s.base = "http://" + addr
	case <-deadline:
		cmd.Process.Kill()
		t.Fatalf("service did not start: %s", s.logs)
	}
	t.Cleanup(func() { s.stop(t) })
	return s
}

func (s *service) stop(t *testing.T) {
	if s.cmd.ProcessState != nil {
		return
	}
	s.cmd.Process.Signal(syscall.SIGTERM)
	done := make(chan error, 1)
	go func() { done <- s.cmd.Wait() }()
	select {
	case <-done:
	case <-time.After(15 * time.Second):
		s.cmd.Process.Kill()
		t.Errorf("service did not stop on SIGTERM")
	}
}

func (s *service) kill() {
	s.cmd.Process.Kill()
	s.cmd.Wait()
}

func call(t *testing.T, method, url, ctype string, body io.Reader, hdr ...string) (int, []byte, http.Header) {
	t.Helper()
	req, _ := http.NewRequest(method, url, body)
	if ctype != "" {
		req.Header.Set("Content-Type", ctype)
	}
	for i := 0; i+1 < len(hdr); i += 2 {
		req.Header.Set(hdr[i], hdr[i+1])
	}
	res, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return res.StatusCode, b, res.Header
}

func TestEndToEndEveryEndpoint(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	db := filepath.Join(t.TempDir(), "e2e.db")
	s := startService(t, db)
	check := func(name string, status, want int, body []byte) {
		t.Helper()
		if status != want {
			t.Fatalf("%s: %d, want %d: %s", name, status, want, body)
		}
	}
	st, b, _ := call(t, "GET", s.base+"/healthz", "", nil)
	check("healthz", st, 200, b)
	st, b, _ = call(t, "GET", s.base+"/openapi.json", "", nil)
	check("openapi", st, 200, b)
	st, b, _ = call(t, "GET", s.base+"/", "", nil)
	check("page", st, 200, b)
	st, b, _ = call(t, "GET", s.base+"/docs", "", nil)
	check("docs", st, 200, b)
	st, b, _ = call(t, "GET", s.base+"/metrics", "", nil)
	check("metrics", st, 200, b)
	st, b, _ = call(t, "POST", s.base+"/v1/screen", J, strings.NewReader(`{"smiles":"C1=CC2CCC1C2","conditions":{"temperature_c":25,"monomer_conc_mol_l":1.0,"catalyst":"ru-nhc"}}`))
	check("screen", st, 200, b)
	st, b, _ = call(t, "POST", s.base+"/v1/screen", J, strings.NewReader(`{"smiles":"C1=CC(C"}`))
	if st != 422 || !strings.Contains(string(b), `"position":5`) {
		t.Fatalf("bad SMILES: %d %s", st, b)
	}
	st, b, _ = call(t, "POST", s.base+"/v1/screen/batch", J, strings.NewReader(`{"items":[{"id":"a","smiles":"C1=CCCC1"},{"id":"b","smiles":"C1=CC2CCC1C2"}]}`))
	check("batch", st, 200, b)
	st, b, _ = call(t, "POST", s.base+"/v1/sweep", J, strings.NewReader(`{"smiles":"C1=CCCC1"}`))
	check("sweep", st, 200, b)
	st, b, _ = call(t, "POST", s.base+"/v1/plan", J, strings.NewReader(`{"smiles":"C1=CC2CCC1C2","target":{"dp":200}}`))
	check("plan", st, 200, b)
	st, b, _ = call(t, "GET", s.base+"/v1/tables/ring-systems", "", nil)
	check("ring table", st, 200, b)
	st, b, _ = call(t, "POST", s.base+"/v1/conformers", J, strings.NewReader(`{"smiles":"C1=CC2CCC1C2","max":2}`))
	check("conformers", st, 200, b)
	if !strings.Contains(string(b), `"energy_kcal_mol":34.104`) || !strings.Contains(string(b), "V2000") {
		t.Fatalf("conformers: %s", b)
	}
	st, b, _ = call(t, "POST", s.base+"/v1/conformers", J, strings.NewReader(`{"smiles":"C[Se]C1CC2C=CC1C2"}`))
	if st != 422 || !strings.Contains(string(b), "not-covered-by-force-field") {
		t.Fatalf("selenium: %d %s", st, b)
	}
	st, b, h := call(t, "POST", s.base+"/v1/monomers", J, strings.NewReader(`{"name":"MEM-01","smiles":"C1=CC2CCC1C2","tags":["membrane"]}`))
	check("create monomer", st, 201, b)
	var m struct {
		ID string `json:"id"`
	}
	json.Unmarshal(b, &m)
	st, b, _ = call(t, "GET", s.base+"/v1/monomers?tag=membrane", "", nil)
	check("list monomers", st, 200, b)
	st, b, _ = call(t, "GET", s.base+"/v1/monomers/"+m.ID, "", nil)
	check("get monomer", st, 200, b)
	st, b, _ = call(t, "PUT", s.base+"/v1/monomers/"+m.ID, J, strings.NewReader(`{"name":"MEM-01 renamed","smiles":"C1=CC2CCC1C2"}`), "If-Match", h.Get("ETag"))
	check("replace monomer", st, 200, b)
	st, b, _ = call(t, "POST", s.base+"/v1/screen", J, strings.NewReader(`{"monomer_id":"`+m.ID+`","save":true}`))
	check("screen stored", st, 200, b)
	st, b, _ = call(t, "GET", s.base+"/v1/monomers/"+m.ID+"/results", "", nil)
	check("history", st, 200, b)
	st, b, _ = call(t, "POST", s.base+"/v1/jobs", J, strings.NewReader(`{"items":[{"id":"x","smiles":"C1=CCCC1"}]}`))
	check("job", st, 202, b)
	var jc struct {
		ID string `json:"id"`
	}
	json.Unmarshal(b, &jc)
	waitDone(t, s.base, jc.ID, 30*time.Second)
	st, b, _ = call(t, "GET", s.base+"/v1/jobs/"+jc.ID+"/results?format=csv", "", nil)
	check("job results", st, 200, b)
	st, b, _ = call(t, "DELETE", s.base+"/v1/jobs/"+jc.ID, "", nil)
	check("cancel finished job", st, 409, b)

	// the store survives a restart
	s.stop(t)
	s2 := startService(t, db)
	st, b, _ = call(t, "GET", s2.base+"/v1/monomers/"+m.ID, "", nil)
	if st != 200 || !strings.Contains(string(b), "MEM-01 renamed") {
		t.Fatalf("after restart: %d %s", st, b)
	}
	st, b, _ = call(t, "DELETE", s2.base+"/v1/monomers/"+m.ID, "", nil)
	check("delete monomer", st, 204, b)
}

func waitDone(t *testing.T, base, id string, limit time.Duration) map[string]any {
	t.Helper()
	deadline := time.Now().Add(limit)
	for time.Now().Before(deadline) {
		_, b, _ := call(t, "GET", base+"/v1/jobs/"+id, "", nil)
		var st map[string]any
		json.Unmarshal(b, &st)
		switch st["status"] {
		case "done", "failed", "canceled":
			return st
		}
		time.Sleep(100 * time.Millisecond)
	}
	t.Fatalf("job %s not done within %v", id, limit)
	return nil
}

// jobFile builds a 20,000-structure SMILES file from the committed benchmark corpus (each
// candidate twice under different ids) plus a few malformed lines.
func jobFile(t *testing.T) []byte {
	b, err := os.ReadFile("testdata/corpus/candidates.smi")
	if err != nil {
		t.Fatal(err)
	}
	var out bytes.Buffer
	n := 0
	for pass := 0; pass < 2; pass++ {
		for _, l := range strings.Split(string(b), "\n") {
			f := strings.Fields(l)
			if len(f) < 2 || strings.HasPrefix(l, "#") {
				continue
			}
			fmt.Fprintf(&out, "%s %s-p%d\n", f[0], f[1], pass)
			n++
		}
	}
	out.WriteString("C1CC( broken-1\nC1=CC2CCC1C2X broken-2\n")
	if n < 20000 {
		t.Fatalf("only %d structures", n)
	}
	return out.Bytes()
}

// jobUpload is a multipart job submission of file (SMILES lines) in the fast tier.
func jobUpload(file []byte) (*bytes.Buffer, string) {
	var buf bytes.Buffer
	w := multipart.NewWriter(&buf)
	fw, _ := w.CreateFormFile("file", "list.smi")
	fw.Write(file)
	w.WriteField("thermo_method", "table") // the fast tier for a large list
	w.Close()
	return &buf, w.FormDataContentType()
}

// submitJob posts file as a fast-tier job with an Idempotency-Key and returns the job's id and
// item count.
func submitJob(t *testing.T, base string, file []byte, key string) (string, int) {
	t.Helper()
	buf, ct := jobUpload(file)
	st, b, _ := call(t, "POST", base+"/v1/jobs", ct, buf, "Idempotency-Key", key)
	if st != 202 {
		t.Fatalf("submit: %d %s", st, b)
	}
	var jc struct {
		ID    string `json:"id"`
		Total int    `json:"total"`
	}
	json.Unmarshal(b, &jc)
	return jc.ID, jc.Total
}

// waitMidway polls a job on base until some but not all of its total items are done, so that
// the caller can kill a process mid-job; it fails when the job ends first.
func waitMidway(t *testing.T, base, id string, total int) int {
	t.Helper()
	deadline := time.Now().Add(2 * time.Minute)
	for {
		_, b, _ := call(t, "GET", base+"/v1/jobs/"+id, "", nil)
		var js struct {
			Done   int    `json:"done"`
			Status string `json:"status"`
		}
		json.Unmarshal(b, &js)
		if js.Done > 0 && js.Done < total {
			return js.Done
		}
		if js.Status == "done" || time.Now().After(deadline) {
			t.Fatalf("job finished before it could be interrupted (%d of %d); use a larger file", js.Done, total)
		}
		time.Sleep(20 * time.Millisecond)
	}
}

// sameAsOffline checks a job's ranked CSV against the offline `ringsieve screen` of the same file
// (which holds two malformed rows, so the offline screen exits 2 — contract v1.1): every item
// once, every line equal.
func sameAsOffline(t *testing.T, got []byte, path string, total int) {
	t.Helper()
	want, err := exec.Command(binPath, "screen", "--thermo-method", "table", "--format", "csv", path).Output()
	var ee *exec.ExitError
	if !errors.As(err, &ee) || ee.ExitCode() != 2 {
		t.Fatalf("offline screen of a file with bad rows: %v, want exit status 2", err)
	}
	gl := strings.Split(strings.TrimSpace(string(got)), "\n")
	wl := strings.Split(strings.TrimSpace(string(want)), "\n")
	if len(gl) != total+1 || len(wl) != len(gl) {
		t.Fatalf("job CSV has %d rows, offline %d, want %d", len(gl)-1, len(wl)-1, total)
	}
	ids := map[string]bool{}
	for i := range gl {
		if i > 0 {
			id := strings.Split(gl[i], ",")[1]
			if ids[id] {
				t.Fatalf("id %s appears twice", id)
			}
			ids[id] = true
		}
		if gl[i] != wl[i] {
			t.Fatalf("line %d differs:\njob:     %s\noffline: %s", i+1, gl[i], wl[i])
		}
	}
}

// TestLargeJobSurvivesKill: a 20,000-structure job is killed (SIGKILL) mid-way and the service
// restarted on the same database; the job resumes, nothing is lost or counted twice, and its
// ranked CSV equals the offline `ringsieve screen` output for the same file.
func TestLargeJobSurvivesKill(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	dir := t.TempDir()
	db := filepath.Join(dir, "jobs.db")
	file := jobFile(t)
	path := filepath.Join(dir, "list.smi")
	os.WriteFile(path, file, 0o644)

	s := startService(t, db, "--workers", "2")
	var jc struct {
		ID    string
		Total int
	}
	jc.ID, jc.Total = submitJob(t, s.base, file, "big-1")
	// wait until some but not all items are done, then kill without warning
	t.Logf("killing the service at %d of %d", waitMidway(t, s.base, jc.ID, jc.Total), jc.Total)
	s.kill()

	s2 := startService(t, db, "--workers", "2")
	final := waitDone(t, s2.base, jc.ID, 5*time.Minute)
	if final["status"] != "done" || int(final["done"].(float64)) != jc.Total || int(final["total"].(float64)) != jc.Total {
		t.Fatalf("after restart: %v", final)
	}
	if int(final["failed"].(float64)) != 2 {
		t.Errorf("failed %v, want the 2 malformed lines", final["failed"])
	}
	_, got, _ := call(t, "GET", s2.base+"/v1/jobs/"+jc.ID+"/results?format=csv", "", nil)

	// resubmitting with the same key returns the same job
	buf2, ct2 := jobUpload(file)
	_, b, _ := call(t, "POST", s2.base+"/v1/jobs", ct2, buf2, "Idempotency-Key", "big-1")
	if !strings.Contains(string(b), jc.ID) {
		t.Errorf("same Idempotency-Key after restart gave another job: %s", b)
	}
	sameAsOffline(t, got, path, jc.Total)
}

func TestCLIScreenAndSubmit(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	dir := t.TempDir()
	csvPath := filepath.Join(dir, "in.csv")
	os.WriteFile(csvPath, []byte("id,smiles,owner\nnb,C1=CC2CCC1C2,ana\ncp,C1=CCCC1,ben\nbz,c1ccccc1,chen\n"), 0o644)
	out, err := exec.Command(binPath, "screen", "--format", "jsonl", "--temp-c", "0", "--conc-mol-l", "5", csvPath).Output()
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(out)), "\n")
	if len(lines) != 3 || !strings.Contains(lines[0], `"id":"nb"`) || !strings.Contains(lines[0], `"owner":"ana"`) {
		t.Fatalf("screen jsonl:\n%s", out)
	}
	if out, err := exec.Command(binPath, "screen", "--catalyst", "nope", csvPath).CombinedOutput(); err == nil {
		t.Fatalf("unknown catalyst accepted: %s", out)
	}
	s := startService(t, filepath.Join(dir, "cli.db"))
	resPath := filepath.Join(dir, "ranked.csv")
	cmd := exec.Command(binPath, "submit", "--server", s.base, "-o", resPath, csvPath)
	if out, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("submit: %v\n%s", err, out)
	}
	b, _ := os.ReadFile(resPath)
	if !strings.HasPrefix(string(b), "rank,id,") || strings.Count(string(b), "\n") != 4 {
		t.Fatalf("submit output:\n%s", b)
	}
}

// TestCLIPlan: `ringsieve plan` (contract v1.1) gives the plan of POST /v1/plan offline: DP,
// [M]0/[I]0, the solution volume (10 g of cyclopentene, 68.12 g/mol, at 3.0 mol/L: 48.93 mL —
// arithmetic) and the heat sink.
func TestCLIPlan(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	out, err := exec.Command(binPath, "plan", "--format", "json", "--dp", "200", "--temp-c", "0", "--conc-mol-l", "3",
		"--catalyst", "mo-w-imido", "--monomer-mass-g", "10", "C1=CCCC1").Output()
	if err != nil {
		t.Fatal(err)
	}
	var p struct {
		DP     float64 `json:"dp"`
		Ratio  float64 `json:"monomer_to_initiator"`
		Hazard struct {
			Volume   float64 `json:"solvent_volume_ml"`
			HeatSink string  `json:"heat_sink"`
		} `json:"hazard"`
	}
	if err := json.Unmarshal(out, &p); err != nil {
		t.Fatal(err)
	}
	if p.DP != 200 || p.Ratio <= 200 || math.Abs(p.Hazard.Volume-48.93) > 0.05 || !strings.Contains(p.Hazard.HeatSink, "toluene") {
		t.Errorf("plan: %+v", p)
	}
	if out, err := exec.Command(binPath, "plan", "C1=CCCC1").CombinedOutput(); err == nil {
		t.Errorf("plan without a target succeeded: %s", out)
	}
}
