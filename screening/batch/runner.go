package batch

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"log/slog"
	"sync"
	"time"

	"ringsieve/screening"
)

// Runner works jobs: it claims chunks from the store under a lease, screens their items on a
// pool of workers (input order kept), and stores each chunk's outcomes in one transaction. Any
// number of runners (in one or many processes) may share a store: claims are atomic and a
// chunk whose worker died is claimed again when its lease expires.
type Runner struct {
	Store   Store
	Workers int           // screening goroutines (0: one per core)
	Lease   time.Duration // chunk lease (0: DefaultLease)
	Owner   string        // worker name recorded with claims ("" : a random one)
	Log     *slog.Logger
	// Observe, when set, is called once per stored chunk with its outcomes (metrics).
	Observe func(outs []Outcome)
	// OnClaim and OnLeaseLost, when set, are called for every claimed chunk and for every chunk
	// given up because its lease passed to another worker (metrics).
	OnClaim, OnLeaseLost func()
	// Retry is how failed result writes are retried (zero fields: the defaults below).
	Retry RetryPolicy

	wake chan struct{}
}

// DefaultLease is how long a claimed chunk stays with its worker without a renewal (design
// choice: renewed every third of it, so only a dead worker loses a chunk).
const DefaultLease = 60 * time.Second

// Write retries: a chunk whose outcomes cannot be stored is retried with exponential back-off
// from writeBackoff up to writeBackoffMax, at most writeAttempts times; then the job fails
// (design choices: a storage fault of about two minutes is ridden out).
const (
	writeAttempts   = 10
	writeBackoff    = 250 * time.Millisecond
	writeBackoffMax = 30 * time.Second
	idlePoll        = 2 * time.Second
)

// RetryPolicy spaces the attempts to store a chunk's outcomes: waits double from First up to
// Max between at most Attempts attempts; then the job fails.
type RetryPolicy struct {
	Attempts   int
	First, Max time.Duration
}

// Notify wakes the runner when work arrives.
func (r *Runner) Notify() {
	r.init()
	select {
	case r.wake <- struct{}{}:
	default:
	}
}

func (r *Runner) init() {
	if r.wake == nil {
		r.wake = make(chan struct{}, 1)
	}
	if r.Lease <= 0 {
		r.Lease = DefaultLease
	}
	if r.Log == nil {
		r.Log = slog.New(slog.DiscardHandler)
	}
	if r.Retry.Attempts <= 0 {
		r.Retry.Attempts = writeAttempts
	}
	if r.Retry.First <= 0 {
		r.Retry.First = writeBackoff
	}
	if r.Retry.Max <= 0 {
		r.Retry.Max = writeBackoffMax
	}
	if r.Owner == "" {
		var b [6]byte
		rand.Read(b[:])
		r.Owner = "worker-" + hex.EncodeToString(b[:])
	}
}

// Run works jobs until ctx ends. A chunk in progress at shutdown is given back unrecorded and
// redone by the next claim; nothing is recorded twice.
//
// Three stages overlap: a claimer claims the next chunk and reads its items while the current
// one is screened (it holds at most one chunk ready, renewing its lease while it waits), the
// workers screen, and a writer stores the previous chunk's outcomes (at most one write at a
// time). On a machine of two cores a chunk's claim, read and write would otherwise leave a core
// idle for a tenth of the job.
func (r *Runner) Run(ctx context.Context) {
	r.init()
	ready := make(chan claimedChunk)
	claimerDone := make(chan struct{})
	go func() {
		defer close(claimerDone)
		r.claimer(ctx, ready)
	}()
	defer func() { <-claimerDone }()
	writer := make(chan struct{}, 1)
	writer <- struct{}{}
	defer func() { <-writer }() // the last write has finished
	for {
		var cc claimedChunk
		select {
		case <-ctx.Done():
			return
		case cc = <-ready:
		}
		outs, ok := r.screenChunk(ctx, cc)
		if !ok {
			continue
		}
		<-writer
		go func() {
			defer func() { writer <- struct{}{} }()
			r.store(ctx, r.Log.With("job", cc.c.JobID, "chunk", cc.c.No), cc.c, outs)
		}()
	}
}

