package api

import (
	"bytes"
	"context"
	"crypto/sha256"
	"encoding/csv"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"mime"
	"mime/multipart"
	"net/http"
	"runtime"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/gin-gonic/gin"

	"ringsieve/data"
	"ringsieve/screening"
)

// jobSource is the stored form of one job item's monomer.
type jobSource struct {
	SMILES      string                 `json:"smiles,omitempty"`
	Molfile     string                 `json:"molfile,omitempty"`
	Descriptors *screening.Descriptors `json:"descriptors,omitempty"`
	MonomerID   string                 `json:"monomer_id,omitempty"`
}

// jobRunner screens queued jobs with a bounded pool of workers; one job at a time, items in
// chunks, each chunk's outcomes written in one transaction.
type jobRunner struct {
	s       *Server
	workers int
	wake    chan struct{}
	wg      sync.WaitGroup
}

const jobChunk = 1024

func newJobRunner(s *Server) *jobRunner {
	n := s.cfg.Workers
	if n <= 0 {
		n = runtime.NumCPU()
	}
	return &jobRunner{s: s, workers: n, wake: make(chan struct{}, 1)}
}

func (r *jobRunner) notify() {
	select {
	case r.wake <- struct{}{}:
	default:
	}
}

func (r *jobRunner) start(ctx context.Context) error {
	r.wg.Add(1)
	go func() {
		defer r.wg.Done()
		r.loop(ctx)
	}()
	return nil
}

func (r *jobRunner) wait() { r.wg.Wait() }

func (r *jobRunner) loop(ctx context.Context) {
	tick := time.NewTicker(2 * time.Second)
	defer tick.Stop()
	for {
		if n, err := r.s.store.CountActiveJobs(ctx); err == nil {
			r.s.metrics.queue.Set(float64(n))
		}
		job, err := r.s.store.NextRunnableJob(ctx)
		if err == nil {
			r.process(ctx, job)
			continue
		}
		if !errors.Is(err, data.ErrNotFound) && ctx.Err() == nil {
			r.s.log.Error("job queue", "err", err)
		}
		select {
		case <-ctx.Done():
			return
		case <-r.wake:
		case <-tick.C:
		}
	}
}

// process screens the pending items of a job. On shutdown it returns with the job still
// running; the next start resumes from the first pending item, and items already recorded are
// never screened or counted twice.
func (r *jobRunner) process(ctx context.Context, job data.Job) {
	log := r.s.log.With("job", job.ID)
	if err := r.s.store.MarkJobRunning(ctx, job.ID); err != nil {
		log.Error("start job", "err", err)
		return
	}
	var ci ConditionsIn
	if err := json.Unmarshal(job.Conditions, &ci); err != nil {
		r.s.store.FinishJob(ctx, job.ID, data.JobFailed, "stored conditions unreadable")
		return
	}
	cond, err := ci.toConditions()
	if err != nil {
		r.s.store.FinishJob(ctx, job.ID, data.JobFailed, err.Error())
		return
	}
	after := -1
	for ctx.Err() == nil {
		items, err := r.s.store.PendingItems(ctx, job.ID, after, jobChunk)
		if err != nil {
			if ctx.Err() == nil {
				log.Error("read items", "err", err)
				r.s.store.FinishJob(context.Background(), job.ID, data.JobFailed, "could not read the job's items")
			}
			return
		}
		if len(items) == 0 {
			break
		}
		outs := r.screenChunk(ctx, items, cond)
		if ctx.Err() != nil {
			return // shutting down: this chunk is not recorded and will be redone
		}
		status, err := r.s.store.RecordOutcomes(context.Background(), job.ID, outs)
		if err != nil {
			log.Error("record outcomes", "err", err)
			return
		}
		r.s.metrics.jobItems.Add(float64(len(outs)))
		if status == data.JobCanceled {
			log.Info("job canceled")
			return
		}
		after = items[len(items)-1].Seq
	}
	if ctx.Err() != nil {
		return
	}
	if err := r.s.store.FinishJob(ctx, job.ID, data.JobDone, ""); err != nil {
		log.Error("finish job", "err", err)
	}
}

func (r *jobRunner) screenChunk(ctx context.Context, items []data.JobItem, cond screening.Conditions) []data.ItemOutcome {
	outs := make([]data.ItemOutcome, len(items))
	var wg sync.WaitGroup
	next := make(chan int)
	for w := 0; w < r.workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				outs[i] = r.screenOne(ctx, i, items[i], cond)
			}
		}()
	}
	for i := range items {
		next <- i
	}
	close(next)
	wg.Wait()
	return outs
}

