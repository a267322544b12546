package molfile

import (
	"bufio"
	"fmt"
	"io"
	"strings"
)

// MaxSDLine is the longest line an SD file may hold (bytes).
const MaxSDLine = 1 << 20

// SDRecord is one record of an SD file: its lines without the closing "$$$$" and the 1-based
// line number of its first line in the file.
type SDRecord struct {
	Lines []string
	Start int
}

// Molfile returns the record's molfile (through "M  END") and true, or false when the record
// has no M  END line.
func (r SDRecord) Molfile() (string, bool) {
	for i, l := range r.Lines {
		if strings.HasPrefix(l, "M  END") {
			return strings.Join(r.Lines[:i+1], "\n"), true
		}
	}
	return "", false
}

// Fields returns the record's data fields ("> <name>" headers and the lines under them).
func (r SDRecord) Fields() map[string]string {
	fields := map[string]string{}
	end := -1
	for i, l := range r.Lines {
		if strings.HasPrefix(l, "M  END") {
			end = i
			break
		}
	}
	if end < 0 {
		return fields
	}
	for i := end + 1; i < len(r.Lines); i++ {
		l := r.Lines[i]
		if !strings.HasPrefix(l, ">") {
			continue
		}
		a, b := strings.Index(l, "<"), strings.LastIndex(l, ">")
		if a < 0 || b <= a {
			continue
		}
		var vals []string
		for i+1 < len(r.Lines) && strings.TrimSpace(r.Lines[i+1]) != "" {
			i++
			vals = append(vals, r.Lines[i])
		}
		fields[l[a+1:b]] = strings.Join(vals, "\n")
	}
	return fields
}

// ReadSD calls fn for each record of the SD file read from r, in order, as it is read; blank
// records (between "$$$$" lines, or at the end) are skipped. It stops at fn's first error and
// returns it, or returns a read error (with its line) such as a line over MaxSDLine.
func ReadSD(r io.Reader, fn func(SDRecord) error) error {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), MaxSDLine)
	line, start := 0, 1
	var rec []string
	flush := func() error {
		defer func() { rec = nil }()
		blank := true
		for _, l := range rec {
			if strings.TrimSpace(l) != "" {
				blank = false
				break
			}
		}
		if blank {
			return nil
		}
		return fn(SDRecord{Lines: rec, Start: start})
	}
	for sc.Scan() {
		line++
		l := strings.TrimRight(sc.Text(), "\r")
		if strings.HasPrefix(l, "$$$$") {
			if err := flush(); err != nil {
				return err
			}
			start = line + 1
			continue
		}
		rec = append(rec, l)
	}
	if err := sc.Err(); err != nil {
		return fmt.Errorf("line %d: %w", line+1, err)
	}
	return flush()
}
