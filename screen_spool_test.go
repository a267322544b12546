package main

import (
	"context"
	"fmt"
	"os"
	"runtime"
	"strings"
	"sync"
	"testing"
	"unsafe"

	"ringsieve/screening"
	"ringsieve/screening/batch"
)

// TestRowSpool: byte strings added from several goroutines come back by place, whether they
// stayed in memory, went to the file (mapped) or are read from the file without a mapping;
// the file is removed on close.
func TestRowSpool(t *testing.T) {
	for _, mem := range []int{0, -1, 5000} {
		for _, mapped := range []bool{true, false} {
			dir := t.TempDir()
			sp := newRowSpool(spoolConfig{Dir: dir, MemBytes: mem})
			type placed struct {
				off  int64
				want string
			}
			var mu sync.Mutex
			var all []placed
			var wg sync.WaitGroup
			for g := 0; g < 4; g++ {
				wg.Add(1)
				go func() {
					defer wg.Done()
					for i := 0; i < 200; i++ {
						s := fmt.Sprintf("goroutine %d, string %d: %s", g, i, string(make([]byte, i%37)))
						off, err := sp.add([]byte(s))
						if err != nil {
							t.Error(err)
							return
						}
						mu.Lock()
						all = append(all, placed{off, s})
						mu.Unlock()
					}
				}()
			}
			wg.Wait()
			if err := sp.seal(); err != nil {
				t.Fatal(err)
			}
			if _, err := sp.add([]byte("late")); err == nil {
				t.Error("add after seal accepted")
			}
			inFile := sp.f != nil
			if want := mem != 0; inFile != want {
				t.Errorf("memory budget %d: file used %v", mem, inFile)
			}
			if !mapped && sp.mapped != nil {
				sp.mapped.Unmap()
				sp.mapped = nil
			}
			var scratch []byte
			for _, p := range all {
				b, err := sp.bytes(p.off, len(p.want), &scratch)
				if err != nil {
					t.Fatal(err)
				}
				if string(b) != p.want {
					t.Fatalf("memory budget %d, mapped %v: at %d %q, want %q", mem, mapped, p.off, b, p.want)
				}
			}
			if left, _ := os.ReadDir(dir); runtime.GOOS != "windows" && len(left) != 0 {
				t.Errorf("the spool's file has a name while in use (%d entries): a killed process would leave it", len(left))
			}
			if err := sp.close(); err != nil {
				t.Error(err)
			}
			if left, _ := os.ReadDir(dir); len(left) != 0 {
				t.Errorf("%d files left", len(left))
			}
		}
	}
}

// TestRowSpoolFileError: a spool whose directory does not exist fails its first add past the
// memory budget with an error, and the offline screen returns it instead of output.
func TestRowSpoolFileError(t *testing.T) {
	sp := newRowSpool(spoolConfig{Dir: t.TempDir() + "/missing", MemBytes: -1})
	if _, err := sp.add([]byte("x")); err == nil {
		t.Fatal("no error from a spool without a directory")
	}
	if err := sp.seal(); err == nil {
		t.Error("seal after a failed add succeeded")
	}
	sp.close()
	var out strings.Builder
	cond := screening.DefaultConditions()
	cond.ThermoMethod = "table"
	_, err := screenStream(context.Background(), strings.NewReader("C1=CCCC1 cp\nC1=CC2CCC1C2 nb\n"), "", "", cond, "csv",
		batch.ResultFilter{}, &out, nil, spoolConfig{Dir: t.TempDir() + "/missing", MemBytes: -1})
	if err == nil || !strings.Contains(err.Error(), "spooling ranked rows") || out.Len() != 0 {
		t.Errorf("screen with a failing spool: %v, %d bytes written", err, out.Len())
	}
}

// The compact rows stay at 40 bytes (the rank key as two words and a byte, the place, the
// sequence and two flags): the whole of what a screened item costs the process until ranking.
func TestCompactRowSize(t *testing.T) {
	if n := unsafe.Sizeof(compactRow{}); n != 40 {
		t.Errorf("compactRow is %d bytes", n)
	}
}