// claimedChunk is a claimed chunk with its items and conditions, ready to screen.
type claimedChunk struct {
	c     Chunk
	cond  screening.Conditions
	items []Item
}

// claimer claims chunks and reads their items, handing each to ready; it waits for work
// (Notify, or a poll every idlePoll) when there is none. A chunk it holds when ctx ends is
// given back.
func (r *Runner) claimer(ctx context.Context, ready chan<- claimedChunk) {
	tick := time.NewTicker(idlePoll)
	defer tick.Stop()
	for ctx.Err() == nil {
		c, err := r.Store.ClaimChunk(ctx, r.Owner, r.Lease)
		if err != nil {
			if !errors.Is(err, ErrNotFound) && ctx.Err() == nil {
				r.Log.Error("claim a job chunk", "err", err)
			}
			select {
			case <-ctx.Done():
			case <-r.wake:
			case <-tick.C:
			}
			continue
		}
		if r.OnClaim != nil {
			r.OnClaim()
		}
		cc, ok := r.prepare(ctx, c)
		if !ok {
			continue
		}
		r.hand(ctx, cc, ready)
	}
}

// hand gives a prepared chunk to the screening loop, renewing its lease while the loop is busy
// with the one before; the chunk is given back at shutdown and dropped when its lease is lost
// or its job ended meanwhile.
func (r *Runner) hand(ctx context.Context, cc claimedChunk, ready chan<- claimedChunk) {
	renew := time.NewTicker(r.Lease / 3)
	defer renew.Stop()
	for {
		select {
		case ready <- cc:
			return
		case <-ctx.Done():
			r.release(r.Log, cc.c)
			return
		case <-renew.C:
			if !r.renew(ctx, r.Log, cc.c) {
				return
			}
		}
	}
}

// renew extends the lease of a held chunk; false means the chunk is to be given up: its lease
// passed to another worker or its job was canceled or failed.
func (r *Runner) renew(ctx context.Context, log *slog.Logger, c Chunk) bool {
	st, err := r.Store.RenewLease(ctx, c, r.Lease)
	if errors.Is(err, ErrLeaseLost) || st == JobCanceled || st == JobFailed {
		log.Info("chunk given up", "status", st, "err", err)
		if errors.Is(err, ErrLeaseLost) {
			r.leaseLost()
		}
		return false
	}
	return true
}

// prepare reads a claimed chunk's conditions and items; ok is false when the chunk cannot be
// worked (its job failed, or it was given back).
func (r *Runner) prepare(ctx context.Context, c Chunk) (cc claimedChunk, ok bool) {
	log := r.Log.With("job", c.JobID, "chunk", c.No)
	cond, err := ConditionsOf(c.Conditions)
	if err != nil {
		r.fail(ctx, log, c, "stored conditions are invalid: "+err.Error())
		return cc, false
	}
	items, err := r.Store.ChunkItems(ctx, c)
	if err != nil {
		if ctx.Err() == nil {
			log.Error("read chunk items", "err", err)
		}
		r.release(log, c)
		return cc, false
	}
	return claimedChunk{c: c, cond: cond, items: items}, true
}

// screenChunk screens one prepared chunk; ok is false when there is nothing to store (the
// chunk was given back or given up).
func (r *Runner) screenChunk(ctx context.Context, cc claimedChunk) (outs []Outcome, ok bool) {
	c, items, cond := cc.c, cc.items, cc.cond
	log := r.Log.With("job", c.JobID, "chunk", c.No)
	work, stop := context.WithCancel(ctx)
	defer stop()
	renewed := make(chan struct{})
	go func() {
		defer close(renewed)
		t := time.NewTicker(r.Lease / 3)
		defer t.Stop()
		for {
			select {
			case <-work.Done():
				return
			case <-t.C:
				if !r.renew(work, log, c) {
					stop()
					return
				}
			}
		}
	}()
	outs = make([]Outcome, len(items))
	err := Map(work, len(items), r.Workers, func(i int) { outs[i] = r.screenOne(work, items[i], cond) })
	stop()
	<-renewed
	if err != nil {
		if ctx.Err() != nil {
			r.release(log, c) // shutting down: redone by the next claim
		}
		return nil, false
	}
	return outs, true
}

