package data

import (
	"bytes"
	"context"
	"database/sql"
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strings"
	"time"

	"ringsieve/screening"
	"ringsieve/screening/batch"
)

// JobInput is one item as submitted.
type JobInput struct {
	ItemID string
	Line   int // input line (file uploads), 0 for JSON
	Source batch.ItemSource
	Extra  []string
}

// JobMeta is what a job's item producer reports once every item is read.
type JobMeta struct {
	Conditions   screening.ConditionsOut // ignored when the JobSpec gave them
	ExtraColumns []string                // carried-through CSV columns
	Format       string                  // input format (json, smiles, csv, sdf)
}

// JobSpec is what is known of a job before its items are read.
type JobSpec struct {
	// ChunkSize is the number of items per chunk (≤ 0: ChunkSizeFor the job's method).
	ChunkSize int
	// Conditions, when known before the items (a file upload's form fields), let workers start
	// on the first chunks while the rest are still being read: each chunk is committed as soon
	// as it is full. Without them (a JSON batch, whose conditions may follow its items) the
	// job is stored in one transaction.
	Conditions *screening.ConditionsOut
	// OnChunk, when set, is called after each chunk committed before the job is complete (to
	// wake a runner of this process; PostgreSQL also announces it to other processes).
	OnChunk func()
}

// DefaultChunkSize is the number of items a worker claims at a time in the fast tier (design
// choice: about 0.1 s of screening per chunk on one core, so claims, lease renewals and the
// transaction that stores a chunk stay small next to the screening, and a crash redoes at
// most a fraction of a second of work). ForceFieldChunkSize is the chunk of jobs whose
// thermodynamics may use the force field (auto, forcefield): tens of milliseconds to a second
// per item, so small chunks let several workers share even a short list.
const (
	DefaultChunkSize    = 4096
	ForceFieldChunkSize = 32
)

// firstChunkMax bounds an upload's first chunk (design choice: an eighth of the fast tier's
// chunk): workers start on it while the rest of the upload is read and stored, instead of
// waiting for a whole chunk's 4,096 lines to be read and stored.
const firstChunkMax = DefaultChunkSize / 8

// chunkSize is the spec's chunk size, or ChunkSizeFor the job's thermo method.
func (sp JobSpec) chunkSize(method string) int {
	if sp.ChunkSize > 0 {
		return sp.ChunkSize
	}
	return ChunkSizeFor(method)
}

// ChunkSizeFor returns the chunk size for a job's thermo method.
func ChunkSizeFor(method string) int {
	if method == "table" {
		return DefaultChunkSize
	}
	return ForceFieldChunkSize
}

// PurgeAbandonedLoads deletes jobs that have been loading for longer than AbandonedLoadAge
// (their uploading process died) with their items, chunks and results, and returns how many.
func (s *Store) PurgeAbandonedLoads(ctx context.Context) (int64, error) {
	cutoff := time.Now().Add(-AbandonedLoadAge).UTC().Format(time.RFC3339Nano)
	var n int64
	err := s.tx(ctx, func(tx *sql.Tx) error {
		res, err := s.exec(ctx, tx, `DELETE FROM jobs WHERE id IN (SELECT job_id FROM job_loading WHERE started_at < ?)`, cutoff)
		if err != nil {
			return err
		}
		n, err = res.RowsAffected()
		return err
	})
	return n, err
}

// AbandonedLoadAge is how long a job may stay loading before PurgeAbandonedLoads deletes it
// (design choice: far beyond any request's time limit, so only the load of a process that
// died is purged).
const AbandonedLoadAge = time.Hour

// CreateJob stores a job whose items are produced by fill: fill calls add for each item as it
// is read and finally returns the job's extra columns and input format (and its conditions
// when the spec has none). Items are split into chunks of the spec's size that workers claim,
// and never need to be held in memory at once. An idempotency claim in ctx is recorded with
// the job's last write.
//
// With the conditions in the spec, each chunk is committed as it fills and workers screen it
// while later items are still being read; until the last item is stored the job is marked
// loading: GetJob does not find it and it cannot finish. Without them everything is one
// transaction. Either way, when fill or a write fails nothing of the job is left: a partly
// loaded job is deleted with whatever was screened of it (and one whose process died is
// deleted when an SQLite store is opened again, or by PurgeAbandonedLoads).
func (s *Store) CreateJob(ctx context.Context, spec JobSpec, fill func(add func(JobInput) error) (JobMeta, error)) (batch.Job, error) {
	j := batch.Job{ID: newID("job_"), Status: batch.JobQueued}
	ts := now()
	var err error
	if spec.Conditions == nil {
		err = s.tx(ctx, func(tx *sql.Tx) error {
			l := &jobLoad{s: s, ctx: ctx, job: &j, ts: ts, spec: spec}
			l.begin(tx)
			if err := l.insertJob(nil); err != nil {
				return err
			}
			meta, err := fill(l.add)
			if err != nil {
				return err
			}
			return l.finish(meta)
		})
	} else {
		err = s.createJobStreaming(ctx, &j, ts, spec, fill)
	}
	if err != nil {
		return batch.Job{}, fmt.Errorf("create job: %w", err)
	}
	j.CreatedAt = parseTime(ts)
	return j, nil
}

