package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"os"
	"runtime"
	"sync"

	"github.com/edsrzf/mmap-go"
)

// The offline screen's rendered rows wait for ranking in a spool: the first bytes in memory,
// the rest in a temporary file that is mapped into memory for the ranked write. The process's
// heap then holds only the rows' rank keys and places (rowSpoolDefaultMem + about 40 bytes a
// row), whatever the input's size; the operating system's page cache holds the rest and can
// drop it to disk.

// rowSpoolDefaultMem is how many bytes of rendered rows are kept in memory before the spool
// starts its file (a design choice: 10,000 CSV rows or about a thousand JSON Lines rows).
const rowSpoolDefaultMem = 4 << 20

// spoolConfig places the spool: Dir for its file (empty: the system's temporary directory,
// TMPDIR on Unix), MemBytes kept in memory before it (0: rowSpoolDefaultMem; negative: none).
type spoolConfig struct {
	Dir      string
	MemBytes int
}

// rowSpool stores byte strings (add) and gives them back by place (bytes) once sealed. Safe
// for concurrent adds.
type rowSpool struct {
	cfg    spoolConfig
	mu     sync.Mutex
	mem    []byte
	memMax int
	f      *os.File
	w      *bufio.Writer
	size   int64 // bytes in the file
	mapped mmap.MMap
	sealed bool
	// unlinked: the file's name is already removed (it lives on while open)
	unlinked bool
	err      error
}

func newRowSpool(cfg spoolConfig) *rowSpool {
	max := cfg.MemBytes
	switch {
	case max == 0:
		max = rowSpoolDefaultMem
	case max < 0:
		max = 0
	}
	return &rowSpool{cfg: cfg, memMax: max}
}

// add stores b and returns its place: an offset in the memory part, or past it in the file.
// Errors: the temporary file could not be created or written.
func (s *rowSpool) add(b []byte) (int64, error) {
	s.mu.Lock()
	defer s.mu.Unlock()
	switch {
	case s.err != nil:
		return 0, s.err
	case s.sealed:
		return 0, errors.New("row spool: add after seal")
	}
	if s.f == nil && len(s.mem)+len(b) <= s.memMax {
		if s.mem == nil {
			// the whole memory part at once: growing it by appends copied and cleared it
			// about twice over (4 % of a one-core screen of 100,000 lines); pages never
			// written are never touched
			s.mem = make([]byte, 0, s.memMax)
		}
		off := int64(len(s.mem))
		s.mem = append(s.mem, b...)
		return off, nil
	}
	if s.f == nil {
		f, err := os.CreateTemp(s.cfg.Dir, "ringsieve-rows-*")
		if err != nil {
			s.err = fmt.Errorf("spooling ranked rows: %w", err)
			return 0, s.err
		}
		s.f, s.w = f, bufio.NewWriterSize(f, 1<<20)
		// unlinked at once where an open file can be (Unix): nothing is left behind even when
		// the process is killed; elsewhere close removes it
		s.unlinked = runtime.GOOS != "windows" && os.Remove(f.Name()) == nil
	}
	off := int64(len(s.mem)) + s.size
	if _, err := s.w.Write(b); err != nil {
		s.err = fmt.Errorf("spooling ranked rows: %w", err)
		return 0, s.err
	}
	s.size += int64(len(b))
	return off, nil
}

// seal ends the adds and maps the file for reading (where mapping fails, bytes reads the file
// instead).
func (s *rowSpool) seal() error {
	s.mu.Lock()
	defer s.mu.Unlock()
	if s.err != nil {
		return s.err
	}
	s.sealed = true
	if s.f == nil {
		return nil
	}
	if err := s.w.Flush(); err != nil {
		s.err = fmt.Errorf("spooling ranked rows: %w", err)
		return s.err
	}
	if m, err := mmap.Map(s.f, mmap.RDONLY, 0); err == nil {
		s.mapped = m
	}
	return nil
}

// bytes returns the n bytes stored at off. A slice of memory or of the mapping is returned as
// is; without a mapping the bytes are read into scratch (grown as needed), which the caller
// passes back on the next call. Call it after seal.
func (s *rowSpool) bytes(off int64, n int, scratch *[]byte) ([]byte, error) {
	if off < int64(len(s.mem)) {
		return s.mem[off : off+int64(n)], nil
	}
	off -= int64(len(s.mem))
	if s.mapped != nil {
		return s.mapped[off : off+int64(n)], nil
	}
	if cap(*scratch) < n {
		*scratch = make([]byte, n)
	}
	b := (*scratch)[:n]
	if _, err := s.f.ReadAt(b, off); err != nil && !errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("reading spooled rows: %w", err)
	}
	return b, nil
}

// close unmaps, closes and removes the file.
func (s *rowSpool) close() error {
	var errs []error
	if s.mapped != nil {
		errs = append(errs, s.mapped.Unmap())
		s.mapped = nil
	}
	if s.f != nil {
		errs = append(errs, s.f.Close())
		if !s.unlinked {
			errs = append(errs, os.Remove(s.f.Name()))
		}
		s.f = nil
	}
	return errors.Join(errs...)
}