func (r *jobRunner) screenOne(ctx context.Context, i int, it data.JobItem, cond screening.Conditions) (out data.ItemOutcome) {
	out.Seq = it.Seq
	defer func() {
		if v := recover(); v != nil {
			r.s.log.Error("panic screening job item", "seq", it.Seq, "panic", fmt.Sprint(v))
			p := problemFor(fmt.Errorf("panic"))
			out.Failed, out.Result = true, mustJSON(p)
		}
	}()
	var src jobSource
	var res screening.Result
	err := json.Unmarshal(it.Source, &src)
	if err == nil {
		switch {
		case src.Molfile != "":
			res, err = screening.ScreenMolfile(src.Molfile, cond)
			r.s.count(res, err)
		default:
			res, err = r.s.screenSource(ctx, MonomerSource{SMILES: src.SMILES, Descriptors: src.Descriptors, MonomerID: src.MonomerID}, cond)
		}
	}
	if err != nil {
		p := problemFor(err)
		out.Failed, out.Result = true, mustJSON(p)
		return out
	}
	out.Verdict, out.Score, out.Result = res.Verdict, res.Score, mustJSON(res)
	if res.Thermo != nil {
		out.DG = res.Thermo.DGkJmol
	} else {
		out.DG = 1e9 // no thermodynamics: after every screened item with a ΔG_p at equal score
	}
	return out
}

func mustJSON(v any) []byte {
	b, err := json.Marshal(v)
	if err != nil {
		b, _ = json.Marshal(Problem{Type: problemBase + "internal", Title: "Internal error", Status: 500, Detail: "result could not be encoded"})
	}
	return b
}

// JobCreated is the 202 answer to a job submission.
type JobCreated struct {
	ID          string                 `json:"id"`
	Status      string                 `json:"status"`
	Total       int                    `json:"total"`
	InputErrors []screening.InputError `json:"input_errors"`
	StatusURL   string                 `json:"status_url"`
	ResultsURL  string                 `json:"results_url"`
}

// JobStatus is a job with progress.
type JobStatus struct {
	data.Job
	Percent    float64  `json:"percent"`
	ETASeconds *float64 `json:"eta_seconds"`
	ResultsURL string   `json:"results_url"`
}

func jobStatus(j data.Job) JobStatus {
	st := JobStatus{Job: j, ResultsURL: "/v1/jobs/" + j.ID + "/results"}
	if j.Total > 0 {
		st.Percent = math.Round(1000*float64(j.Done)/float64(j.Total)) / 10
	} else {
		st.Percent = 100
	}
	if j.Status == data.JobRunning && j.StartedAt != nil && j.Done > 0 {
		el := time.Since(*j.StartedAt).Seconds()
		eta := math.Round(el/float64(j.Done)*float64(j.Total-j.Done)*10) / 10
		st.ETASeconds = &eta
	}
	if j.Status == data.JobDone {
		z := 0.0
		st.ETASeconds = &z
	}
	return st
}

// createJob godoc
//
//	@Summary		Submit an asynchronous screening job
//	@Description	Takes the batch JSON body, or multipart/form-data with a file field "file" (SMILES lines, CSV with id,smiles plus any columns, or SDF V2000) and conditions as form fields (temperature_c, monomer_conc_mol_l, bulk, catalyst), plus optional format (smiles, csv, sdf) and id_field (SDF data field or CSV column holding the id). Unreadable rows are reported by line in input_errors. An Idempotency-Key header makes a repeated identical POST return the same job.
//	@Tags			jobs
//	@Accept			json
//	@Accept			mpfd
//	@Produce		json
//	@Param			Idempotency-Key	header		string			false	"client key for safe retries"
//	@Param			request			body		BatchRequest	false	"JSON items and conditions (or a multipart upload)"
//	@Success		202				{object}	JobCreated
//	@Failure		400				{object}	Problem
//	@Failure		413				{object}	Problem
//	@Failure		422				{object}	Problem
//	@Router			/v1/jobs [post]
func (s *Server) createJob(c *gin.Context) {
	body, err := readLimited(c, s.cfg.MaxFileBytes)
	if err != nil {
		fail(c, err)
		return
	}
	idem := c.GetHeader("Idempotency-Key")
	hash := s.requestHash(c.GetHeader("Content-Type"), body)
	if idem != "" {
		s.idemMu.Lock()
		defer s.idemMu.Unlock()
		if s.replayed(c, "POST /v1/jobs", idem, hash) {
			return
		}
	}
	job, inErrs, err := s.storeJobBody(c, body)
	if err != nil {
		fail(c, err)
		return
	}
	s.jobs.notify()
	if inErrs == nil {
		inErrs = []screening.InputError{}
	}
	resp := JobCreated{ID: job.ID, Status: job.Status, Total: job.Total, InputErrors: inErrs,
		StatusURL: "/v1/jobs/" + job.ID, ResultsURL: "/v1/jobs/" + job.ID + "/results"}
	b := mustJSON(resp)
	if idem != "" {
		if err := s.store.SaveIdempotent(c.Request.Context(), "POST /v1/jobs", idem, hash, http.StatusAccepted, b); err != nil {
			s.log.Error("save idempotency record", "err", err)
		}
	}
	c.Header("Location", "/v1/jobs/"+job.ID)
	c.Data(http.StatusAccepted, "application/json", b)
}