// createJobStreaming is CreateJob with the conditions known: the job row and its loading mark
// first, then one transaction per full chunk, then the rest and the job's completion.
func (s *Store) createJobStreaming(ctx context.Context, j *batch.Job, ts string, spec JobSpec, fill func(add func(JobInput) error) (JobMeta, error)) error {
	l := &jobLoad{s: s, ctx: ctx, job: j, ts: ts, spec: spec}
	if err := s.tx(ctx, func(tx *sql.Tx) error {
		l.begin(tx)
		if err := l.insertJob(spec.Conditions); err != nil {
			return err
		}
		_, err := s.exec(ctx, tx, `INSERT INTO job_loading (job_id, started_at) VALUES (?, ?)`, j.ID, ts)
		return err
	}); err != nil {
		return err
	}
	size := spec.chunkSize(spec.Conditions.ThermoMethod)
	var end func(error) error // the open transaction's
	open := func() error {
		tx, e, err := s.beginTx(ctx)
		if err != nil {
			return err
		}
		l.begin(tx)
		end = e
		return nil
	}
	add := func(it JobInput) error {
		if l.err != nil {
			return l.err
		}
		if err := l.add(it); err != nil { // packed in memory
			return err
		}
		want := size
		if l.chunks == 0 {
			want = min(size, firstChunkMax)
		}
		if l.n-l.chunked < want {
			return nil
		}
		// a transaction (and the store's write slot) only while a full chunk is written: the
		// workers' result writes are not held up while the next lines are read
		if l.err = open(); l.err != nil {
			return l.err
		}
		err := l.writeChunks(want)
		err, end = end(err), nil
		if err != nil {
			l.err = err
			return err
		}
		if spec.OnChunk != nil {
			spec.OnChunk()
		}
		return nil
	}
	meta, err := fill(add)
	if err == nil {
		err = l.err // a failed write that fill did not pass on
	}
	if err == nil {
		err = open()
	}
	if err == nil {
		err, end = end(l.finish(meta)), nil
	}
	if err == nil {
		return nil
	}
	if end != nil {
		end(err) // rolls back
	}
	// what was committed of the job goes, with anything screened of it meanwhile
	cleanup, cancel := context.WithTimeout(context.WithoutCancel(ctx), 10*time.Second)
	defer cancel()
	if derr := s.tx(cleanup, func(tx *sql.Tx) error {
		_, err := s.exec(cleanup, tx, `DELETE FROM jobs WHERE id = ?`, j.ID)
		return err
	}); derr != nil {
		return fmt.Errorf("%w (and removing the partly stored job: %v; it is deleted when the store next purges abandoned loads)", err, derr)
	}
	return err
}

// jobLoad writes one job's rows, in one transaction or in several (one at a time). Items are
// packed per chunk (chunkpack.go) and written with their chunk's row.
type jobLoad struct {
	s    *Store
	ctx  context.Context
	job  *batch.Job
	ts   string
	spec JobSpec
	tx   *sql.Tx
	pack itemPacker // items not yet in a chunk
	// n items read so far, the first chunked of them in chunks numbered 0 … chunks−1
	n, chunked, chunks int
	// err is the first failed write: every later add and finish return it, so a load whose
	// producer ignored an error cannot complete with items missing
	err error
}

// begin continues the load in transaction tx.
func (l *jobLoad) begin(tx *sql.Tx) { l.tx = tx }

// insertJob inserts the job row: with its conditions when known, else completed by finish.
func (l *jobLoad) insertJob(cond *screening.ConditionsOut) error {
	cj := []byte("{}")
	if cond != nil {
		var err error
		if cj, err = json.Marshal(*cond); err != nil {
			return err
		}
	}
	_, err := l.s.exec(l.ctx, l.tx, `INSERT INTO jobs (id, status, conditions, total, source_format, created_at) VALUES (?, 'queued', ?, 0, '', ?)`, l.job.ID, string(cj), l.ts)
	return err
}

