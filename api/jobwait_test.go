package api

import (
	"fmt"
	"strings"
	"testing"
	"time"

	"ringsieve/screening/batch"
)

// TestJobWait: GET /v1/jobs/{id}?wait=N holds the answer until the job finishes or N seconds
// pass; a job that ends meanwhile (here canceled) is answered at once; wait outside 0–60 is a
// 422 naming the parameter. Design choices (jobwait.go), no published values.
func TestJobWait(t *testing.T) {
	ts, srv := newTestServer(t, Config{ServeOnly: true}) // nobody works the job: it stays queued
	r := do(t, ts, "POST", "/v1/jobs", `{"items":[{"id":"a","smiles":"C1=CC2CCC1C2"}]}`)
	var created JobCreated
	r.json(t, &created)
	if r.status != 202 {
		t.Fatalf("submit: %d %s", r.status, r.body)
	}
	for _, bad := range []string{"61", "-1", "soon", "1.5"} {
		r := do(t, ts, "GET", "/v1/jobs/"+created.ID+"?wait="+bad, "")
		if r.status != 422 || !strings.Contains(string(r.body), `"wait"`) {
			t.Errorf("wait=%s: %d %s", bad, r.status, r.body)
		}
	}
	start := time.Now()
	var st JobStatus
	do(t, ts, "GET", "/v1/jobs/"+created.ID+"?wait=1", "").json(t, &st)
	if held := time.Since(start); held < time.Second || st.Status != batch.JobQueued {
		t.Errorf("wait=1 on a queued job: answered after %v with %q, want after the full second with queued", held, st.Status)
	}
	// a cancel while a request waits: the waiter answers with the canceled job long before its
	// 60 s are up
	go func() {
		time.Sleep(300 * time.Millisecond)
		do(t, ts, "DELETE", "/v1/jobs/"+created.ID, "")
	}()
	start = time.Now()
	do(t, ts, "GET", "/v1/jobs/"+created.ID+"?wait=60", "").json(t, &st)
	if held := time.Since(start); st.Status != batch.JobCanceled || held > 30*time.Second {
		t.Errorf("wait=60 across a cancel: answered after %v with %q, want canceled at once", held, st.Status)
	}
	if r := do(t, ts, "GET", "/v1/jobs/job_nonesuch?wait=5", ""); r.status != 404 {
		t.Errorf("waiting for a job that does not exist: %d, want 404 at once", r.status)
	}
	// the server's shutdown beginning (Drain): a waiting request answers with the job as it
	// stands, so it does not hold the grace period
	r = do(t, ts, "POST", "/v1/jobs", `{"items":[{"id":"b","smiles":"C1=CCCC1"}]}`)
	r.json(t, &created)
	go func() {
		time.Sleep(300 * time.Millisecond)
		srv.Drain()
	}()
	start = time.Now()
	do(t, ts, "GET", "/v1/jobs/"+created.ID+"?wait=60", "").json(t, &st)
	if held := time.Since(start); st.Status != batch.JobQueued || held > 30*time.Second {
		t.Errorf("wait=60 across the start of a shutdown: answered after %v with %q, want queued at once", held, st.Status)
	}
}

// TestJobWaitUntilDone: on a server that works its jobs, one waiting request sees the job done
// with every item counted. The job is large enough (12,000 items, several chunks) that it is
// still being screened when the request arrives, so an answer that did not wait would say
// queued or running.
func TestJobWaitUntilDone(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	const n = 12000
	var body strings.Builder
	body.WriteString(`{"conditions":{"thermo_method":"table"},"items":[`)
	for i := range n {
		if i > 0 {
			body.WriteByte(',')
		}
		smi := []string{"C1=CC2CCC1C2", "C1=CCCC1", "oops("}[i%3] // every third item fails
		fmt.Fprintf(&body, `{"id":"m%d","smiles":%q}`, i, smi)
	}
	body.WriteString("]}")
	r := do(t, ts, "POST", "/v1/jobs", body.String())
	var created JobCreated
	r.json(t, &created)
	if r.status != 202 {
		t.Fatalf("submit: %d %s", r.status, r.body)
	}
	var st JobStatus
	do(t, ts, "GET", "/v1/jobs/"+created.ID+"?wait=60", "").json(t, &st)
	if st.Status != batch.JobDone || st.Done != n || st.Failed != n/3 {
		t.Errorf("after one wait: %+v, want done with %d items (%d failed)", st, n, n/3)
	}
}