// requestHash identifies a submission's content for Idempotency-Key checks: the raw body for
// JSON; for multipart uploads the form fields and file contents, so that the random multipart
// boundary of a retried upload does not make it look different.
func (s *Server) requestHash(contentType string, body []byte) string {
	h := sha256.New()
	ct, params, _ := mime.ParseMediaType(contentType)
	if ct == "multipart/form-data" && params["boundary"] != "" {
		mr := multipart.NewReader(bytes.NewReader(body), params["boundary"])
		var parts []string // one digest per part, sorted: field order does not matter
		for {
			part, err := mr.NextPart()
			if err != nil {
				break
			}
			ph := sha256.New()
			fmt.Fprintf(ph, "%s\x00%s\x00", part.FormName(), part.FileName())
			io.Copy(ph, part)
			parts = append(parts, hex.EncodeToString(ph.Sum(nil)))
		}
		sort.Strings(parts)
		for _, p := range parts {
			h.Write([]byte(p))
		}
		return "multipart:" + hex.EncodeToString(h.Sum(nil))
	}
	h.Write([]byte(ct + "\n"))
	h.Write(body)
	return hex.EncodeToString(h.Sum(nil))
}

func readLimited(c *gin.Context, limit int64) ([]byte, error) {
	if c.Request.ContentLength > limit {
		return nil, badRequest(errTooLarge, "", fmt.Sprintf("request body exceeds %d bytes", limit))
	}
	b, err := io.ReadAll(http.MaxBytesReader(c.Writer, c.Request.Body, limit))
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			return nil, badRequest(errTooLarge, "", fmt.Sprintf("request body exceeds %d bytes", limit))
		}
		return nil, badRequest(errMalformed, "", "could not read the request body")
	}
	return b, nil
}

// storeJobBody stores a JSON batch or a multipart upload as a job. Upload items go to the
// database as they are read (one transaction), so memory does not grow with the item count
// beyond the raw request body.
func (s *Server) storeJobBody(c *gin.Context, body []byte) (data.Job, []screening.InputError, error) {
	ctx := c.Request.Context()
	ct, params, _ := mime.ParseMediaType(c.GetHeader("Content-Type"))
	if ct == "multipart/form-data" {
		return s.storeUpload(ctx, body, params["boundary"])
	}
	var req BatchRequest
	if err := decodeJSONBytes(body, &req); err != nil {
		return data.Job{}, nil, err
	}
	if _, err := req.Conditions.toConditions(); err != nil {
		return data.Job{}, nil, err
	}
	if len(req.Items) == 0 {
		return data.Job{}, nil, &screening.FieldError{Field: "items", Msg: "give at least one item"}
	}
	if len(req.Items) > s.cfg.JobLimit {
		return data.Job{}, nil, &screening.FieldError{Field: "items", Msg: fmt.Sprintf("at most %d items per job", s.cfg.JobLimit)}
	}
	cj := mustJSON(req.Conditions)
	if req.Conditions == nil {
		cj = []byte("{}")
	}
	job, err := s.store.CreateJobStream(ctx, func(add func(data.JobItem) error) (data.JobMeta, error) {
		for i, it := range req.Items {
			id := it.ID
			if id == "" {
				id = strconv.Itoa(i + 1)
			}
			if err := add(data.JobItem{ItemID: id, Source: mustJSON(jobSource{SMILES: it.SMILES, Descriptors: it.Descriptors, MonomerID: it.MonomerID})}); err != nil {
				return data.JobMeta{}, err
			}
		}
		return data.JobMeta{Conditions: cj, Format: "json"}, nil
	})
	return job, nil, err
}