func (l *jobLoad) add(it JobInput) error {
	if l.err != nil {
		return l.err
	}
	if l.err = l.pack.add(it); l.err != nil {
		return l.err
	}
	l.n++
	return nil
}

// writeChunks writes chunks of size over every item not yet in one (the last shorter when
// fewer remain), announcing them to other processes at commit.
func (l *jobLoad) writeChunks(size int) error {
	for l.chunked < l.n {
		k := min(size, l.n-l.chunked)
		if _, err := l.s.exec(l.ctx, l.tx, `INSERT INTO job_chunks (job_id, chunk_no, first_seq, last_seq) VALUES (?, ?, ?, ?)`,
			l.job.ID, l.chunks, l.chunked, l.chunked+k-1); err != nil {
			return fmt.Errorf("insert chunk: %w", err)
		}
		if _, err := l.s.exec(l.ctx, l.tx, `INSERT INTO job_chunk_items (job_id, chunk_no, items) VALUES (?, ?, ?)`,
			l.job.ID, l.chunks, l.pack.take(k)); err != nil {
			return fmt.Errorf("insert chunk items: %w", err)
		}
		l.chunks++
		l.chunked += k
	}
	return l.s.notifyJob(l.ctx, l.tx, "new:"+l.job.ID)
}

// finish stores the last items and chunks and completes the job row: its conditions (when not
// given before), total, extra columns and format; it clears the loading mark, finishes the job
// when workers already screened every chunk, and records the idempotency claim.
func (l *jobLoad) finish(meta JobMeta) error {
	if l.err != nil {
		return l.err
	}
	ctx, tx, j := l.ctx, l.tx, l.job
	if meta.ExtraColumns == nil {
		meta.ExtraColumns = []string{}
	}
	if l.spec.Conditions != nil {
		meta.Conditions = *l.spec.Conditions
	}
	ec, err := json.Marshal(meta.ExtraColumns)
	if err != nil {
		return err
	}
	cj, err := json.Marshal(meta.Conditions)
	if err != nil {
		return err
	}
	j.Conditions, j.ExtraColumns, j.SourceFormat, j.Total = meta.Conditions, meta.ExtraColumns, meta.Format, l.n
	// the job row first: on PostgreSQL this waits for a chunk's result write in progress, so the
	// check below sees its chunk done
	if _, err := l.s.exec(ctx, tx, `UPDATE jobs SET conditions = ?, total = ?, extra_columns = ?, source_format = ? WHERE id = ?`,
		string(cj), l.n, string(ec), meta.Format, j.ID); err != nil {
		return err
	}
	if err := l.writeChunks(l.spec.chunkSize(meta.Conditions.ThermoMethod)); err != nil {
		return err
	}
	if l.spec.Conditions != nil { // streamed: the loading mark goes, and the job may be done
		if _, err := l.s.exec(ctx, tx, `DELETE FROM job_loading WHERE job_id = ?`, j.ID); err != nil {
			return err
		}
		if j.Status, err = l.s.finishIfComplete(ctx, tx, j.ID); err != nil {
			return err
		}
	}
	return l.s.claimIdempotency(ctx, tx, j.ID)
}

// encodeSource is json.Marshal of an item source; one holding only a SMILES (almost every
// uploaded item) is written without reflecting over the struct (appendSMILESSource).
func encodeSource(s batch.ItemSource) ([]byte, error) {
	if smilesOnly(s) {
		if n, ok := smilesSourceLen(s.SMILES); ok {
			return appendSMILESSource(make([]byte, 0, n), s.SMILES, n), nil
		}
	}
	return json.Marshal(s)
}

// smilesOnly reports whether a source holds a SMILES and nothing else.
func smilesOnly(s batch.ItemSource) bool {
	return s.SMILES != "" && s.Molfile == "" && s.Descriptors == nil && s.MonomerID == ""
}

// smilesSourceLen returns the length of the stored form of a SMILES-only source, the bytes
// json.Marshal writes: {"smiles":"…"} with " and \ escaped by a backslash. ok is false for a
// SMILES with a byte json.Marshal writes otherwise (a control or non-ASCII byte, or <, > and &,
// which it writes as \u escapes); such a source takes the reflecting path.
func smilesSourceLen(smi string) (n int, ok bool) {
	n = len(`{"smiles":""}`) + len(smi)
	for i := 0; i < len(smi); i++ {
		switch c := smi[i]; {
		case c < 0x20 || c > 0x7e || c == '<' || c == '>' || c == '&':
			return 0, false
		case c == '"' || c == '\\':
			n++
		}
	}
	return n, true
}

