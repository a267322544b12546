package memo

import (
	"strconv"
	"sync"
	"testing"
)

func TestGetPutDo(t *testing.T) {
	c := New[int](100)
	if _, ok := c.Get("a"); ok {
		t.Fatal("empty cache answered")
	}
	c.Put("a", 1)
	for range 3 { // the first lookups take the lock, later ones read the snapshot
		if v, ok := c.Get("a"); !ok || v != 1 {
			t.Fatalf("Get(a) = %d, %v; want 1, true", v, ok)
		}
		if v, ok := c.GetBytes([]byte("a")); !ok || v != 1 {
			t.Fatalf("GetBytes(a) = %d, %v; want 1, true", v, ok)
		}
	}
	if _, ok := (*c.read.Load())["a"]; !ok {
		t.Error("an entry looked up again and again never reached the snapshot")
	}
	calls := 0
	for range 3 {
		if v := c.Do("b", func() int { calls++; return 2 }); v != 2 {
			t.Fatalf("Do(b) = %d", v)
		}
	}
	if calls != 1 {
		t.Errorf("Do computed a stored value %d times, want once", calls)
	}
}

// TestBound: past max entries the cache starts afresh, so it never holds more than max.
func TestBound(t *testing.T) {
	c := New[int](10)
	for i := range 35 {
		k := strconv.Itoa(i)
		c.Put(k, i)
		c.Get(k)
		if n := len(c.all); n > 10 {
			t.Fatalf("after %d puts the cache holds %d entries, max 10", i+1, n)
		}
		if n := len(*c.read.Load()); n > 10 {
			t.Fatalf("after %d puts the snapshot holds %d entries, max 10", i+1, n)
		}
	}
	if v, ok := c.Get("34"); !ok || v != 34 {
		t.Errorf("latest entry lost: %d, %v", v, ok)
	}
	if _, ok := c.Get("0"); ok {
		t.Error("the first entry survived three restarts")
	}
	c.Put("34", 35) // replacing an entry of a full cache keeps the others
	if _, ok := c.Get("33"); !ok {
		t.Error("replacing an entry dropped another one")
	}
	c.Reset()
	if _, ok := c.Get("34"); ok || len(c.all) != 0 {
		t.Error("Reset kept entries")
	}
}

// TestConcurrent: readers and writers at once (run with -race); every value read is the one
// stored under its key.
func TestConcurrent(t *testing.T) {
	c := New[string](500)
	var wg sync.WaitGroup
	for w := range 8 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range 2000 {
				k := strconv.Itoa((i * (w + 1)) % 700)
				v := c.Do(k, func() string { return "v" + k })
				if v != "v"+k {
					t.Errorf("key %s read %q", k, v)
					return
				}
			}
		}()
	}
	wg.Wait()
}

// BenchmarkGetHit is a lookup of a settled entry by two goroutines per core (go test
// -bench GetHit -cpu 1,2).
func BenchmarkGetHit(b *testing.B) {
	c := New[string](1000)
	keys := make([]string, 100)
	for i := range keys {
		keys[i] = "C1=CC2CC1C(" + strconv.Itoa(i) + ")C2"
		c.Put(keys[i], keys[i])
	}
	for _, k := range keys {
		for range 2 {
			c.Get(k)
		}
	}
	b.ReportAllocs()
	b.RunParallel(func(pb *testing.PB) {
		i := 0
		for pb.Next() {
			if _, ok := c.Get(keys[i%len(keys)]); !ok {
				b.Fatal("miss")
			}
			i++
		}
	})
}
