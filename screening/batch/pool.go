package batch

import (
	"context"
	"runtime"
	"sync"
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
	var next int
	var mu sync.Mutex
	take := func() (int, bool) {
		mu.Lock()
		defer mu.Unlock()
		if next >= n || ctx.Err() != nil {
			return 0, false
		}
		next++
		return next - 1, true
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
	if next < n {
		return ctx.Err()
	}
	return nil
}