// appendSMILESSource appends the stored form of a SMILES-only source whose stored length
// smilesSourceLen gave as n: the SMILES with a backslash before each of its n − 13 − len(smi)
// quotes and backslashes (none: copied as it is).
func appendSMILESSource(b []byte, smi string, n int) []byte {
	b = append(b, `{"smiles":"`...)
	for escapes := n - len(`{"smiles":""}`) - len(smi); escapes > 0; escapes-- {
		i := strings.IndexAny(smi, "\"\\")
		b = append(append(b, smi[:i]...), '\\', smi[i])
		smi = smi[i+1:]
	}
	b = append(b, smi...)
	return append(b, `"}`...)
}

const jobCols = `id, status, conditions, total, done, failed, source_format, extra_columns, error, created_at, started_at, finished_at`

func scanJob(r rowScanner) (batch.Job, error) {
	var j batch.Job
	var cond, ec, created, started, finished string
	if err := r.Scan(&j.ID, &j.Status, &cond, &j.Total, &j.Done, &j.Failed, &j.SourceFormat, &ec, &j.Error, &created, &started, &finished); err != nil {
		return batch.Job{}, err
	}
	c, err := batch.DecodeConditions([]byte(cond))
	if err != nil {
		return batch.Job{}, fmt.Errorf("job %s: %w", j.ID, err)
	}
	j.Conditions = c
	if err := json.Unmarshal([]byte(ec), &j.ExtraColumns); err != nil {
		return batch.Job{}, fmt.Errorf("job %s: extra columns: %w", j.ID, err)
	}
	j.CreatedAt, j.StartedAt, j.FinishedAt = parseTime(created), tsPtr(started), tsPtr(finished)
	return j, nil
}

// GetJob returns a job or ErrNotFound (also while the job is still loading).
func (s *Store) GetJob(ctx context.Context, id string) (batch.Job, error) {
	j, err := scanJob(s.db.QueryRowContext(ctx, s.q(`SELECT `+jobCols+` FROM jobs WHERE id = ? AND NOT EXISTS (SELECT 1 FROM job_loading l WHERE l.job_id = jobs.id)`), id))
	if errors.Is(err, sql.ErrNoRows) {
		return batch.Job{}, fmt.Errorf("job %q: %w", id, ErrNotFound)
	}
	if err != nil {
		return batch.Job{}, fmt.Errorf("get job: %w", err)
	}
	return j, nil
}

// CountActiveJobs returns the number of queued or running jobs.
func (s *Store) CountActiveJobs(ctx context.Context) (int, error) {
	var n int
	err := s.db.QueryRowContext(ctx, `SELECT count(*) FROM jobs WHERE status IN ('running', 'queued')`).Scan(&n)
	return n, err
}

// CancelJob cancels a queued or running job; it returns ErrJobFinished when the job has already
// finished and ErrNotFound when there is none. Results stored so far are kept.
func (s *Store) CancelJob(ctx context.Context, id string) (batch.Job, error) {
	err := s.tx(ctx, func(tx *sql.Tx) error {
		var st string
		if err := s.queryRow(ctx, tx, `SELECT status FROM jobs WHERE id = ?`, id).Scan(&st); err != nil {
			if errors.Is(err, sql.ErrNoRows) {
				return fmt.Errorf("job %q: %w", id, ErrNotFound)
			}
			return err
		}
		if st != batch.JobQueued && st != batch.JobRunning {
			return fmt.Errorf("job %q is %s: %w", id, st, ErrJobFinished)
		}
		if _, err := s.exec(ctx, tx, `UPDATE jobs SET status = 'canceled', finished_at = ? WHERE id = ?`, now(), id); err != nil {
			return err
		}
		return s.notifyJob(ctx, tx, "canceled:"+id)
	})
	if err != nil {
		return batch.Job{}, err
	}
	return s.GetJob(ctx, id)
}

