package api

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"log/slog"
	"mime/multipart"
	"net/http"
	"net/http/httptest"
	"net/url"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"ringsieve/data"
	"ringsieve/screening/batch"
)

func newTestServer(t *testing.T, cfg Config) (*httptest.Server, *Server) {
	t.Helper()
	st, err := data.Open(context.Background(), filepath.Join(t.TempDir(), "api.db"))
	if err != nil {
		t.Fatal(err)
	}
	s := New(cfg, st, slog.New(slog.NewTextHandler(io.Discard, nil)))
	ctx, cancel := context.WithCancel(context.Background())
	s.Start(ctx)
	ts := httptest.NewServer(s.Handler())
	t.Cleanup(func() { ts.Close(); cancel(); s.Wait(); st.Close() })
	return ts, s
}

type resp struct {
	status int
	header http.Header
	body   []byte
}

func (r resp) json(t *testing.T, v any) {
	t.Helper()
	if err := json.Unmarshal(r.body, v); err != nil {
		t.Fatalf("decode %s: %v", r.body, err)
	}
}

func do(t *testing.T, ts *httptest.Server, method, path, body string, hdr ...string) resp {
	t.Helper()
	req, _ := http.NewRequest(method, ts.URL+path, strings.NewReader(body))
	if body != "" {
		req.Header.Set("Content-Type", "application/json")
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
	return resp{res.StatusCode, res.Header, b}
}

func TestHealthOpenAPIDocsMetrics(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	if r := do(t, ts, "GET", "/healthz", ""); r.status != 200 || !strings.Contains(string(r.body), `"ok"`) {
		t.Fatalf("healthz %d %s", r.status, r.body)
	}
	r := do(t, ts, "GET", "/openapi.json", "")
	var spec struct {
		Paths map[string]any `json:"paths"`
	}
	r.json(t, &spec)
	for _, p := range []string{"/v1/screen", "/v1/screen/batch", "/v1/monomers", "/v1/monomers/{id}", "/v1/jobs", "/v1/jobs/{id}", "/v1/jobs/{id}/results", "/v1/sweep", "/healthz"} {
		if _, ok := spec.Paths[p]; !ok {
			t.Errorf("OpenAPI document lacks %s", p)
		}
	}
	for _, p := range []string{"/", "/docs", "/static/site.css", "/static/docs.js"} {
		if r := do(t, ts, "GET", p, ""); r.status != 200 {
			t.Errorf("%s: %d", p, r.status)
		}
	}
	do(t, ts, "POST", "/v1/screen", `{"smiles":"C1=CCCC1"}`)
	r = do(t, ts, "GET", "/metrics", "")
	for _, m := range []string{"ringsieve_http_requests_total", "ringsieve_screenings_total", "ringsieve_job_queue_depth", "ringsieve_http_request_duration_seconds"} {
		if !strings.Contains(string(r.body), m) {
			t.Errorf("metrics lack %s", m)
		}
	}
}

func TestScreenEndpoint(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	// contract example
	r := do(t, ts, "POST", "/v1/screen", `{"smiles":"C1=CC2CCC1C2","conditions":{"temperature_c":25,"monomer_conc_mol_l":1.0,"catalyst":"ru-nhc"}}`)
	if r.status != 200 {
		t.Fatalf("%d %s", r.status, r.body)
	}
	var out map[string]any
	r.json(t, &out)
	for _, k := range []string{"verdict", "score", "reasons", "thermo", "descriptors", "cautions"} {
		if _, ok := out[k]; !ok {
			t.Errorf("result lacks %s", k)
		}
	}
	d := out["descriptors"].(map[string]any)
	if d["formula"] != "C7H10" || d["mol_weight_g_mol"].(float64) < 94.1 || d["monoisotopic_mass"] == nil {
		t.Errorf("descriptors %v", d)
	}
	th := out["thermo"].(map[string]any)
	for _, k := range []string{"dh_kj_mol", "ds_j_mol_k", "dg_kj_mol", "ceiling_temp_k", "eq_monomer_mol_l", "eq_conversion", "dh_uncertainty_kj_mol", "basis"} {
		if _, ok := th[k]; !ok {
			t.Errorf("thermo lacks %s", k)
		}
	}
	// cyclopentene descriptors, contract numbers: T_c 295.3 K at 1.0 mol/L (T010, Ofstead & Calderon 1972)
	r = do(t, ts, "POST", "/v1/screen", `{"descriptors":{"ring_size":5,"ring_system":"monocyclic","dh_kj_mol":-18.4,"ds_j_mol_k":-62.3}}`)
	r.json(t, &out)
	if out["verdict"] != "unfavorable" {
		t.Errorf("cyclopentene at 1 mol/L, 25 °C: %v", out["verdict"])
	}
	// a blank SMILES beside a descriptor record screens the record (same numbers as above)
	r = do(t, ts, "POST", "/v1/screen", `{"smiles":" ","descriptors":{"ring_size":5,"ring_system":"monocyclic","dh_kj_mol":-18.4,"ds_j_mol_k":-62.3}}`)
	if r.status != 200 {
		t.Fatalf("blank SMILES with descriptors: %d %s", r.status, r.body)
	}
	out = nil
	r.json(t, &out)
	if out["verdict"] != "unfavorable" {
		t.Errorf("blank SMILES with descriptors: %v", out["verdict"])
	}
}

func TestProblemResponses(t *testing.T) {
	ts, _ := newTestServer(t, Config{MaxBodyBytes: 4096})
	cases := []struct {
		name, method, path, body string
		status                   int
		field                    string
		position                 int
	}{
		{"malformed JSON", "POST", "/v1/screen", `{"smiles":`, 400, "", -1},
		{"NaN literal", "POST", "/v1/screen", `{"smiles":"C1=CCCC1","conditions":{"temperature_c":NaN}}`, 400, "", -1},
		{"huge number", "POST", "/v1/screen", `{"smiles":"C1=CCCC1","conditions":{"temperature_c":1e999}}`, 400, "", -1},
		{"unknown field", "POST", "/v1/screen", `{"smiles":"C1=CCCC1","colour":"blue"}`, 400, "colour", -1},
		{"trailing data", "POST", "/v1/screen", `{"smiles":"C1=CCCC1"} {}`, 400, "", -1},
		{"bad SMILES", "POST", "/v1/screen", `{"smiles":"C1=CC(C"}`, 422, "smiles", 5},
		{"no source", "POST", "/v1/screen", `{}`, 422, "smiles", -1},
		{"two sources", "POST", "/v1/screen", `{"smiles":"C1=CCCC1","monomer_id":"x"}`, 422, "smiles", -1},
		{"0 K", "POST", "/v1/screen", `{"smiles":"C1=CCCC1","conditions":{"temperature_k":0}}`, 422, "conditions.temperature_k", -1},
		{"below absolute zero", "POST", "/v1/screen", `{"smiles":"C1=CCCC1","conditions":{"temperature_c":-300}}`, 422, "conditions.temperature_c", -1},
		{"zero concentration", "POST", "/v1/screen", `{"smiles":"C1=CCCC1","conditions":{"monomer_conc_mol_l":0}}`, 422, "conditions.monomer_conc_mol_l", -1},
		{"unknown catalyst", "POST", "/v1/screen", `{"smiles":"C1=CCCC1","conditions":{"catalyst":"platinum"}}`, 422, "conditions.catalyst", -1},
		{"missing monomer", "POST", "/v1/screen", `{"monomer_id":"mon_nope"}`, 404, "", -1},
		{"bad record", "POST", "/v1/screen", `{"descriptors":{"ring_size":2}}`, 422, "descriptors.ring_size", -1},
		{"body too large", "POST", "/v1/screen", `{"smiles":"` + strings.Repeat("C", 5000) + `"}`, 413, "", -1},
		{"wrong type", "POST", "/v1/screen", `{"smiles":5}`, 400, "smiles", -1},
		{"no route", "GET", "/v1/nothing", ``, 404, "", -1},
		{"wrong method", "PATCH", "/v1/screen", ``, 405, "", -1},
		{"bad limit", "GET", "/v1/monomers?limit=0", ``, 422, "limit", -1},
	}
	for _, c := range cases {
		r := do(t, ts, c.method, c.path, c.body)
		if r.status != c.status {
			t.Errorf("%s: status %d, want %d (%s)", c.name, r.status, c.status, r.body)
			continue
		}
		if ct := r.header.Get("Content-Type"); !strings.HasPrefix(ct, "application/problem+json") {
			t.Errorf("%s: content type %q", c.name, ct)
		}
		var p Problem
		r.json(t, &p)
		if p.Status != c.status || p.Title == "" || p.Detail == "" || p.Type == "" {
			t.Errorf("%s: problem %+v", c.name, p)
		}
		if c.field != "" && p.Field != c.field {
			t.Errorf("%s: field %q, want %q", c.name, p.Field, c.field)
		}
		if c.position >= 0 && (p.Position == nil || *p.Position != c.position) {
			t.Errorf("%s: position %v, want %d", c.name, p.Position, c.position)
		}
	}
}

func TestBatchRanksAndKeepsErrors(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	body := `{"items":[{"id":"cp","smiles":"C1=CCCC1"},{"id":"bad","smiles":"C1CC("},{"id":"nb","smiles":"C1=CC2CCC1C2"},{"id":"bz","smiles":"c1ccccc1"},{"id":"rec","descriptors":{"ring_size":8}}],"conditions":{"monomer_conc_mol_l":2.0}}`
	r := do(t, ts, "POST", "/v1/screen/batch", body)
	if r.status != 200 {
		t.Fatalf("%d %s", r.status, r.body)
	}
	var out struct {
		Results []struct {
			ID      string   `json:"id"`
			Rank    int      `json:"rank"`
			Score   float64  `json:"score"`
			Verdict string   `json:"verdict"`
			Error   *Problem `json:"error"`
		} `json:"results"`
	}
	r.json(t, &out)
	if len(out.Results) != 5 {
		t.Fatalf("%d results", len(out.Results))
	}
	last := out.Results[4]
	if last.ID != "bad" || last.Error == nil || last.Error.Position == nil || *last.Error.Position != 4 || last.Rank != 5 {
		t.Errorf("failed item: %+v", last)
	}
	for i := 1; i < 4; i++ {
		if out.Results[i].Score > out.Results[i-1].Score || out.Results[i].Rank != i+1 {
			t.Errorf("not ranked: %+v", out.Results)
		}
	}
	if out.Results[0].ID != "nb" {
		t.Errorf("first is %s, want norbornene", out.Results[0].ID)
	}
	if r := do(t, ts, "POST", "/v1/screen/batch", `{"items":[]}`); r.status != 422 {
		t.Errorf("empty batch: %d", r.status)
	}
}

func TestMonomerCRUDOverHTTP(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	r := do(t, ts, "POST", "/v1/monomers", `{"name":"MEM-04 imide","smiles":"CN1C(=O)C2C3C=CC(C3)C2C1=O","tags":["membrane","round-1"]}`)
	if r.status != 201 || r.header.Get("ETag") == "" || r.header.Get("Location") == "" {
		t.Fatalf("create: %d %s", r.status, r.body)
	}
	var m data.Monomer
	r.json(t, &m)
	etag := r.header.Get("ETag")
	if r := do(t, ts, "GET", "/v1/monomers/"+m.ID, "", "If-None-Match", etag); r.status != 304 {
		t.Errorf("If-None-Match: %d", r.status)
	}
	if r := do(t, ts, "PUT", "/v1/monomers/"+m.ID, `{"name":"renamed","descriptors":{"ring_size":5,"ring_system":"bridged"}}`, "If-Match", `"`+m.ID+`-v9"`); r.status != 412 {
		t.Errorf("stale If-Match: %d %s", r.status, r.body)
	}
	r = do(t, ts, "PUT", "/v1/monomers/"+m.ID, `{"name":"renamed","smiles":"CN1C(=O)C2C3C=CC(C3)C2C1=O","tags":["round-2"]}`, "If-Match", etag)
	if r.status != 200 {
		t.Fatalf("replace: %d %s", r.status, r.body)
	}
	// a failed replace (bad SMILES) leaves the stored record as it was
	if r := do(t, ts, "PUT", "/v1/monomers/"+m.ID, `{"name":"broken","smiles":"C1CC"}`); r.status != 422 {
		t.Errorf("bad replace: %d", r.status)
	}
	r = do(t, ts, "GET", "/v1/monomers/"+m.ID, "")
	r.json(t, &m)
	if m.Name != "renamed" || m.Version != 2 {
		t.Errorf("after failed replace: %+v", m)
	}
	r = do(t, ts, "GET", "/v1/monomers?tag=round-2&name=RENAMED", "")
	var list MonomerList
	r.json(t, &list)
	if list.Total != 1 {
		t.Errorf("list: %+v", list)
	}
	// screen the stored monomer and save to its history
	r = do(t, ts, "POST", "/v1/screen", `{"monomer_id":"`+m.ID+`","save":true,"conditions":{"temperature_c":40}}`)
	var sr ScreenResponse
	r.json(t, &sr)
	if r.status != 200 || sr.SavedResultID == 0 {
		t.Fatalf("screen stored: %d %s", r.status, r.body)
	}
	r = do(t, ts, "GET", "/v1/monomers/"+m.ID+"/results", "")
	var h ResultHistory
	r.json(t, &h)
	if len(h.Results) != 1 || h.Results[0].EngineVersion == "" {
		t.Errorf("history %+v", h)
	}
	if r := do(t, ts, "DELETE", "/v1/monomers/"+m.ID, ""); r.status != 204 {
		t.Errorf("delete: %d", r.status)
	}
	if r := do(t, ts, "GET", "/v1/monomers/"+m.ID, ""); r.status != 404 {
		t.Errorf("get deleted: %d", r.status)
	}
}

func waitJob(t *testing.T, ts *httptest.Server, id string) JobStatus {
	t.Helper()
	deadline := time.Now().Add(30 * time.Second)
	for time.Now().Before(deadline) {
		var st JobStatus
		do(t, ts, "GET", "/v1/jobs/"+id, "").json(t, &st)
		if st.Status == batch.JobDone || st.Status == batch.JobFailed || st.Status == batch.JobCanceled {
			return st
		}
		time.Sleep(50 * time.Millisecond)
	}
	t.Fatalf("job %s did not finish", id)
	return JobStatus{}
}

func TestJobsJSONUploadIdempotencyAndFormats(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	body := `{"items":[{"id":"a","smiles":"C1=CCCC1"},{"id":"b","smiles":"C1=CC2CCC1C2"},{"id":"c","smiles":"oops("}],"conditions":{"temperature_c":25}}`
	r1 := do(t, ts, "POST", "/v1/jobs", body, "Idempotency-Key", "k1")
	r2 := do(t, ts, "POST", "/v1/jobs", body, "Idempotency-Key", "k1")
	if r1.status != 202 || r2.status != 202 {
		t.Fatalf("submit: %d %d %s", r1.status, r2.status, r1.body)
	}
	var c1, c2 JobCreated
	r1.json(t, &c1)
	r2.json(t, &c2)
	if c1.ID != c2.ID {
		t.Fatalf("same Idempotency-Key gave two jobs %s %s", c1.ID, c2.ID)
	}
	if r := do(t, ts, "POST", "/v1/jobs", `{"items":[{"smiles":"C"}]}`, "Idempotency-Key", "k1"); r.status != 422 {
		t.Errorf("reused key with another body: %d", r.status)
	}
	st := waitJob(t, ts, c1.ID)
	if st.Status != batch.JobDone || st.Done != 3 || st.Failed != 1 || st.Percent != 100 {
		t.Fatalf("job status %+v", st)
	}
	var res JobResults
	do(t, ts, "GET", "/v1/jobs/"+c1.ID+"/results?limit=2", "").json(t, &res)
	if len(res.Results) != 2 || res.Results[0].ID != "b" || res.NextOffset == nil {
		t.Errorf("page 1: %+v", res)
	}
	csvR := do(t, ts, "GET", "/v1/jobs/"+c1.ID+"/results?format=csv", "")
	lines := strings.Split(strings.TrimSpace(string(csvR.body)), "\n")
	if len(lines) != 4 || !strings.HasPrefix(lines[0], "rank,id,") || !strings.HasPrefix(lines[3], "3,c,") {
		t.Errorf("csv:\n%s", csvR.body)
	}
	jl := do(t, ts, "GET", "/v1/jobs/"+c1.ID+"/results?format=jsonl&verdict=polymerizes", "")
	if n := strings.Count(strings.TrimSpace(string(jl.body)), "\n") + 1; n != 1 {
		t.Errorf("jsonl filtered to polymerizes: %d rows\n%s", n, jl.body)
	}
	if r := do(t, ts, "DELETE", "/v1/jobs/"+c1.ID, ""); r.status != 409 {
		t.Errorf("cancel a finished job: %d", r.status)
	}

	// file upload: CSV with an extra column, one bad row
	res2 := upload(t, ts, "list.csv", "id,smiles,batch\nm1,C1=CC2CCC1C2,A\nm2,,B\nm3,C1=CCCC=CCC1,C\n",
		"temperature_c", "60", "catalyst", "ru-pyridine")
	var created JobCreated
	res2.json(t, &created)
	if res2.status != 202 || created.Total != 2 || len(created.InputErrors) != 1 || created.InputErrors[0].Line != 3 {
		t.Fatalf("upload: %d %+v", res2.status, created)
	}
	if st := waitJob(t, ts, created.ID); st.SourceFormat != "csv" || len(st.ExtraColumns) != 1 || st.ExtraColumns[0] != "batch" {
		t.Errorf("upload recorded format %q and columns %v", st.SourceFormat, st.ExtraColumns)
	}
	csvR = do(t, ts, "GET", "/v1/jobs/"+created.ID+"/results?format=csv", "")
	if !strings.Contains(string(csvR.body), ",batch") || !strings.Contains(string(csvR.body), ",A") {
		t.Errorf("extra column not carried through:\n%s", csvR.body)
	}
}

func TestAPIKeysWhenRequired(t *testing.T) {
	ts, s := newTestServer(t, Config{RequireKeys: true, RatePerKey: 1, RateBurst: 2})
	if r := do(t, ts, "POST", "/v1/screen", `{"smiles":"C1=CCCC1"}`); r.status != 401 {
		t.Fatalf("write without key: %d", r.status)
	}
	if r := do(t, ts, "GET", "/v1/monomers", ""); r.status != 200 {
		t.Fatalf("read without key: %d", r.status)
	}
	_, secret, _ := s.store.CreateAPIKey(context.Background(), "test")
	for i := 0; i < 2; i++ {
		if r := do(t, ts, "POST", "/v1/screen", `{"smiles":"C1=CCCC1"}`, "X-API-Key", secret); r.status != 200 {
			t.Fatalf("write with key: %d %s", r.status, r.body)
		}
	}
	if r := do(t, ts, "POST", "/v1/screen", `{"smiles":"C1=CCCC1"}`, "X-API-Key", secret); r.status != 429 {
		t.Errorf("over the rate limit: %d", r.status)
	}
	if r := do(t, ts, "POST", "/v1/screen", `{"smiles":"C1=CCCC1"}`, "X-API-Key", "rsk_wrong"); r.status != 401 {
		t.Errorf("bad key: %d", r.status)
	}
}

func TestCORS(t *testing.T) {
	ts, _ := newTestServer(t, Config{CORSOrigins: []string{"https://notebook.example"}})
	r := do(t, ts, "OPTIONS", "/v1/screen", "", "Origin", "https://notebook.example", "Access-Control-Request-Method", "POST")
	if r.status != 204 || r.header.Get("Access-Control-Allow-Origin") != "https://notebook.example" {
		t.Errorf("preflight: %d %v", r.status, r.header)
	}
	r = do(t, ts, "GET", "/healthz", "", "Origin", "https://elsewhere.example")
	if r.header.Get("Access-Control-Allow-Origin") != "" {
		t.Error("foreign origin allowed")
	}
}

func TestSweepEndpoint(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	r := do(t, ts, "POST", "/v1/sweep", `{"smiles":"C1=CCCC1","sweep":{"from_c":-20,"to_c":100,"step_c":10}}`)
	var out SweepResponse
	r.json(t, &out)
	if r.status != 200 || len(out.Points) != 13 {
		t.Fatalf("%d %d points", r.status, len(out.Points))
	}
	if r := do(t, ts, "POST", "/v1/sweep", `{"smiles":"C1=CCCC1","sweep":{"from_c":0,"to_c":100,"step_c":0}}`); r.status != 422 {
		t.Errorf("zero step: %d", r.status)
	}
}

// TestNeverPanicsOnInput throws malformed and hostile bodies at every JSON endpoint; every
// answer must be a 2xx or a 4xx problem, never a 500.
func TestNeverPanicsOnInput(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	bodies := []string{``, `null`, `[]`, `"x"`, `{"items":null}`, `{"items":[null]}`, `{"smiles":"` + strings.Repeat("C1", 2500) + `"}`,
		`{"descriptors":{}}`, `{"descriptors":{"ring_size":-1}}`, `{"descriptors":{"ring_size":5,"dh_kj_mol":1e308}}`,
		`{"smiles":"[Na+].[Cl-]"}`, `{"smiles":"*"}`, `{"smiles":"C1=CC1","conditions":{"bulk":true}}`,
		`{"descriptors":{"ring_size":5},"conditions":{"bulk":true}}`, `{"sweep":{"from_c":1e300,"to_c":1e301,"step_c":1}}`,
		`{"name":"","smiles":"C"}`, `{"name":"x","tags":["` + strings.Repeat("t", 100) + `"]}`, "\x00\x01\x02"}
	for _, path := range []string{"/v1/screen", "/v1/screen/batch", "/v1/sweep", "/v1/monomers", "/v1/jobs"} {
		for _, b := range bodies {
			r := do(t, ts, "POST", path, b)
			if r.status >= 500 {
				t.Errorf("%s %q: %d %s", path, b, r.status, r.body)
			}
		}
	}
}

func TestCompareAndFilters(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	body := `{"items":[{"id":"cp","smiles":"C1=CCCC1"},{"id":"nb","smiles":"C1=CC2CCC1C2"},{"id":"acid","smiles":"OC(=O)C1CC2C=CC1C2"}],
		"conditions_a":{"temperature_c":25,"monomer_conc_mol_l":2},"conditions_b":{"temperature_c":60,"monomer_conc_mol_l":2}}`
	r := do(t, ts, "POST", "/v1/screen/compare", body)
	var out CompareResponse
	r.json(t, &out)
	if r.status != 200 || len(out.Rows) != 3 {
		t.Fatalf("%d %s", r.status, r.body)
	}
	for _, row := range out.Rows {
		// cyclopentene: T_c 327.05 K at 2 mol/L for the Tuba et al. 2013 pair (romp_thermo T021),
		// so favoured at 25 °C and not at 60 °C
		if row.ID == "cp" && (row.A.Verdict != "equilibrium_limited" || row.B.Verdict != "unfavorable" || !row.VerdictChanges) {
			t.Errorf("cyclopentene 25 vs 60 °C: %+v", row)
		}
	}
	if r := do(t, ts, "POST", "/v1/screen/compare", `{"items":[{"smiles":"C"}],"conditions_a":{"catalyst":"x"}}`); r.status != 422 {
		t.Errorf("bad conditions_a: %d", r.status)
	}
	// job results filtered by catalyst compatibility and by ceiling temperature
	jr := do(t, ts, "POST", "/v1/jobs", `{"items":[{"id":"cp","smiles":"C1=CCCC1"},{"id":"nb","smiles":"C1=CC2CCC1C2"},{"id":"acid","smiles":"OC(=O)C1CC2C=CC1C2"}],"conditions":{"monomer_conc_mol_l":2}}`)
	var jc JobCreated
	jr.json(t, &jc)
	waitJob(t, ts, jc.ID)
	var res JobResults
	do(t, ts, "GET", "/v1/jobs/"+jc.ID+"/results?compatible_with=mo-w-imido", "").json(t, &res)
	for _, row := range res.Results {
		if row.ID == "acid" {
			t.Errorf("carboxylic acid kept for mo-w-imido (protic groups poison Mo/W, romp_facts a.3 rule 1)")
		}
	}
	if len(res.Results) != 2 {
		t.Errorf("compatible_with: %d rows", len(res.Results))
	}
	do(t, ts, "GET", "/v1/jobs/"+jc.ID+"/results?min_ceiling_c=60", "").json(t, &res)
	for _, row := range res.Results {
		if row.ID == "cp" {
			t.Errorf("cyclopentene kept with min_ceiling_c=60 (T_c 327 K at 2 mol/L)")
		}
	}
	if r := do(t, ts, "GET", "/v1/jobs/"+jc.ID+"/results?compatible_with=nope", ""); r.status != 422 {
		t.Errorf("bad class: %d", r.status)
	}
}

// TestIdempotentPOSTs: a retried POST /v1/monomers with the same Idempotency-Key and body
// returns the first response and stores one monomer; another body with that key is refused.
func TestIdempotentPOSTs(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	body := `{"name":"MEM-06 glycol ester","smiles":"COCCOCCOC(=O)C1CC2C=CC1C2"}`
	r1 := do(t, ts, "POST", "/v1/monomers", body, "Idempotency-Key", "nb-6")
	r2 := do(t, ts, "POST", "/v1/monomers", body, "Idempotency-Key", "nb-6")
	if r1.status != 201 || r2.status != 201 || string(r1.body) != string(r2.body) || r2.header.Get("Idempotent-Replayed") != "true" {
		t.Fatalf("replay: %d %d %s / %s", r1.status, r2.status, r1.body, r2.body)
	}
	var list MonomerList
	do(t, ts, "GET", "/v1/monomers", "").json(t, &list)
	if list.Total != 1 {
		t.Errorf("%d monomers stored", list.Total)
	}
	if r := do(t, ts, "POST", "/v1/monomers", `{"name":"other","smiles":"C1=CCCC1"}`, "Idempotency-Key", "nb-6"); r.status != 422 {
		t.Errorf("reused key: %d", r.status)
	}
	// a failed request is not stored: after fixing nothing, the same key still fails the same way
	if r := do(t, ts, "POST", "/v1/screen", `{"smiles":"C1CC("}`, "Idempotency-Key", "bad-1"); r.status != 422 {
		t.Errorf("bad SMILES with a key: %d", r.status)
	}
}

// TestThermoMethodCondition: conditions.thermo_method selects the tier, is echoed in the
// effective conditions, and an unknown name is a 422 naming the field (contract v1.1).
func TestThermoMethodCondition(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	smi := `O=C(OC)[C@@H]1C[C@@H]2C=C[C@H]1C2`
	for _, m := range []string{"table", "forcefield"} {
		r := do(t, ts, "POST", "/v1/screen", `{"smiles":"`+smi+`","conditions":{"thermo_method":"`+m+`"}}`)
		var out struct {
			Conditions struct {
				ThermoMethod string `json:"thermo_method"`
			} `json:"conditions"`
			Thermo struct {
				Estimate struct {
					Method string   `json:"method"`
					FF     *float64 `json:"forcefield_correction_kj_mol"`
				} `json:"estimate"`
			} `json:"thermo"`
		}
		r.json(t, &out)
		if r.status != 200 || out.Conditions.ThermoMethod != m || out.Thermo.Estimate.Method != m || (m == "forcefield") != (out.Thermo.Estimate.FF != nil) {
			t.Errorf("%s: %d %s", m, r.status, r.body)
		}
	}
	r := do(t, ts, "POST", "/v1/screen", `{"smiles":"C1=CCCC1","conditions":{"thermo_method":"quantum"}}`)
	if r.status != 422 || !strings.Contains(string(r.body), `"conditions.thermo_method"`) {
		t.Errorf("unknown method: %d %s", r.status, r.body)
	}
}

// TestUploadUnknownFieldIs422: a misspelled condition in a job upload ("catalist") is a 422
// naming the field, not a job run silently at the default.
func TestUploadUnknownFieldIs422(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	for _, field := range []string{"catalist", "temperature"} {
		r := upload(t, ts, "list.smi", "C1=CC2CCC1C2 a\n", field, "ru-nhc")
		if r.status != 422 || !strings.Contains(string(r.body), `"field":"`+field+`"`) {
			t.Errorf("%s: %d %s", field, r.status, r.body)
		}
	}
	// correctly spelled fields are the job's effective conditions, shown on the job
	up := upload(t, ts, "list.smi", "C1=CC2CCC1C2 a\n", "catalyst", "mo-w-imido", "temperature_c", "40")
	var job struct {
		ID         string         `json:"id"`
		Conditions map[string]any `json:"conditions"`
	}
	if up.status != 202 || json.Unmarshal(up.body, &job) != nil {
		t.Fatalf("upload: %d %s", up.status, up.body)
	}
	r := do(t, ts, "GET", "/v1/jobs/"+job.ID, "")
	job.Conditions = nil
	r.json(t, &job)
	if job.Conditions["catalyst"] != "mo-w-imido" || job.Conditions["temperature_c"] != 40.0 || job.Conditions["thermo_method"] != "auto" {
		t.Errorf("effective conditions of the upload: %d %v", r.status, job.Conditions)
	}
}

// upload posts a multipart job upload: form fields in order (name, value pairs), then the file.
func upload(t *testing.T, ts *httptest.Server, file, content string, fields ...string) resp {
	t.Helper()
	var buf bytes.Buffer
	w := multipart.NewWriter(&buf)
	for i := 0; i+1 < len(fields); i += 2 {
		w.WriteField(fields[i], fields[i+1])
	}
	fw, _ := w.CreateFormFile("file", file)
	io.WriteString(fw, content)
	w.Close()
	req, _ := http.NewRequest("POST", ts.URL+"/v1/jobs", &buf)
	req.Header.Set("Content-Type", w.FormDataContentType())
	res, err := http.DefaultClient.Do(req)
	if err != nil {
		t.Fatal(err)
	}
	defer res.Body.Close()
	b, _ := io.ReadAll(res.Body)
	return resp{status: res.StatusCode, body: b}
}

// TestBatchBodiesDecodedAsStreams: item lists are counted while they are read (the limit+1st
// item stops the read), conditions may follow the items, and unknown or repeated fields are
// refused with the field named.
func TestBatchBodiesDecodedAsStreams(t *testing.T) {
	ts, _ := newTestServer(t, Config{BatchLimit: 3, JobLimit: 4})
	many := func(n int) string { return strings.TrimSuffix(strings.Repeat(`{},`, n), ",") }
	cases := []struct {
		name, path, body string
		status           int
		field            string
	}{
		{"batch over the limit", "/v1/screen/batch", `{"items":[` + many(100000) + `]}`, 422, "items"},
		{"job over the limit", "/v1/jobs", `{"items":[` + many(100000) + `]}`, 422, "items"},
		{"conditions after items", "/v1/screen/batch", `{"items":[{"smiles":"C1=CCCC1"}],"conditions":{"temperature_c":25}}`, 200, ""},
		{"job conditions after items", "/v1/jobs", `{"items":[{"smiles":"C1=CCCC1"}],"conditions":{"temperature_c":25}}`, 202, ""},
		{"bad conditions after items", "/v1/jobs", `{"items":[{"smiles":"C1=CCCC1"}],"conditions":{"temperature_k":-1}}`, 422, "conditions.temperature_k"},
		{"unknown top-level field", "/v1/screen/batch", `{"items":[],"colour":"blue"}`, 400, "colour"},
		{"unknown item field", "/v1/jobs", `{"items":[{"smiles":"C1=CCCC1"},{"smile":"C"}]}`, 400, "items[1].smile"},
		{"items twice", "/v1/screen/batch", `{"items":[{"smiles":"C1=CCCC1"}],"items":[]}`, 400, "items"},
		{"items not an array", "/v1/jobs", `{"items":{}}`, 400, "items"},
		{"no items", "/v1/jobs", `{"items":[]}`, 422, "items"},
		{"not an object", "/v1/screen/batch", `[1,2]`, 400, ""},
		{"truncated", "/v1/jobs", `{"items":[{"smiles":"C1=CCCC1"}`, 400, ""},
		{"trailing data", "/v1/jobs", `{"items":[{"smiles":"C1=CCCC1"}]} x`, 400, ""},
	}
	for _, tc := range cases {
		r := do(t, ts, "POST", tc.path, tc.body)
		if r.status != tc.status {
			t.Errorf("%s: status %d, want %d (%s)", tc.name, r.status, tc.status, r.body)
			continue
		}
		if tc.field != "" {
			var p Problem
			r.json(t, &p)
			if p.Field != tc.field {
				t.Errorf("%s: field %q, want %q (%s)", tc.name, p.Field, tc.field, p.Detail)
			}
		}
	}
}

// TestDepictEndpoint: SVG and molfile drawings, the opening ring olefin marked, cacheable
// (ETag → 304), and problems with the position for a bad SMILES.
func TestDepictEndpoint(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	r := do(t, ts, "GET", "/v1/depict?smiles="+url.QueryEscape("CN1C(=O)[C@H]2[C@@H](C1=O)[C@@H]1C=C[C@H]2C1"), "")
	if r.status != 200 || r.header.Get("Content-Type") != "image/svg+xml" || !bytes.HasPrefix(r.body, []byte("<svg")) ||
		!bytes.Contains(r.body, []byte(`stroke="#f2c94c"`)) || !bytes.Contains(r.body, []byte("<polygon")) {
		t.Fatalf("svg: %d %s %.200s", r.status, r.header.Get("Content-Type"), r.body)
	}
	tag := r.header.Get("ETag")
	if r2 := do(t, ts, "GET", "/v1/depict?smiles="+url.QueryEscape("CN1C(=O)[C@H]2[C@@H](C1=O)[C@@H]1C=C[C@H]2C1"), "", "If-None-Match", tag); tag == "" || r2.status != 304 {
		t.Errorf("conditional request: %d (ETag %q)", r2.status, tag)
	}
	m := do(t, ts, "GET", "/v1/depict?format=molfile&smiles="+url.QueryEscape("N[C@@H](C)C(=O)O"), "")
	wedge := regexp.MustCompile(`(?m)^ *\d+ +\d+ +1 +[16]$`) // a single bond marked wedge (1) or hash (6)
	if m.status != 200 || !bytes.Contains(m.body, []byte("V2000")) || !wedge.Match(m.body) {
		t.Errorf("molfile: %d %s", m.status, m.body)
	}
	for _, tc := range []struct {
		query, field string
		status, pos  int
	}{
		{"smiles=" + url.QueryEscape("C1=CC(C"), "smiles", 422, 5},
		{"", "smiles", 422, -1},
		{"smiles=C1CC1&format=png", "format", 422, -1},
		{"smiles=C1CC1&width=5", "width", 422, -1},
		{"smiles=C1CC1&colour=red", "colour", 400, -1},
	} {
		r := do(t, ts, "GET", "/v1/depict?"+tc.query, "")
		var p Problem
		r.json(t, &p)
		if r.status != tc.status || p.Field != tc.field || (tc.pos >= 0 && (p.Position == nil || *p.Position != tc.pos)) {
			t.Errorf("%s: %d %+v", tc.query, r.status, p)
		}
	}
}

// TestScreenResponseBytes: /v1/screen writes the bytes encoding/json writes for the response
// (the result is encoded by hand for speed; design choice: never a format change), with and
// without the monomer and saved-result members, and the same content type.
func TestScreenResponseBytes(t *testing.T) {
	ts, _ := newTestServer(t, Config{})
	r := do(t, ts, "POST", "/v1/monomers", `{"name":"demo candidate M-7","smiles":"COC(=O)C1CC2C=CC1C2"}`)
	var m struct {
		ID string `json:"id"`
	}
	r.json(t, &m)
	if r.status != 201 || m.ID == "" {
		t.Fatalf("create monomer: %d %s", r.status, r.body)
	}
	for _, body := range []string{
		`{"smiles":"C1=CC2CCC1C2","conditions":{"thermo_method":"table"}}`,
		`{"monomer_id":"` + m.ID + `","conditions":{"thermo_method":"table"}}`,
		`{"monomer_id":"` + m.ID + `","save":true,"conditions":{"thermo_method":"table"}}`,
	} {
		r := do(t, ts, "POST", "/v1/screen", body)
		if r.status != 200 {
			t.Fatalf("%s: %d %s", body, r.status, r.body)
		}
		var got ScreenResponse
		r.json(t, &got)
		want, err := json.Marshal(got)
		if err != nil {
			t.Fatal(err)
		}
		if string(want) != string(r.body) {
			t.Errorf("%s:\n got  %s\n want %s", body, r.body, want)
		}
		if ct := r.header.Get("Content-Type"); ct != "application/json; charset=utf-8" {
			t.Errorf("content type %q", ct)
		}
	}
}

// TestLargeUploadScreenedAsItArrives: an upload's chunks are screened while the rest of the
// file is stored; the job answers queued, finishes with every item, and an upload refused
// after chunks were committed (and perhaps screened) leaves nothing behind.
func TestLargeUploadScreenedAsItArrives(t *testing.T) {
	ts, s := newTestServer(t, Config{JobLimit: 6000})
	var file strings.Builder
	rings := []string{"C1=CCCC1", "C1=CC2CCC1C2", "C1=CCCCCCC1", "C1=CC2OC1CC2"}
	line := func(i int) { fmt.Fprintf(&file, "%s mem-%05d\n", rings[i%len(rings)], i) }
	for i := 0; i < 5000; i++ {
		line(i)
	}
	r := upload(t, ts, "round-7.smi", file.String(), "thermo_method", "table")
	var created JobCreated
	r.json(t, &created)
	if r.status != 202 || created.Status != "queued" || created.Total != 5000 {
		t.Fatalf("upload: %d %s", r.status, r.body)
	}
	deadline := time.Now().Add(time.Minute)
	for {
		var st JobStatus
		do(t, ts, "GET", created.StatusURL, "").json(t, &st)
		if st.Status == "done" {
			if st.Done != 5000 || st.Failed != 0 {
				t.Fatalf("finished with %d done, %d failed", st.Done, st.Failed)
			}
			break
		}
		if time.Now().After(deadline) {
			t.Fatalf("job not done: %+v", st)
		}
		time.Sleep(20 * time.Millisecond)
	}
	csv := do(t, ts, "GET", created.ResultsURL+"?format=csv", "")
	if n := strings.Count(string(csv.body), "\n"); csv.status != 200 || n != 5001 {
		t.Fatalf("CSV: %d, %d lines", csv.status, n)
	}
	// over the limit: the first chunk (4,096 items) is committed before the 6,001st item is read
	for i := 5000; i < 6500; i++ {
		line(i)
	}
	r = upload(t, ts, "round-8.smi", file.String(), "thermo_method", "table")
	if r.status != 422 {
		t.Fatalf("upload over the limit: %d %s", r.status, r.body)
	}
	var jobs, items int
	s.store.DB().QueryRow(`SELECT (SELECT count(*) FROM jobs), (SELECT COALESCE(sum(last_seq - first_seq + 1), 0) FROM job_chunks)`).Scan(&jobs, &items)
	if jobs != 1 || items != 5000 {
		t.Fatalf("after the refused upload: %d jobs, %d items stored, want the first job's 1 and 5000", jobs, items)
	}
}