// storeUpload streams a multipart upload: form fields (conditions, format, id_field) and one
// file part. Fields may come before or after the file; they are validated before the
// transaction commits.
func (s *Server) storeUpload(ctx context.Context, body []byte, boundary string) (data.Job, []screening.InputError, error) {
	if boundary == "" {
		return data.Job{}, nil, badRequest(errMalformed, "", "multipart body without a boundary")
	}
	// fields first: a cheap pass over the parts that skips the file's content
	vals := map[string]string{}
	files := 0
	mr := multipart.NewReader(bytes.NewReader(body), boundary)
	for {
		part, err := mr.NextPart()
		if err == io.EOF {
			break
		}
		if err != nil {
			return data.Job{}, nil, badRequest(errMalformed, "", "malformed multipart body: "+err.Error())
		}
		if part.FormName() == "file" {
			files++
			continue
		}
		b, err := io.ReadAll(io.LimitReader(part, 4096))
		if err != nil {
			return data.Job{}, nil, badRequest(errMalformed, "", "malformed multipart body: "+err.Error())
		}
		vals[part.FormName()] = strings.TrimSpace(string(b))
	}
	if files != 1 {
		return data.Job{}, nil, &screening.FieldError{Field: "file", Msg: "upload exactly one file in the field \"file\""}
	}
	ci, err := uploadConditions(vals)
	if err != nil {
		return data.Job{}, nil, err
	}
	var in *screening.Input
	job, err := s.store.CreateJobStream(ctx, func(add func(data.JobItem) error) (data.JobMeta, error) {
		mr := multipart.NewReader(bytes.NewReader(body), boundary)
		for {
			part, err := mr.NextPart()
			if err != nil {
				return data.JobMeta{}, badRequest(errMalformed, "file", "could not read the uploaded file")
			}
			if part.FormName() != "file" {
				continue
			}
			in, err = screening.ScanInput(part, vals["format"], vals["id_field"], s.cfg.JobLimit, func(it screening.InputItem) error {
				return add(data.JobItem{ItemID: it.ID, Line: it.Line, Extra: it.Extra, Source: mustJSON(jobSource{SMILES: it.SMILES, Molfile: it.Molfile})})
			})
			if err != nil {
				var fe *screening.FieldError
				if errors.As(err, &fe) {
					return data.JobMeta{}, err
				}
				return data.JobMeta{}, &screening.FieldError{Field: "file", Msg: err.Error()}
			}
			if in.Count == 0 {
				msg := "the file holds no readable structures"
				if len(in.Errors) > 0 {
					msg += fmt.Sprintf(" (first problem: line %d: %s)", in.Errors[0].Line, in.Errors[0].Msg)
				}
				return data.JobMeta{}, &screening.FieldError{Field: "file", Msg: msg}
			}
			return data.JobMeta{Conditions: mustJSON(ci), ExtraColumns: in.ExtraColumns, Format: in.Format}, nil
		}
	})
	if err != nil {
		return data.Job{}, nil, err
	}
	return job, in.Errors, nil
}

// uploadConditions reads the conditions of a multipart upload from its form fields.
func uploadConditions(vals map[string]string) (ConditionsIn, error) {
	var ci ConditionsIn
	for _, k := range []string{"temperature_c", "temperature_k", "monomer_conc_mol_l"} {
		v := vals[k]
		if v == "" {
			continue
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			return ci, &screening.FieldError{Field: k, Msg: "must be a finite number"}
		}
		switch k {
		case "temperature_c":
			ci.TemperatureC = &f
		case "temperature_k":
			ci.TemperatureK = &f
		default:
			ci.MonomerConcMolL = &f
		}
	}
	if b := vals["bulk"]; b != "" {
		v, err := strconv.ParseBool(b)
		if err != nil {
			return ci, &screening.FieldError{Field: "bulk", Msg: "must be true or false"}
		}
		ci.Bulk = v
	}
	ci.Catalyst = vals["catalyst"]
	_, err := ci.toConditions()
	return ci, err
}