// RankedItem is one item of a job in rank order: its input and, once screened, its result (a
// screen result) or error (an item error).
type RankedItem struct {
	Seq    int
	ItemID string
	Line   int
	Extra  []string
	State  string // batch.ItemPending, ItemDone or ItemFailed
	Result json.RawMessage
	// Summary is the stored CSV fields of a done item (batch.Summary); empty for items stored by
	// earlier versions, whose CSV row is then rendered from Result.
	Summary string
	// Recompute marks a done item whose result is not stored (batch.Recomputable): Result is
	// nil and Source is what to screen again (ResultOf does it).
	Recompute bool
	Source    batch.ItemSource
}

// ResultOf returns the JSON result of a done item, screening it again under the job's
// conditions when it was not stored.
func (it *RankedItem) ResultOf(ctx context.Context, c screening.Conditions) (json.RawMessage, error) {
	if !it.Recompute {
		return it.Result, nil
	}
	b, err := batch.Recompute(ctx, it.Source, c)
	if err != nil {
		return nil, fmt.Errorf("item %d screened again: %w", it.Seq, err)
	}
	it.Result, it.Recompute = b, false
	return b, nil
}

// RankedItems streams a job's items in rank order (the rank key of batch, then submission
// order; failed and still-pending items share the key that puts them last), calling fn for each
// from position offset, at most limit (limit ≤ 0: all). fn's error stops the stream and is
// returned.
//
// The order is taken from the chunks' rank keys alone (KeyLen bytes per item); only the chunks
// holding items of the window asked for are read and unpacked.
func (s *Store) RankedItems(ctx context.Context, jobID string, offset, limit int, fn func(rank int, it RankedItem) error) error {
	order, chunks, err := s.rankOrder(ctx, jobID)
	if err != nil {
		return fmt.Errorf("ranked items: %w", err)
	}
	if offset < 0 {
		offset = 0
	}
	end := len(order)
	if limit > 0 && offset < end {
		end = min(end, offset+limit)
	}
	for rank := offset; rank < end; rank++ {
		e := order[rank]
		ch := &chunks[e.chunk]
		if ch.items == nil {
			if err := s.unpackChunk(ctx, jobID, ch); err != nil {
				return fmt.Errorf("ranked items: %w", err)
			}
		}
		it, err := ch.ranked(int(e.off))
		if err != nil {
			return fmt.Errorf("ranked items: %w", err)
		}
		if err := fn(rank+1, it); err != nil {
			return err
		}
	}
	return nil
}

// rankEntry is one item in the rank order: its chunk (index into the job's chunks) and place
// in it.
type rankEntry struct{ chunk, off int32 }

// rankedChunk is one chunk of a job being read in rank order: its keys, and once needed its
// unpacked items and outcomes.
type rankedChunk struct {
	no, first, n int
	keys         []byte
	items        []packedItem
	outcome      []int32 // per item, its index in outcomes or −1
	outcomes     []packedOutcome
}

// rankOrder reads a job's chunks' rank keys and returns its items in rank order.
func (s *Store) rankOrder(ctx context.Context, jobID string) ([]rankEntry, []rankedChunk, error) {
	rows, err := s.db.QueryContext(ctx, s.q(`SELECT c.chunk_no, c.first_seq, c.last_seq, r.rank_keys FROM job_chunks c
		LEFT JOIN job_chunk_results r ON r.job_id = c.job_id AND r.chunk_no = c.chunk_no
		WHERE c.job_id = ? ORDER BY c.chunk_no`), jobID)
	if err != nil {
		return nil, nil, err
	}
	defer rows.Close()
	var chunks []rankedChunk
	total := 0
	for rows.Next() {
		var c rankedChunk
		var last int
		if err := rows.Scan(&c.no, &c.first, &last, &c.keys); err != nil {
			return nil, nil, err
		}
		c.n = last - c.first + 1
		if c.keys == nil { // no outcomes yet
			c.keys = pendingKeys(c.n)
		}
		if err := checkKeys(c.keys, c.n); err != nil {
			return nil, nil, fmt.Errorf("chunk %d: %w", c.no, err)
		}
		chunks = append(chunks, c)
		total += c.n
	}
	if err := rows.Err(); err != nil {
		return nil, nil, err
	}
	order := make([]rankEntry, 0, total)
	for i := range chunks {
		for k := range chunks[i].n {
			order = append(order, rankEntry{int32(i), int32(k)})
		}
	}
	key := func(e rankEntry) []byte {
		return chunks[e.chunk].keys[int(e.off)*batch.KeyLen : int(e.off+1)*batch.KeyLen]
	}
	// chunks are in sequence order, so a stable sort by key keeps submission order in ties
	slices.SortStableFunc(order, func(a, b rankEntry) int { return bytes.Compare(key(a), key(b)) })
	return order, chunks, nil
}

