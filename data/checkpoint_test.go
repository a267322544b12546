package data

import (
	"context"
	"database/sql"
	"fmt"
	"os"
	"testing"
	"time"

	"ringsieve/screening"
	"ringsieve/screening/batch"
)

// TestLogCopiedBackWhenIdle: a commit leaves its pages in SQLite's log (the backstop is far
// above one job's size), and the store's checkpointer copies them into the database file once
// the store has been idle; every connection carries the backstop.
func TestLogCopiedBackWhenIdle(t *testing.T) {
	s, path := openTemp(t)
	ctx := context.Background()
	size := func() int64 {
		fi, err := os.Stat(path)
		if err != nil {
			t.Fatal(err)
		}
		return fi.Size()
	}
	before := size()
	// about 5 MB of items: past SQLite's own threshold (1,000 pages of log, 4 MB), far below
	// the backstop
	_, err := s.CreateJob(ctx, JobSpec{}, func(add func(JobInput) error) (JobMeta, error) {
		for i := 0; i < 50000; i++ {
			smi := fmt.Sprintf("C1=CC2CC1C(C(=O)OCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCCC%d)C2", i)
			if err := add(JobInput{ItemID: fmt.Sprint("candidate-", i), Line: i + 1, Source: batch.ItemSource{SMILES: smi}}); err != nil {
				return JobMeta{}, err
			}
		}
		return JobMeta{Conditions: batch.EffectiveConditions(screening.DefaultConditions()), Format: "smiles"}, nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if size() > before && s.ckpt.started.Load() == 0 {
		t.Fatalf("database file grew from %d to %d bytes in the upload's own commits: the log was copied back inline", before, size())
	}
	deadline := time.Now().Add(10 * time.Second)
	for s.ckpt.taken.Load() == 0 || size() < before+1<<20 {
		if time.Now().After(deadline) {
			t.Fatalf("database file %d bytes 10 s after the upload (%d before, %d checkpoints): the log was not copied back", size(), before, s.ckpt.taken.Load())
		}
		time.Sleep(20 * time.Millisecond)
	}
	// the next write starts the log again from its beginning and cuts the file back
	newJob(t, s, 10, "C1=CCCC1")
	if fi, err := os.Stat(path + "-wal"); err != nil {
		t.Fatal(err)
	} else if fi.Size() > walKeepBytes {
		t.Errorf("log file %d bytes after a complete checkpoint and a write, want at most %d", fi.Size(), walKeepBytes)
	}
	conns := make([]*sql.Conn, 3) // held at once, so three different connections
	for i := range conns {
		c, err := s.DB().Conn(ctx)
		if err != nil {
			t.Fatal(err)
		}
		conns[i] = c
	}
	for i, c := range conns {
		var n int
		if err := c.QueryRowContext(ctx, "PRAGMA wal_autocheckpoint").Scan(&n); err != nil {
			t.Fatal(err)
		}
		if n != walBackstopPages {
			t.Errorf("connection %d: wal_autocheckpoint %d, want %d", i, n, walBackstopPages)
		}
		c.Close()
	}
}
