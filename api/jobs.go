package api

import (
	"bufio"
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"maps"
	"math"
	"mime"
	"mime/multipart"
	"net/http"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/gin-gonic/gin"

	"ringsieve/data"
	"ringsieve/screening"
	"ringsieve/screening/batch"
	"ringsieve/screening/judge"
)

// JobCreated is the 202 answer to a job submission.
type JobCreated struct {
	ID string `json:"id"`
	// Status is "queued": the job as accepted (the API contract's answer). An upload's first
	// chunks may already be screened by then; GET status_url tells the progress.
	Status      string             `json:"status"`
	Total       int                `json:"total"`
	InputErrors []batch.InputError `json:"input_errors"`
	StatusURL   string             `json:"status_url"`
	ResultsURL  string             `json:"results_url"`
}

func jobCreated(j batch.Job, inErrs []batch.InputError) JobCreated {
	if inErrs == nil {
		inErrs = []batch.InputError{}
	}
	return JobCreated{ID: j.ID, Status: batch.JobQueued, Total: j.Total, InputErrors: inErrs,
		StatusURL: "/v1/jobs/" + j.ID, ResultsURL: "/v1/jobs/" + j.ID + "/results"}
}

// JobStatus is a job with progress.
type JobStatus struct {
	batch.Job
	Percent    float64  `json:"percent"`
	ETASeconds *float64 `json:"eta_seconds"`
	ResultsURL string   `json:"results_url"`
}

func jobStatus(j batch.Job) JobStatus {
	st := JobStatus{Job: j, ResultsURL: "/v1/jobs/" + j.ID + "/results"}
	if j.Total > 0 {
		st.Percent = math.Round(1000*float64(j.Done)/float64(j.Total)) / 10
	} else {
		st.Percent = 100
	}
	if j.Status == batch.JobRunning && j.StartedAt != nil && j.Done > 0 {
		el := time.Since(*j.StartedAt).Seconds()
		eta := math.Round(el/float64(j.Done)*float64(j.Total-j.Done)*10) / 10
		st.ETASeconds = &eta
	}
	if j.Status == batch.JobDone {
		z := 0.0
		st.ETASeconds = &z
	}
	return st
}

// createJob godoc
//
//	@Summary		Submit an asynchronous screening job
//	@Description	Takes the batch JSON body, or multipart/form-data with a file field "file" (SMILES lines, CSV with id,smiles plus any columns, or SDF V2000) and conditions as form fields (temperature_c, monomer_conc_mol_l, bulk, catalyst, thermo_method), plus optional format (smiles, csv, sdf) and id_field (SDF data field or CSV column holding the id). Unreadable rows are reported by line in input_errors. An Idempotency-Key header makes a repeated identical POST return the same job.
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
	body, err := readBody(c)
	if err != nil {
		fail(c, err)
		return
	}
	job, inErrs, err := s.storeJobBody(c, body)
	if err != nil {
		fail(c, err)
		return
	}
	s.notifyRunner()
	c.Header("Location", "/v1/jobs/"+job.ID)
	c.JSON(http.StatusAccepted, jobCreated(job, inErrs))
}

// notifyRunner wakes this server's job runner, when it works jobs.
func (s *Server) notifyRunner() {
	if s.runner != nil {
		s.runner.Notify()
	}
}

// storeJobBody stores a JSON batch or a multipart upload as a job. Items go to the database
// as they are read (a JSON batch in one transaction, an upload a chunk at a time, screened as
// it arrives), so memory does not grow with the item count beyond the raw request body.
func (s *Server) storeJobBody(c *gin.Context, body []byte) (batch.Job, []batch.InputError, error) {
	ctx := c.Request.Context()
	ct, params, _ := mime.ParseMediaType(c.GetHeader("Content-Type"))
	if ct == "multipart/form-data" {
		return s.storeUpload(ctx, body, params["boundary"])
	}
	if err := checkJSONType(c); err != nil {
		return batch.Job{}, nil, err
	}
	// items go to the database as they are decoded (one transaction); the conditions may come
	// before or after them and are checked before the commit
	job, err := s.store.CreateJob(ctx, data.JobSpec{}, func(add func(data.JobInput) error) (data.JobMeta, error) {
		condIn, n, err := decodeBatch(body, s.cfg.JobLimit, func(limit int) string { return fmt.Sprintf("at most %d items per job", limit) },
			func(i int, it BatchItem) error {
				id := it.ID
				if id == "" {
					id = strconv.Itoa(i + 1)
				}
				return add(data.JobInput{ItemID: id, Source: batch.ItemSource{SMILES: it.SMILES, Descriptors: it.Descriptors, MonomerID: it.MonomerID}})
			})
		if err != nil {
			return data.JobMeta{}, err
		}
		cond, err := condIn.toConditions()
		if err != nil {
			return data.JobMeta{}, err
		}
		if n == 0 {
			return data.JobMeta{}, &screening.FieldError{Field: "items", Msg: "give at least one item"}
		}
		return data.JobMeta{Conditions: batch.EffectiveConditions(cond), Format: "json"}, nil
	})
	return job, nil, err
}