// unpackChunk reads and unpacks a chunk's items and outcomes.
func (s *Store) unpackChunk(ctx context.Context, jobID string, c *rankedChunk) error {
	var items, results []byte
	if err := s.db.QueryRowContext(ctx, s.q(chunkPayloadQuery), jobID, c.no).Scan(&items, &results); err != nil {
		return fmt.Errorf("chunk %d: %w", c.no, err)
	}
	var err error
	if c.items, err = unpackItems(items, c.n); err != nil {
		return fmt.Errorf("chunk %d items: %w", c.no, err)
	}
	if c.outcomes, err = unpackResults(results, c.n); err != nil {
		return fmt.Errorf("chunk %d results: %w", c.no, err)
	}
	c.outcome = outcomeIndex(c.outcomes, c.n)
	return nil
}

// chunkPayloadQuery reads a chunk's packed items and outcomes (NULL when it has none).
const chunkPayloadQuery = `SELECT i.items, r.results FROM job_chunk_items i
	LEFT JOIN job_chunk_results r ON r.job_id = i.job_id AND r.chunk_no = i.chunk_no
	WHERE i.job_id = ? AND i.chunk_no = ?`

// ranked returns item off of an unpacked chunk.
func (c *rankedChunk) ranked(off int) (RankedItem, error) {
	p := &c.items[off]
	it := RankedItem{Seq: c.first + off, ItemID: string(p.id), Line: p.line, Extra: p.extra, State: batch.ItemPending}
	k := c.outcome[off]
	if k < 0 {
		return it, nil
	}
	o := &c.outcomes[k]
	// an outcome stored after the rank keys were read (a chunk finished while a running job is
	// read) waits for the next read, so each row stands where its state ranks it
	if !o.failed && bytes.Equal(c.keys[off*batch.KeyLen:(off+1)*batch.KeyLen], pendingKey[:]) {
		return it, nil
	}
	it.State, it.Summary = batch.ItemDone, string(o.summary)
	if o.failed {
		it.State = batch.ItemFailed
	}
	if batch.IsRecomputeMark(o.result) {
		var err error
		it.Recompute = true
		if it.Source, err = batch.DecodeItemSource(string(p.source)); err != nil {
			return RankedItem{}, fmt.Errorf("item %d source: %w", it.Seq, err)
		}
		return it, nil
	}
	res, err := batch.DecodeResult(o.result)
	if err != nil {
		return RankedItem{}, fmt.Errorf("item %d: %w", it.Seq, err)
	}
	it.Result = json.RawMessage(res)
	return it, nil
}

// The batch.Store methods: chunk claims under leases.

var _ batch.Store = (*Store)(nil)

func nowMs() int64 { return time.Now().UnixMilli() }

// ClaimChunk implements batch.Store.
func (s *Store) ClaimChunk(ctx context.Context, owner string, lease time.Duration) (batch.Chunk, error) {
	var c batch.Chunk
	err := s.tx(ctx, func(tx *sql.Tx) error {
		t := nowMs()
		var cond string
		err := s.queryRow(ctx, tx, `SELECT c.job_id, c.chunk_no, c.first_seq, c.last_seq, j.conditions FROM job_chunks c JOIN jobs j ON j.id = c.job_id
			WHERE j.status IN ('queued', 'running') AND (c.state = 'pending' OR (c.state = 'claimed' AND c.lease_until_ms < ?))
			ORDER BY j.created_at, j.id, c.chunk_no LIMIT 1`+s.dialect.lockSkip, t).Scan(&c.JobID, &c.No, &c.FirstSeq, &c.LastSeq, &cond)
		if errors.Is(err, sql.ErrNoRows) {
			return ErrNotFound
		}
		if err != nil {
			return err
		}
		if c.Conditions, err = batch.DecodeConditions([]byte(cond)); err != nil {
			return err
		}
		c.Owner = owner
		if _, err := s.exec(ctx, tx, `UPDATE job_chunks SET state = 'claimed', owner = ?, lease_until_ms = ?, attempts = attempts + 1 WHERE job_id = ? AND chunk_no = ?`,
			owner, t+lease.Milliseconds(), c.JobID, c.No); err != nil {
			return err
		}
		_, err = s.exec(ctx, tx, `UPDATE jobs SET status = 'running', started_at = CASE WHEN started_at = '' THEN ? ELSE started_at END WHERE id = ? AND status = 'queued'`, now(), c.JobID)
		return err
	})
	if err != nil {
		return batch.Chunk{}, err
	}
	return c, nil
}