// getJob godoc
//
//	@Summary	Job status with counts, percent and ETA
//	@Tags		jobs
//	@Produce	json
//	@Param		id	path		string	true	"job id"
//	@Success	200	{object}	JobStatus
//	@Failure	404	{object}	Problem
//	@Router		/v1/jobs/{id} [get]
func (s *Server) getJob(c *gin.Context) {
	j, err := s.store.GetJob(c.Request.Context(), c.Param("id"))
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, jobStatus(j))
}

// cancelJob godoc
//
//	@Summary	Cancel a queued or running job (results so far are kept)
//	@Tags		jobs
//	@Produce	json
//	@Param		id	path		string	true	"job id"
//	@Success	200	{object}	JobStatus
//	@Failure	404	{object}	Problem
//	@Failure	409	{object}	Problem	"already finished"
//	@Router		/v1/jobs/{id} [delete]
func (s *Server) cancelJob(c *gin.Context) {
	j, err := s.store.CancelJob(c.Request.Context(), c.Param("id"))
	if errors.Is(err, data.ErrConflict) {
		fail(c, badRequest(errJobFinished, "", err.Error()))
		return
	}
	if err != nil {
		fail(c, err)
		return
	}
	c.JSON(http.StatusOK, jobStatus(j))
}

// JobResultRow is one ranked row of job results.
type JobResultRow struct {
	Rank   int               `json:"rank"`
	ID     string            `json:"id"`
	Line   int               `json:"line,omitempty"`
	State  string            `json:"state"`
	Extra  map[string]string `json:"extra,omitempty"`
	Result json.RawMessage   `json:"result,omitempty" swaggertype:"object"`
	Error  json.RawMessage   `json:"error,omitempty" swaggertype:"object"`
}

// JobResults is one page of ranked job results.
type JobResults struct {
	Job        JobStatus      `json:"job"`
	Results    []JobResultRow `json:"results"`
	Offset     int            `json:"offset"`
	Limit      int            `json:"limit"`
	NextOffset *int           `json:"next_offset"`
}

func resultRow(rank int, it data.JobItem, cols []string) JobResultRow {
	row := JobResultRow{Rank: rank, ID: it.ItemID, Line: it.Line, State: it.State}
	if len(cols) > 0 {
		row.Extra = map[string]string{}
		for i, c := range cols {
			if i < len(it.Extra) {
				row.Extra[c] = it.Extra[i]
			}
		}
	}
	switch it.State {
	case "done":
		row.Result = it.Result
	case "failed":
		row.Error = it.Result
	}
	return row
}

// resultFilterFrom reads the ranking filters of a results request.
func resultFilterFrom(c *gin.Context, verdicts map[string]bool) (screening.ResultFilter, error) {
	f := screening.ResultFilter{Verdicts: verdicts}
	if v := c.Query("compatible_with"); v != "" {
		cat, err := screening.ParseCatalystClass(v)
		if err != nil {
			return f, reField(err, "compatible_with")
		}
		f.Compatible = cat
	}
	if v := c.Query("min_ceiling_c"); v != "" {
		x, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return f, &screening.FieldError{Field: "min_ceiling_c", Msg: "must be a finite number (°C)"}
		}
		k := x + screening.ZeroCelsiusK
		f.MinCeilingK = &k
	}
	return f, nil
}

// keepsItem applies a filter to a stored job row (only screened rows can pass).
func keepsItem(f screening.ResultFilter, it data.JobItem) bool {
	if it.State != "done" {
		return false
	}
	var r screening.Result
	if err := json.Unmarshal(it.Result, &r); err != nil {
		return false
	}
	return f.Keeps(&r)
}