// storeUpload streams a multipart upload: form fields (conditions, format, id_field) and one
// file part. Fields may come before or after the file; they are validated before the
// transaction commits.
func (s *Server) storeUpload(ctx context.Context, body []byte, boundary string) (batch.Job, []batch.InputError, error) {
	if boundary == "" {
		return batch.Job{}, nil, badRequest(errMalformed, "", "multipart body without a boundary")
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
			return batch.Job{}, nil, badRequest(errMalformed, "", "malformed multipart body: "+err.Error())
		}
		if part.FormName() == "file" {
			files++
			continue
		}
		if !uploadFields[part.FormName()] {
			return batch.Job{}, nil, &screening.FieldError{Field: part.FormName(),
				Msg: fmt.Sprintf("unknown form field %q (known: file, format, id_field, temperature_c, temperature_k, monomer_conc_mol_l, bulk, catalyst, thermo_method)", part.FormName())}
		}
		b, err := io.ReadAll(io.LimitReader(part, 4096))
		if err != nil {
			return batch.Job{}, nil, badRequest(errMalformed, "", "malformed multipart body: "+err.Error())
		}
		vals[part.FormName()] = strings.TrimSpace(string(b))
	}
	if files != 1 {
		return batch.Job{}, nil, &screening.FieldError{Field: "file", Msg: "upload exactly one file in the field \"file\""}
	}
	cond, err := uploadConditions(vals)
	if err != nil {
		return batch.Job{}, nil, err
	}
	// the conditions are known before the file is read: workers start on its first chunks
	// while the rest is still being stored
	var in *batch.Input
	eff := batch.EffectiveConditions(cond)
	job, err := s.store.CreateJob(ctx, data.JobSpec{Conditions: &eff, OnChunk: s.notifyRunner}, func(add func(data.JobInput) error) (data.JobMeta, error) {
		mr := multipart.NewReader(bytes.NewReader(body), boundary)
		for {
			part, err := mr.NextPart()
			if err != nil {
				return data.JobMeta{}, badRequest(errMalformed, "file", "could not read the uploaded file")
			}
			if part.FormName() != "file" {
				continue
			}
			in, err = batch.ScanInput(part, vals["format"], vals["id_field"], s.cfg.JobLimit, func(it batch.InputItem) error {
				return add(data.JobInput{ItemID: it.ID, Line: it.Line, Extra: it.Extra, Source: batch.ItemSource{SMILES: it.SMILES, Molfile: it.Molfile}})
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
			return data.JobMeta{ExtraColumns: in.ExtraColumns, Format: in.Format}, nil
		}
	})
	if err != nil {
		return batch.Job{}, nil, err
	}
	return job, in.Errors, nil
}

// uploadFields are the form fields a job upload may carry; any other is a 422 naming it (a
// misspelled condition must not run silently at the default).
var uploadFields = map[string]bool{"format": true, "id_field": true, "temperature_c": true, "temperature_k": true,
	"monomer_conc_mol_l": true, "bulk": true, "catalyst": true, "thermo_method": true}

// uploadConditions reads the conditions of a multipart upload from its form fields.
func uploadConditions(vals map[string]string) (screening.Conditions, error) {
	var ci ConditionsIn
	for _, k := range []string{"temperature_c", "temperature_k", "monomer_conc_mol_l"} {
		v := vals[k]
		if v == "" {
			continue
		}
		f, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(f) || math.IsInf(f, 0) {
			return screening.Conditions{}, &screening.FieldError{Field: k, Msg: "must be a finite number"}
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
			return screening.Conditions{}, &screening.FieldError{Field: "bulk", Msg: "must be true or false"}
		}
		ci.Bulk = v
	}
	ci.Catalyst = vals["catalyst"]
	ci.ThermoMethod = vals["thermo_method"]
	return ci.toConditions()
}

// getJob godoc
//
//	@Summary		Job status with counts, percent and ETA
//	@Description	With wait=N (whole seconds, at most 60) the answer is held until the job is done, failed or canceled, or N seconds have passed, whichever comes first: a caller learns of the end at once without polling.
//	@Tags			jobs
//	@Produce		json
//	@Param			id		path		string	true	"job id"
//	@Param			wait	query		int		false	"seconds to wait for the job to finish (0–60)"
//	@Success		200		{object}	JobStatus
//	@Failure		404		{object}	Problem
//	@Failure		422		{object}	Problem	"wait out of range"
//	@Router			/v1/jobs/{id} [get]
func (s *Server) getJob(c *gin.Context) {
	wait, err := intQuery(c, "wait", 0, 0, maxWaitSeconds)
	if err != nil {
		fail(c, err)
		return
	}
	j, err := s.store.GetJob(c.Request.Context(), c.Param("id"))
	if err == nil && wait > 0 && !finished(j) {
		j, err = s.awaitJob(c.Request.Context(), c.Param("id"), time.Duration(wait)*time.Second)
	}
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
	if err != nil {
		fail(c, err)
		return
	}
	s.events.fire() // requests waiting for this job answer now
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

func resultRow(rank int, it data.RankedItem, cols []string) JobResultRow {
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
	case batch.ItemDone:
		row.Result = it.Result
	case batch.ItemFailed:
		row.Error = itemProblem(it.Result)
	}
	return row
}

// appendResultRow appends a row as encoding/json writes it (TestAppendResultRowMatchesMarshal),
// the result and error as they are: both are already compact JSON with HTML characters escaped
// (written by Result.AppendJSON or encoding/json), which encoding/json would scan again to
// compact them — a fifth of a JSON Lines download's CPU.
func appendResultRow(b []byte, row JobResultRow) []byte {
	b = append(b, `{"rank":`...)
	b = strconv.AppendInt(b, int64(row.Rank), 10)
	b = append(b, `,"id":`...)
	b = judge.AppendJSONString(b, row.ID)
	if row.Line != 0 {
		b = append(b, `,"line":`...)
		b = strconv.AppendInt(b, int64(row.Line), 10)
	}
	b = append(b, `,"state":`...)
	b = judge.AppendJSONString(b, row.State)
	if len(row.Extra) > 0 {
		b = append(b, `,"extra":{`...)
		for i, k := range slices.Sorted(maps.Keys(row.Extra)) { // encoding/json sorts map keys
			if i > 0 {
				b = append(b, ',')
			}
			b = judge.AppendJSONString(b, k)
			b = append(b, ':')
			b = judge.AppendJSONString(b, row.Extra[k])
		}
		b = append(b, '}')
	}
	if len(row.Result) > 0 {
		b = append(b, `,"result":`...)
		b = append(b, row.Result...)
	}
	if len(row.Error) > 0 {
		b = append(b, `,"error":`...)
		b = append(b, row.Error...)
	}
	return append(b, '}')
}

// itemProblem renders a stored item error as a problem (the one error table decides).
func itemProblem(stored []byte) json.RawMessage {
	var ie batch.ItemError
	if err := json.Unmarshal(stored, &ie); err != nil {
		ie = batch.ItemError{Code: batch.CodeInternal}
	}
	p := problemFor(&ie)
	b, err := json.Marshal(p)
	if err != nil {
		return nil
	}
	return b
}

// keepsItem applies a filter to a stored job row (only screened rows can pass).
func keepsItem(f batch.ResultFilter, it data.RankedItem) (bool, error) {
	if it.State != batch.ItemDone {
		return false, nil
	}
	var r screening.Result
	if err := json.Unmarshal(it.Result, &r); err != nil {
		return false, fmt.Errorf("stored result of item %d: %w", it.Seq, err)
	}
	return f.Keeps(&r), nil
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
	if err := onlyQuery(c, "format", "limit", "offset", "verdict", "compatible_with", "min_ceiling_c"); err != nil {
		fail(c, err)
		return
	}
	ctx := c.Request.Context()
	j, err := s.store.GetJob(ctx, c.Param("id"))
	if err != nil {
		fail(c, err)
		return
	}
	f, err := batch.ParseFilter(c.Query("verdict"), c.Query("compatible_with"), c.Query("min_ceiling_c"))
	if err != nil {
		fail(c, err)
		return
	}
	cond, err := batch.ConditionsOf(j.Conditions)
	if err != nil {
		fail(c, err)
		return
	}
	// fill gives a done item its result (fast-tier results are screened again, not stored)
	fill := func(it *data.RankedItem) error {
		if it.State != batch.ItemDone {
			return nil
		}
		_, err := it.ResultOf(ctx, cond)
		return err
	}
	// skip reports an item the filter removes
	skip := func(it *data.RankedItem) (bool, error) {
		if !f.Active() {
			return false, nil
		}
		if err := fill(it); err != nil {
			return false, err
		}
		keep, err := keepsItem(f, *it)
		return !keep, err
	}
	switch format := c.DefaultQuery("format", "json"); format {
	case "json":
		limit, offset, err := pageQuery(c, 500, 5000)
		if err != nil {
			fail(c, err)
			return
		}
		out := JobResults{Job: jobStatus(j), Results: []JobResultRow{}, Offset: offset, Limit: limit}
		if !f.Active() {
			err = s.store.RankedItems(ctx, j.ID, offset, limit, func(rank int, it data.RankedItem) error {
				if err := fill(&it); err != nil {
					return err
				}
				out.Results = append(out.Results, resultRow(rank, it, j.ExtraColumns))
				return nil
			})
			if offset+len(out.Results) < j.Total {
				n := offset + len(out.Results)
				out.NextOffset = &n
			}
		} else {
			pos := 0
			err = s.store.RankedItems(ctx, j.ID, 0, 0, func(rank int, it data.RankedItem) error {
				if drop, err := skip(&it); drop || err != nil {
					return err
				}
				pos++
				if pos > offset && len(out.Results) < limit {
					if err := fill(&it); err != nil {
						return err
					}
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
		// items are taken in windows whose results are screened again and encoded in
		// parallel, then written in rank order (each line is what json.Encoder writes). The
		// lines go through one large buffered writer: written one by one (about 4 kB each) they
		// cost a system call or two apiece, a quarter of a 100,000-item download's CPU. Each
		// place in the window keeps its line's buffer for the next window.
		const windowSize = 512
		type ranked struct {
			rank int
			it   data.RankedItem
			keep bool // the filter keeps it (its line is in lines at the same place)
			err  error
		}
		var window []ranked
		lines := make([][]byte, windowSize)
		out := bufio.NewWriterSize(c.Writer, 256<<10)
		flush := func() error {
			batch.Map(ctx, len(window), 0, func(i int) {
				w := &window[i]
				if w.err = fill(&w.it); w.err != nil {
					return
				}
				drop, err := skip(&w.it)
				if drop || err != nil {
					w.err = err
					return
				}
				lines[i] = append(appendResultRow(lines[i][:0], resultRow(w.rank, w.it, j.ExtraColumns)), '\n')
				w.keep = true
			})
			for i, w := range window {
				if w.err != nil {
					return w.err
				}
				if !w.keep {
					continue
				}
				if _, err := out.Write(lines[i]); err != nil {
					return err
				}
			}
			window = window[:0]
			return ctx.Err()
		}
		err := s.store.RankedItems(ctx, j.ID, 0, 0, func(rank int, it data.RankedItem) error {
			window = append(window, ranked{rank: rank, it: it})
			if len(window) == windowSize {
				return flush()
			}
			return nil
		})
		if err == nil {
			err = flush()
		}
		if ferr := out.Flush(); err == nil {
			err = ferr
		}
		s.streamError(c, err)
	case "csv":
		c.Header("Content-Type", "text/csv; charset=utf-8")
		c.Header("Content-Disposition", fmt.Sprintf(`attachment; filename="%s.csv"`, j.ID))
		c.Status(http.StatusOK)
		// rows appended as bytes (byte for byte what encoding/csv writes) into one buffered writer
		w := bufio.NewWriterSize(c.Writer, 64<<10)
		line := batch.AppendCSVRecord(nil, batch.CSVHeader(j.ExtraColumns))
		w.Write(line)
		err := s.store.RankedItems(ctx, j.ID, 0, 0, func(rank int, it data.RankedItem) error {
			if drop, err := skip(&it); drop || err != nil {
				return err
			}
			switch {
			case it.State == batch.ItemDone && it.Summary != "":
				line = batch.AppendCSVRowFromSummary(line[:0], rank, it.ItemID, it.Line, it.Summary, it.Extra)
			case it.State == batch.ItemDone:
				if err := fill(&it); err != nil {
					return err
				}
				var r screening.Result
				if err := json.Unmarshal(it.Result, &r); err != nil {
					return fmt.Errorf("stored result of item %d: %w", it.Seq, err)
				}
				line = batch.AppendCSVRow(line[:0], rank, it.ItemID, it.Line, &r, "", it.Extra)
			case it.State == batch.ItemFailed:
				var ie batch.ItemError
				if err := json.Unmarshal(it.Result, &ie); err != nil {
					return fmt.Errorf("stored error of item %d: %w", it.Seq, err)
				}
				line = batch.AppendCSVRow(line[:0], rank, it.ItemID, it.Line, nil, problemFor(&ie).Detail, it.Extra)
			default:
				line = batch.AppendCSVRow(line[:0], rank, it.ItemID, it.Line, nil, "pending", it.Extra)
			}
			_, err := w.Write(line)
			return err
		})
		if ferr := w.Flush(); err == nil {
			err = ferr
		}
		s.streamError(c, err)
	default:
		fail(c, &screening.FieldError{Field: "format", Msg: "must be json, jsonl or csv"})
	}
}

// streamError logs an error that ended a streamed download after its status line was sent (the
// client sees a truncated body; nothing else can be said).
func (s *Server) streamError(c *gin.Context, err error) {
	if err != nil && c.Request.Context().Err() == nil {
		s.log.Error("results download ended early", "err", err, "request_id", c.GetString(ctxRequestID))
	}
}
