package api

import (
	"context"
	"sync"
	"time"

	"ringsieve/screening/batch"
)

// Waiting for a job (GET /v1/jobs/{id}?wait=N): the answer comes as soon as the job is done,
// failed or canceled, or when N seconds have passed, so a pipeline learns of the end at once
// without polling. The job is read again whenever this process stores a chunk's outcomes or
// cancels a job, and every recheckEvery in any case (a job worked by other processes on a
// shared PostgreSQL store, or failed by the runner, sends no event here).
const (
	maxWaitSeconds = 60 // design choice: under the server's write timeout (120 s) with room to spare
	recheckEvery   = 250 * time.Millisecond
)

// jobEvents wakes every waiter at once: each waiter holds the channel of the moment and the
// next event closes it and starts a new one.
type jobEvents struct {
	mu sync.Mutex
	ch chan struct{}
}

// next returns the channel the next event closes.
func (e *jobEvents) next() <-chan struct{} {
	e.mu.Lock()
	defer e.mu.Unlock()
	if e.ch == nil {
		e.ch = make(chan struct{})
	}
	return e.ch
}

// fire wakes the waiters.
func (e *jobEvents) fire() {
	e.mu.Lock()
	defer e.mu.Unlock()
	if e.ch != nil {
		close(e.ch)
		e.ch = nil
	}
}

// Drain answers the requests waiting for a job with the job as it stands, and the ones that
// come later at once: the HTTP server calls it as its shutdown begins (RegisterOnShutdown), so
// a waiting request does not hold the shutdown's grace period.
func (s *Server) Drain() {
	s.drainOnce.Do(func() { close(s.draining) })
}

// finished reports whether a job has reached an end state.
func finished(j batch.Job) bool {
	return j.Status == batch.JobDone || j.Status == batch.JobFailed || j.Status == batch.JobCanceled
}

// awaitJob reads job id until it has finished or wait has passed (or the request ended) and
// returns the last reading.
func (s *Server) awaitJob(ctx context.Context, id string, wait time.Duration) (batch.Job, error) {
	deadline := time.NewTimer(wait)
	defer deadline.Stop()
	tick := time.NewTicker(recheckEvery)
	defer tick.Stop()
	for {
		woken := s.events.next() // taken before the reading, so no event in between is missed
		j, err := s.store.GetJob(ctx, id)
		if err != nil || finished(j) {
			return j, err
		}
		select {
		case <-woken:
		case <-tick.C:
		case <-deadline.C:
			return s.store.GetJob(ctx, id)
		case <-s.draining:
			return s.store.GetJob(ctx, id) // the server is shutting down: answer now
		case <-ctx.Done():
			return j, nil // the client has gone; nothing is written to it
		}
	}
}