// ChunkItems implements batch.Store: the chunk's items that have no outcome yet (a chunk's
// outcomes are stored with its completion, so a chunk still to work has none — except chunks of
// jobs carried over from versions that stored results item by item).
func (s *Store) ChunkItems(ctx context.Context, c batch.Chunk) ([]batch.Item, error) {
	var items, results []byte
	if err := s.db.QueryRowContext(ctx, s.q(chunkPayloadQuery), c.JobID, c.No).Scan(&items, &results); err != nil {
		return nil, err
	}
	n := c.LastSeq - c.FirstSeq + 1
	packed, err := unpackItems(items, n)
	if err != nil {
		return nil, fmt.Errorf("chunk %d of job %s: %w", c.No, c.JobID, err)
	}
	stored, err := unpackResults(results, n)
	if err != nil {
		return nil, fmt.Errorf("chunk %d of job %s: %w", c.No, c.JobID, err)
	}
	has := outcomeIndex(stored, n)
	out := make([]batch.Item, 0, n-len(stored))
	for i, p := range packed {
		if has[i] >= 0 {
			continue
		}
		src, err := batch.DecodeItemSource(string(p.source))
		if err != nil {
			return nil, fmt.Errorf("item %d source: %w", c.FirstSeq+i, err)
		}
		out = append(out, batch.Item{Seq: c.FirstSeq + i, ItemID: string(p.id), Line: p.line, Source: src, Extra: p.extra})
	}
	return out, nil
}

// RenewLease implements batch.Store.
func (s *Store) RenewLease(ctx context.Context, c batch.Chunk, lease time.Duration) (string, error) {
	var status string
	err := s.tx(ctx, func(tx *sql.Tx) error {
		res, err := s.exec(ctx, tx, `UPDATE job_chunks SET lease_until_ms = ? WHERE job_id = ? AND chunk_no = ? AND state = 'claimed' AND owner = ?`,
			nowMs()+lease.Milliseconds(), c.JobID, c.No, c.Owner)
		if err != nil {
			return err
		}
		if n, err := res.RowsAffected(); err != nil {
			return err
		} else if n == 0 {
			return batch.ErrLeaseLost
		}
		return s.queryRow(ctx, tx, `SELECT status FROM jobs WHERE id = ?`, c.JobID).Scan(&status)
	})
	return status, err
}

// CompleteChunk implements batch.Store: outcomes of items already recorded are skipped, so a
// chunk redone after a lost lease never counts an item twice. The outcomes are packed into the
// chunk's row with its rank keys.
func (s *Store) CompleteChunk(ctx context.Context, c batch.Chunk, outs []batch.Outcome) (string, error) {
	var status string
	err := s.tx(ctx, func(tx *sql.Tx) error {
		r, err := s.exec(ctx, tx, `UPDATE job_chunks SET state = 'done', owner = '', lease_until_ms = 0 WHERE job_id = ? AND chunk_no = ? AND state = 'claimed' AND owner = ?`,
			c.JobID, c.No, c.Owner)
		if err != nil {
			return err
		}
		if n, err := r.RowsAffected(); err != nil {
			return err
		} else if n == 0 {
			return batch.ErrLeaseLost
		}
		n := c.LastSeq - c.FirstSeq + 1
		var prev, keys []byte
		err = s.queryRow(ctx, tx, `SELECT results, rank_keys FROM job_chunk_results WHERE job_id = ? AND chunk_no = ?`, c.JobID, c.No).Scan(&prev, &keys)
		switch {
		case errors.Is(err, sql.ErrNoRows): // the usual case: no outcomes before
			prev, keys = nil, pendingKeys(n)
		case err != nil:
			return err
		}
		if err := checkKeys(keys, n); err != nil {
			return fmt.Errorf("chunk %d of job %s: %w", c.No, c.JobID, err)
		}
		stored, err := unpackResults(prev, n)
		if err != nil {
			return fmt.Errorf("chunk %d of job %s: %w", c.No, c.JobID, err)
		}
		has := outcomeIndex(stored, n)
		res := prev
		if res == nil {
			res = newResults(len(outs) * 200) // a fast-tier outcome packs to about 200 bytes, most of it CSV fields
		}
		done, failed := 0, 0
		for _, o := range outs {
			off := o.Seq - c.FirstSeq
			if off < 0 || off >= n {
				return fmt.Errorf("outcome for item %d outside chunk %d (%d–%d)", o.Seq, c.No, c.FirstSeq, c.LastSeq)
			}
			if has[off] >= 0 {
				continue
			}
			has[off] = 0 // any index ≥ 0 marks the item as having an outcome from now on
			res = appendOutcome(res, off, o)
			copy(keys[off*batch.KeyLen:], o.Key[:])
			done++
			if o.Failed {
				failed++
			}
		}
		if _, err := s.exec(ctx, tx, `INSERT INTO job_chunk_results (job_id, chunk_no, rank_keys, results) VALUES (?, ?, ?, ?)
			ON CONFLICT (job_id, chunk_no) DO UPDATE SET rank_keys = excluded.rank_keys, results = excluded.results`, c.JobID, c.No, keys, res); err != nil {
			return err
		}
		if _, err := s.exec(ctx, tx, `UPDATE jobs SET done = done + ?, failed = failed + ? WHERE id = ?`, done, failed, c.JobID); err != nil {
			return err
		}
		status, err = s.finishIfComplete(ctx, tx, c.JobID)
		return err
	})
	return status, err
}