// jobResults godoc
//
//	@Summary		Ranked results of a job
//	@Description	Ranked by score, ties by ΔG_p; failed items (with their problem) and items still pending come after every screened item. format=json is paginated (offset, limit); jsonl and csv stream every submitted item. Optional filters: verdict=v1,v2; compatible_with=CLASS; min_ceiling_c=T.
//	@Tags			jobs
//	@Produce		json
//	@Produce		text/csv
//	@Param			id		path		string	true	"job id"
//	@Param			format	query		string	false	"json (default), jsonl or csv"
//	@Param			offset	query		int		false	"json only"
//	@Param			limit	query		int		false	"json only (1-5000, default 500)"
//	@Param			verdict			query		string	false	"comma-separated verdicts to keep"
//	@Param			compatible_with	query		string	false	"keep monomers a catalyst class tolerates (tolerated or conditional)"
//	@Param			min_ceiling_c	query		number	false	"keep monomers whose ceiling temperature is at least this (°C): still favoured at the top of the working window"
//	@Success		200		{object}	JobResults
//	@Failure		404		{object}	Problem
//	@Failure		422		{object}	Problem
//	@Router			/v1/jobs/{id}/results [get]
func (s *Server) jobResults(c *gin.Context) {
	ctx := c.Request.Context()
	j, err := s.store.GetJob(ctx, c.Param("id"))
	if err != nil {
		fail(c, err)
		return
	}
	keep := map[string]bool{}
	if v := c.Query("verdict"); v != "" {
		for _, x := range strings.Split(v, ",") {
			x = strings.TrimSpace(x)
			if screening.VerdictRank(x) == 0 && x != screening.VerdictPolymerizes {
				fail(c, &screening.FieldError{Field: "verdict", Msg: fmt.Sprintf("unknown verdict %q", x)})
				return
			}
			keep[x] = true
		}
	}
	f, err := resultFilterFrom(c, keep)
	if err != nil {
		fail(c, err)
		return
	}
	filtered := func(it data.JobItem) bool { return f.Active() && !keepsItem(f, it) }
	switch format := c.DefaultQuery("format", "json"); format {
	case "json":
		limit, offset, err := pageQuery(c, 500, 5000)
		if err != nil {
			fail(c, err)
			return
		}
		out := JobResults{Job: jobStatus(j), Results: []JobResultRow{}, Offset: offset, Limit: limit}
		if !f.Active() {
			err = s.store.RankedItems(ctx, j.ID, offset, limit, func(rank int, it data.JobItem) error {
				out.Results = append(out.Results, resultRow(rank, it, j.ExtraColumns))
				return nil
			})
			if offset+len(out.Results) < j.Total {
				n := offset + len(out.Results)
				out.NextOffset = &n
			}
		} else {
			pos := 0
			err = s.store.RankedItems(ctx, j.ID, 0, 0, func(rank int, it data.JobItem) error {
				if filtered(it) {
					return nil
				}
				pos++
				if pos > offset && len(out.Results) < limit {
					out.Results = append(out.Results, resultRow(rank, it, j.ExtraColumns))
				} else if len(out.Results) == limit && out.NextOffset == nil {
					n := offset + limit
					out.NextOffset = &n
				}
				return nil
			})
		}
		if err != nil {
			fail(c, err)
			return
		}
		c.JSON(http.StatusOK, out)
	case "jsonl":
		c.Header("Content-Type", "application/x-ndjson")
		c.Header("Content-Disposition", fmt.Sprintf(`attachment; filename="%s.jsonl"`, j.ID))
		c.Status(http.StatusOK)
		enc := json.NewEncoder(c.Writer)
		s.store.RankedItems(ctx, j.ID, 0, 0, func(rank int, it data.JobItem) error {
			if filtered(it) {
				return nil
			}
			return enc.Encode(resultRow(rank, it, j.ExtraColumns))
		})
	case "csv":
		c.Header("Content-Type", "text/csv; charset=utf-8")
		c.Header("Content-Disposition", fmt.Sprintf(`attachment; filename="%s.csv"`, j.ID))
		c.Status(http.StatusOK)
		w := csv.NewWriter(c.Writer)
		w.Write(screening.CSVHeader(j.ExtraColumns))
		s.store.RankedItems(ctx, j.ID, 0, 0, func(rank int, it data.JobItem) error {
			if filtered(it) {
				return nil
			}
			var row []string
			switch it.State {
			case "done":
				var r screening.Result
				if err := json.Unmarshal(it.Result, &r); err != nil {
					return err
				}
				row = screening.CSVRow(rank, it.ItemID, it.Line, &r, "", it.Extra)
			case "failed":
				var p Problem
				json.Unmarshal(it.Result, &p)
				row = screening.CSVRow(rank, it.ItemID, it.Line, nil, p.Detail, it.Extra)
			default:
				row = screening.CSVRow(rank, it.ItemID, it.Line, nil, "pending", it.Extra)
			}
			w.Write(row)
			return w.Error()
		})
		w.Flush()
	default:
		fail(c, &screening.FieldError{Field: "format", Msg: "must be json, jsonl or csv"})
	}
}