// store writes a chunk's outcomes, retrying storage faults with back-off; after the last
// attempt the job fails.
func (r *Runner) store(ctx context.Context, log *slog.Logger, c Chunk, outs []Outcome) {
	wait := r.Retry.First
	for attempt := 1; ; attempt++ {
		_, err := r.Store.CompleteChunk(ctx, c, outs)
		switch {
		case err == nil:
			if r.Observe != nil {
				r.Observe(outs)
			}
			return
		case errors.Is(err, ErrLeaseLost):
			log.Warn("lease lost before the chunk was stored; another worker redoes it")
			r.leaseLost()
			return
		case ctx.Err() != nil:
			r.release(log, c)
			return
		}
		log.Error("store chunk outcomes", "attempt", attempt, "err", err)
		if attempt == r.Retry.Attempts {
			r.fail(ctx, log, c, fmt.Sprintf("results could not be stored after %d attempts", attempt))
			return
		}
		select {
		case <-ctx.Done():
			r.release(log, c)
			return
		case <-time.After(wait):
		}
		if _, err := r.Store.RenewLease(ctx, c, r.Lease); errors.Is(err, ErrLeaseLost) {
			log.Warn("lease lost while retrying the write; another worker redoes the chunk")
			r.leaseLost()
			return
		}
		wait = min(2*wait, r.Retry.Max)
	}
}

func (r *Runner) leaseLost() {
	if r.OnLeaseLost != nil {
		r.OnLeaseLost()
	}
}

func (r *Runner) release(log *slog.Logger, c Chunk) {
	ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
	defer cancel()
	if err := r.Store.ReleaseChunk(ctx, c); err != nil {
		log.Warn("release chunk (its lease will expire instead)", "err", err)
	}
}

func (r *Runner) fail(ctx context.Context, log *slog.Logger, c Chunk, msg string) {
	if err := r.Store.FailJob(ctx, c.JobID, msg); err != nil {
		log.Error("fail job", "err", err, "reason", msg)
		return
	}
	log.Error("job failed", "reason", msg)
}

// screenOne screens one item; a panic is caught and recorded as an internal item error.
func (r *Runner) screenOne(ctx context.Context, it Item, cond screening.Conditions) (out Outcome) {
	out.Seq = it.Seq
	defer func() {
		if v := recover(); v != nil {
			r.Log.Error("panic screening a job item", "seq", it.Seq, "panic", fmt.Sprint(v))
			out = failed(it.Seq, &ItemError{Code: CodeInternal, Message: "the item could not be screened; the failure has been logged"})
		}
	}()
	src := screening.Source{SMILES: it.Source.SMILES, Molfile: it.Source.Molfile, Descriptors: it.Source.Descriptors}
	if it.Source.MonomerID != "" {
		s, err := r.Store.MonomerSource(ctx, it.Source.MonomerID)
		if err != nil {
			return failed(it.Seq, NewItemError(err))
		}
		src = s
	}
	// storage reused from one item to the next: the outcome keeps nothing of the result (its
	// key, verdict name, summary and encoded bytes are copies or constants)
	u := reuses.Get().(*screening.Reuse)
	defer reuses.Put(u)
	res, err := screening.ScreenWith(ctx, u, src, cond)
	if err != nil {
		return failed(it.Seq, NewItemError(err))
	}
	if Recomputable(it.Source, cond) {
		return Outcome{Seq: it.Seq, Verdict: res.Verdict, Key: KeyOf(&res), Result: RecomputeMark(), Summary: Summary(&res, "")}
	}
	b, err := res.AppendJSON(make([]byte, 0, 4096))
	if err != nil {
		return failed(it.Seq, NewItemError(err))
	}
	return Outcome{Seq: it.Seq, Verdict: res.Verdict, Key: KeyOf(&res), Result: EncodeResult(b), Summary: Summary(&res, "")}
}

// reuses holds the screening storage of the runner's workers (screening.Reuse).
var reuses = sync.Pool{New: func() any { return new(screening.Reuse) }}

func failed(seq int, e *ItemError) Outcome {
	b, _ := json.Marshal(e) // an ItemError always encodes
	return Outcome{Seq: seq, Key: FailedKey(), Result: b, Failed: true}
}