// finishIfComplete marks a running job done when every chunk is done and it is not loading (a
// job still loading has more chunks to come: its load finishes it), and returns its status.
func (s *Store) finishIfComplete(ctx context.Context, tx *sql.Tx, jobID string) (string, error) {
	if _, err := s.exec(ctx, tx, `UPDATE jobs SET status = 'done', finished_at = ? WHERE id = ? AND status = 'running'
		AND NOT EXISTS (SELECT 1 FROM job_chunks WHERE job_id = ? AND state != 'done')
		AND NOT EXISTS (SELECT 1 FROM job_loading WHERE job_id = ?)`, now(), jobID, jobID, jobID); err != nil {
		return "", err
	}
	var status string
	err := s.queryRow(ctx, tx, `SELECT status FROM jobs WHERE id = ?`, jobID).Scan(&status)
	return status, err
}

// ReleaseChunk implements batch.Store.
func (s *Store) ReleaseChunk(ctx context.Context, c batch.Chunk) error {
	return s.tx(ctx, func(tx *sql.Tx) error {
		_, err := s.exec(ctx, tx, `UPDATE job_chunks SET state = 'pending', owner = '', lease_until_ms = 0 WHERE job_id = ? AND chunk_no = ? AND state = 'claimed' AND owner = ?`,
			c.JobID, c.No, c.Owner)
		return err
	})
}

// FailJob implements batch.Store.
func (s *Store) FailJob(ctx context.Context, jobID, msg string) error {
	return s.tx(ctx, func(tx *sql.Tx) error {
		_, err := s.exec(ctx, tx, `UPDATE jobs SET status = 'failed', error = ?, finished_at = ? WHERE id = ? AND status IN ('queued', 'running')`, msg, now(), jobID)
		return err
	})
}

// OutcomeCount is what a job's packed chunks hold (CountOutcomes).
type OutcomeCount struct {
	Items    int // items over all chunks
	Outcomes int // outcomes stored
	Distinct int // items with at least one outcome
	Open     int // chunks not done
}

// CountOutcomes unpacks every chunk of a job and counts its items and outcomes: a consistency
// check (each item recorded once: Outcomes == Distinct == Items once the job is done) for tests
// and diagnosis.
func (s *Store) CountOutcomes(ctx context.Context, jobID string) (OutcomeCount, error) {
	rows, err := s.db.QueryContext(ctx, s.q(`SELECT c.first_seq, c.last_seq, c.state, r.results FROM job_chunks c
		LEFT JOIN job_chunk_results r ON r.job_id = c.job_id AND r.chunk_no = c.chunk_no WHERE c.job_id = ?`), jobID)
	if err != nil {
		return OutcomeCount{}, err
	}
	defer rows.Close()
	var oc OutcomeCount
	for rows.Next() {
		var first, last int
		var state string
		var res []byte
		if err := rows.Scan(&first, &last, &state, &res); err != nil {
			return OutcomeCount{}, err
		}
		n := last - first + 1
		outs, err := unpackResults(res, n)
		if err != nil {
			return OutcomeCount{}, fmt.Errorf("chunk from item %d: %w", first, err)
		}
		for _, k := range outcomeIndex(outs, n) {
			if k >= 0 {
				oc.Distinct++
			}
		}
		oc.Items += n
		oc.Outcomes += len(outs)
		if state != "done" {
			oc.Open++
		}
	}
	return oc, rows.Err()
}
