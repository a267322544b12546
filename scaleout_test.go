package main

import (
	"bufio"
	"context"
	"encoding/json"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"

	"ringsieve/data"
	"ringsieve/data/pgtest"
)

// startWorker runs `ringsieve worker` on db and waits until it has started.
func startWorker(t *testing.T, db, name string, extra ...string) *exec.Cmd {
	t.Helper()
	args := append([]string{"worker", "--db", db, "--name", name}, extra...)
	cmd := exec.Command(binPath, args...)
	stderr, _ := cmd.StderrPipe()
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	started := make(chan struct{})
	go func() {
		sc := bufio.NewScanner(stderr)
		once := false
		for sc.Scan() {
			var rec map[string]any
			if json.Unmarshal(sc.Bytes(), &rec) == nil && rec["msg"] == "ringsieve worker started" && !once {
				once = true
				close(started)
			}
		}
	}()
	select {
	case <-started:
	case <-time.After(20 * time.Second):
		cmd.Process.Kill()
		t.Fatalf("worker %s did not start", name)
	}
	t.Cleanup(func() {
		if cmd.ProcessState == nil {
			cmd.Process.Signal(syscall.SIGTERM)
			cmd.Wait()
		}
	})
	return cmd
}

// TestScaleOutOnPostgres: two serve replicas (serving only) and two workers on one PostgreSQL
// database. A 20,000-item job is submitted to one replica; one worker is killed with SIGKILL
// mid-way; the job is followed on the other replica to done. Its 20,000 results equal the
// offline screen of the same file, none twice; replicas share idempotency keys.
func TestScaleOutOnPostgres(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	db := pgtest.NewDatabase(t)
	dir := t.TempDir()
	file := jobFile(t)
	path := filepath.Join(dir, "list.smi")
	os.WriteFile(path, file, 0o644)

	a := startService(t, db, "--workers", "0")
	b := startService(t, db, "--workers", "0")
	w1 := startWorker(t, db, "w1", "--workers", "1", "--lease", "3s")
	startWorker(t, db, "w2", "--workers", "1", "--lease", "3s")

	var jc struct {
		ID    string
		Total int
	}
	jc.ID, jc.Total = submitJob(t, a.base, file, "scale-1")
	// the same key on the other replica is the same job
	buf, ct := jobUpload(file)
	if _, res, _ := call(t, "POST", b.base+"/v1/jobs", ct, buf, "Idempotency-Key", "scale-1"); !strings.Contains(string(res), jc.ID) {
		t.Errorf("same Idempotency-Key on the other replica gave another job: %.200s", res)
	}
	// kill worker 1 without warning once the job is under way
	t.Logf("killing worker 1 at %d of %d", waitMidway(t, b.base, jc.ID, jc.Total), jc.Total)
	w1.Process.Kill()
	w1.Wait()

	final := waitDone(t, b.base, jc.ID, 5*time.Minute)
	if final["status"] != "done" || int(final["done"].(float64)) != jc.Total || int(final["failed"].(float64)) != 2 {
		t.Fatalf("job on the other replica: %v", final)
	}
	_, got, _ := call(t, "GET", a.base+"/v1/jobs/"+jc.ID+"/results?format=csv", "", nil)
	sameAsOffline(t, got, path, jc.Total)
	// every item stored exactly once, every chunk done
	st, err := data.Open(context.Background(), db)
	if err != nil {
		t.Fatal(err)
	}
	defer st.Close()
	oc, err := st.CountOutcomes(context.Background(), jc.ID)
	if err != nil {
		t.Fatal(err)
	}
	if oc.Items != jc.Total || oc.Outcomes != jc.Total || oc.Distinct != jc.Total || oc.Open != 0 {
		t.Errorf("stored %+v; want %d items, outcomes and distinct items, no open chunk", oc, jc.Total)
	}
}
