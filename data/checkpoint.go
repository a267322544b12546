package data

import (
	"context"
	"database/sql"
	"database/sql/driver"
	"strconv"
	"sync"
	"sync/atomic"
	"time"

	"github.com/mattn/go-sqlite3"
)

// SQLite copies the pages a commit appended to the write-ahead log back into the database file
// in a "checkpoint". Left to itself it does so inside the commit that takes the log past 1,000
// pages (4 MB), so every few chunks of a job's outcomes paid for writing the last 4 MB a
// second time (and for two syncs) while workers and an upload waited for the write slot: about a
// tenth of a 100,000-item job's wall time on two cores (job ÷ offline screen, medians of six
// alternated rounds: 1.26 before, 1.12 with checkpoints off the job's path; README, Performance).
//
// Here the log is copied back when the store has been idle, by a goroutine of the store
// (checkpointer); a commit checkpoints by itself only past walBackstopPages, so a long busy
// spell still bounds the log. Nothing about durability changes: with synchronous=FULL a
// committed transaction is on the disk in the log, whether or not it has been copied back.
const (
	// walBackstopPages is the log length (pages of 4 KB: 64 MB) past which a commit checkpoints
	// inline anyway (design choice: about two and a half 100,000-item jobs of outcomes).
	walBackstopPages = 16384
	// walKeepBytes is what the log file is cut back to when SQLite starts it again after a
	// complete checkpoint (design choice: SQLite's own threshold), so an idle store does not
	// keep a job's worth of log on the disk.
	walKeepBytes = 4 << 20
	// checkpointIdle is how long after the last commit the store counts as idle, and
	// checkpointTick how often the checkpointer looks (design choices: a job commits a chunk
	// every few tens of milliseconds, so a running job is never taken for idle).
	checkpointIdle = 250 * time.Millisecond
	checkpointTick = 100 * time.Millisecond
	// checkpointRetry is the pause after a checkpoint that failed (a full disk, say) before the
	// next attempt; the commits themselves report storage faults (faults.go).
	checkpointRetry = 10 * time.Second
)

// sqliteDriverName is the driver the SQLite store opens with: the cgo SQLite driver with a
// connection hook that sets the backstop and the log's kept size on every new connection (both
// settings are per connection).
const sqliteDriverName = "sqlite3-ringsieve"

var registerDriver sync.Once

func registerSQLiteDriver() {
	registerDriver.Do(func() {
		sql.Register(sqliteDriverName, &sqlite3.SQLiteDriver{ConnectHook: func(c *sqlite3.SQLiteConn) error {
			if _, err := c.Exec("PRAGMA wal_autocheckpoint = "+strconv.Itoa(walBackstopPages), []driver.Value{}); err != nil {
				return err
			}
			_, err := c.Exec("PRAGMA journal_size_limit = "+strconv.Itoa(walKeepBytes), []driver.Value{})
			return err
		}})
	})
}

// checkpointer copies the SQLite log back into the database file once no write has been
// committed for checkpointIdle. It runs until stop is closed.
type checkpointer struct {
	db        *sql.DB
	lastWrite atomic.Int64 // unix nanoseconds of the last commit
	pending   atomic.Bool  // a commit since the last checkpoint
	stop      chan struct{}
	done      chan struct{}
	stopOnce  sync.Once
	// started and taken count checkpoints begun and finished (tests read them)
	started, taken atomic.Int64
}

func newCheckpointer(db *sql.DB) *checkpointer {
	c := &checkpointer{db: db, stop: make(chan struct{}), done: make(chan struct{})}
	go c.run()
	return c
}

// committed records a commit: the log has grown and the store is busy.
func (c *checkpointer) committed() {
	c.lastWrite.Store(time.Now().UnixNano())
	c.pending.Store(true)
}

func (c *checkpointer) run() {
	defer close(c.done)
	t := time.NewTicker(checkpointTick)
	defer t.Stop()
	var notBefore time.Time
	for {
		select {
		case <-c.stop:
			return
		case now := <-t.C:
			if !c.pending.Load() || now.Before(notBefore) || now.Sub(time.Unix(0, c.lastWrite.Load())) < checkpointIdle {
				continue
			}
			c.pending.Store(false) // a commit from here on sets it again
			if err := c.checkpoint(); err != nil {
				c.pending.Store(true)
				notBefore = now.Add(checkpointRetry)
			}
		}
	}
}

// checkpoint copies what it can of the log without waiting for readers or writers (PASSIVE:
// a page a reader still needs is left for the next one).
func (c *checkpointer) checkpoint() error {
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	var busy, logPages, copied int
	c.started.Add(1)
	if err := c.db.QueryRowContext(ctx, "PRAGMA wal_checkpoint(PASSIVE)").Scan(&busy, &logPages, &copied); err != nil {
		return err
	}
	c.taken.Add(1)
	if copied < logPages {
		c.pending.Store(true) // a reader held part of it back: try again when idle
	}
	return nil
}

// close stops the checkpointer; the database's last connection checkpoints as it closes.
func (c *checkpointer) close() {
	c.stopOnce.Do(func() { close(c.stop) })
	<-c.done
}
