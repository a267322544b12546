package batch

import (
	"context"
	"runtime"
	"sync"
	"sync/atomic"
)

// Map calls fn(i) for i in [0, n) on up to workers goroutines (workers ≤ 0: one per core) and
// returns when every call has returned or ctx has ended; calls not yet started when ctx ends are
// skipped. Each index is handled once; results go wherever fn puts them (by index, so the order
// of the input is kept). It returns ctx.Err() when it stopped early.
func Map(ctx context.Context, n, workers int, fn func(i int)) error {
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	if workers > n {
		workers = n
	}
	if workers <= 1 {
		for i := 0; i < n; i++ {
			if ctx.Err() != nil {
				return ctx.Err()
			}
			fn(i)
		}
		return nil
	}
	// the next index, handed out by an atomic counter: a mutex here was contended by every
	// worker for every item (a job's execution trace showed goroutines waiting on its unlock)
	var next atomic.Int64
	take := func() (int, bool) {
		if ctx.Err() != nil {
			return 0, false
		}
		i := next.Add(1) - 1 // past n once every index is taken: the worker stops
		if i >= int64(n) {
			return 0, false
		}
		return int(i), true
	}
	var wg sync.WaitGroup
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i, ok := take(); ok; i, ok = take() {
				fn(i)
			}
		}()
	}
	wg.Wait()
	if next.Load() < int64(n) { // stopped before every index was taken
		return ctx.Err()
	}
	return nil
}
