package main

import (
	"bufio"
	"bytes"
	"cmp"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"iter"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"sync"
	"text/tabwriter"

	"github.com/schollz/progressbar/v3"

	"ringsieve/screening"
	"ringsieve/screening/batch"
	"ringsieve/screening/judge"
)

// Streaming offline screening: the input is read as a stream, items are screened on every
// core as they arrive, and each result is kept only as a compact row — its rank key and the
// place of its output, already rendered, in a spool (screen_spool.go) — so the heap grows by
// about 40 bytes per item instead of a whole result, and reading, screening and rendering
// overlap. Ranking: each worker sorts its batches' compact rows, and the sorted batches are
// merged at the end as the ranked output is written (rankedRows), which reads each row's text
// back.

// compactRow is one screened item as the ranking needs it. It holds no pointer, so the
// garbage collector does not scan the rows.
type compactRow struct {
	// the rank key read once as its byte and two words (batch.Key.Words), so that the ranking
	// compares integers (setKey)
	w1, w2 uint64
	first  byte
	failed bool
	keep   bool  // passes the output filter
	n      int32 // the length of the rendered row; 0 for a row the filter drops
	seq    int
	off    int64 // the rendered row without its rank in the spool (format-specific, see renderRow)
}

// setKey stores rank key k in the row.
func (r *compactRow) setKey(k batch.Key) { r.first, r.w1, r.w2 = k.Words() }

// compareRows orders rows by rank: by key (batch.CompareWords), ties in submission order.
func compareRows(a, b *compactRow) int {
	if c := batch.CompareWords(a.first, a.w1, a.w2, b.first, b.w1, b.w2); c != 0 {
		return c
	}
	return cmp.Compare(a.seq, b.seq)
}

// rankedRows yields the rows of runs, each sorted by compareRows, in rank order: a binary heap
// of the runs' first rows, about n log k comparisons for n rows in k runs (a sort of all the rows
// joined needs about n log n), and no merged copy (its 40 bytes a row were new pages to map, on
// one core after the screening).
func rankedRows(runs [][]compactRow) iter.Seq[*compactRow] {
	return func(yield func(*compactRow) bool) {
		h := make([][]compactRow, 0, len(runs))
		for _, r := range runs {
			if len(r) > 0 {
				h = append(h, r)
			}
		}
		less := func(i, j int) bool { return compareRows(&h[i][0], &h[j][0]) < 0 }
		down := func(i int) {
			for {
				m := 2*i + 1
				if m >= len(h) {
					return
				}
				if r := m + 1; r < len(h) && less(r, m) {
					m = r
				}
				if !less(m, i) {
					return
				}
				h[i], h[m] = h[m], h[i]
				i = m
			}
		}
		for i := len(h)/2 - 1; i >= 0; i-- {
			down(i)
		}
		for len(h) > 0 {
			if !yield(&h[0][0]) {
				return
			}
			if h[0] = h[0][1:]; len(h[0]) == 0 {
				h[0] = h[len(h)-1]
				h = h[:len(h)-1]
			}
			down(0)
		}
	}
}

// streamStats is what the summary line reports.
type streamStats struct {
	screened, failed int
	inputErrors      []batch.InputError
	extraColumns     []string
}

// screenStream screens the input read from r and writes the ranked output.
func screenStream(ctx context.Context, r io.Reader, inFormat, idField string, cond screening.Conditions, format string,
	filter batch.ResultFilter, out io.Writer, bar *progressbar.ProgressBar, spool spoolConfig) (st streamStats, err error) {
	const batchSize = 256
	sp := newRowSpool(spool)
	defer func() {
		if cerr := sp.close(); err == nil && cerr != nil {
			err = cerr
		}
	}()
	ctx, cancel := context.WithCancelCause(ctx)
	defer cancel(nil)
	// a batch of items read in a row: the first one's submission sequence and the items
	type run struct {
		first int
		items []batch.InputItem
	}
	work := make(chan run, 2*runtime.NumCPU())
	// each worker's rows, one slice per batch it screened (sized once: no regrowing copies)
	type part struct{ batches [][]compactRow }
	parts := make(chan part, runtime.NumCPU())
	// item lists the workers are done with, filled again by the reader: new ones were an eighth
	// of the bytes a screen allocates, and in a short process every new byte is a new page the
	// system has to map (DEVELOPERS.md: "Fresh memory")
	spare := make(chan []batch.InputItem, 4*runtime.NumCPU())
	var wg sync.WaitGroup
	for w := 0; w < runtime.NumCPU(); w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			var batches [][]compactRow
			var text bytes.Buffer // a batch's rendered rows, one after another, spooled at once
			// storage reused from one item to the next: a result is rendered into a row and
			// dropped before the next item is screened, and the row keeps nothing of it
			var reuse screening.Reuse
			for w := range work {
				items := w.items
				rows := make([]compactRow, 0, len(items))
				text.Reset()
				for k, it := range items {
					if ctx.Err() != nil {
						break
					}
					res, err := batch.ScreenItemWith(ctx, &reuse, it, cond)
					at := text.Len()
					cr := renderRow(&text, format, w.first+k, it, &res, err, filter)
					if cr.keep {
						cr.off, cr.n = int64(at), int32(text.Len()-at)
					}
					rows = append(rows, cr)
				}
				base, err := sp.add(text.Bytes())
				if err != nil {
					cancel(err)
				}
				for k := range rows {
					rows[k].off += base
				}
				// ranked here, by the workers in parallel; the batches are merged at the end
				slices.SortFunc(rows, func(a, b compactRow) int { return compareRows(&a, &b) })
				batches = append(batches, rows)
				if bar != nil {
					bar.Add(len(items))
				}
				// the batch's item list back to the reader (its texts left to the collector)
				clear(items)
				select {
				case spare <- items[:0]:
				default:
				}
			}
			parts <- part{batches}
		}()
	}
	var seq int
	pending := run{items: make([]batch.InputItem, 0, batchSize)}
	var in *batch.Input
	var readErr error
	go func() {
		in, readErr = batch.ScanInput(r, inFormat, idField, 0, func(it batch.InputItem) error {
			if ctx.Err() != nil {
				return ctx.Err()
			}
			pending.items = append(pending.items, it)
			seq++
			if len(pending.items) == batchSize {
				work <- pending
				pending = run{first: seq}
				select {
				case pending.items = <-spare:
				default:
					pending.items = make([]batch.InputItem, 0, batchSize)
				}
			}
			return nil
		})
		if len(pending.items) > 0 {
			work <- pending
		}
		close(work)
		wg.Wait()
		close(parts)
	}()
	var batches [][]compactRow
	for p := range parts {
		batches = append(batches, p.batches...)
	}
	if bar != nil {
		bar.Finish()
	}
	if err := context.Cause(ctx); err != nil {
		return streamStats{}, err // canceled, or the spool failed
	}
	if readErr != nil {
		return streamStats{}, readErr
	}
	if err := sp.seal(); err != nil {
		return streamStats{}, err
	}
	st = streamStats{inputErrors: in.Errors, extraColumns: in.ExtraColumns}
	for _, b := range batches {
		for _, r := range b {
			if r.failed {
				st.failed++
			} else {
				st.screened++
			}
		}
	}
	// each batch was sorted by its worker; they are merged as they are written
	return st, writeCompact(out, format, rankedRows(batches), sp, in.ExtraColumns)
}

// renderRow screens nothing: it renders one outcome for the output format after what buf holds
// (nothing for a row the filter drops: only its rank key and place count).
//
//	csv:   the CSV record with rank 0 (the rank is put in front when writing)
//	jsonl: the JSON object's members after "rank" — {"error"|"extra","id","line" before it and
//	       "result" after it, in the order encoding/json writes a map}; stored as
//	       prefix \x00 suffix
//	table: the tab-separated cells after the rank
//
// res is read only while the row is rendered (no copy of the result is made: a row is its key
// and its text).
func renderRow(buf *bytes.Buffer, format string, seq int, it batch.InputItem, res *screening.Result, err error, f batch.ResultFilter) compactRow {
	line := it.Line
	key := batch.FailedKey()
	if err != nil {
		res = nil
	} else {
		key = batch.KeyOf(res)
	}
	cr := compactRow{seq: seq, failed: err != nil, keep: !f.Active() || (res != nil && f.Keeps(res))}
	cr.setKey(key)
	if !cr.keep {
		return cr
	}
	msg := ""
	if err != nil {
		msg = err.Error()
	}
	switch format {
	case "csv":
		buf.Write(batch.AppendCSVRow(buf.AvailableBuffer(), 0, it.ID, line, res, msg, it.Extra))
	case "jsonl":
		// members before "rank": error?, extra?, id, line; after: result?
		if err != nil {
			buf.WriteString(`"error":`)
			writeJSON(buf, msg)
			buf.WriteByte(',')
		}
		buf.WriteString("\x01") // the extra columns, filled in when their names are known
		for _, v := range it.Extra {
			writeJSON(buf, v)
			buf.WriteByte('\x02')
		}
		buf.WriteString("\x01")
		buf.WriteString(`"id":`)
		writeJSON(buf, it.ID)
		buf.WriteString(`,"line":`)
		buf.WriteString(strconv.Itoa(line))
		buf.WriteByte(0)
		if err == nil {
			buf.WriteString(`,"result":`)
			if b, err := res.AppendJSON(buf.AvailableBuffer()); err == nil {
				buf.Write(b)
			} else {
				buf.WriteString("null")
			}
		}
	default:
		buf.WriteString(tableCells(it.ID, res, err))
	}
	return cr
}

func bufioWriter(w io.Writer) *bufio.Writer { return bufio.NewWriterSize(w, 64<<10) }

// tableCells renders the table columns after the rank (tab-separated).
func tableCells(id string, r *screening.Result, err error) string {
	if err != nil {
		return fmt.Sprintf("%s\terror\t\t\t\t\t%s", id, err)
	}
	dh, tc, x := "", "", ""
	if t := r.Thermo; t != nil {
		dh = fmt.Sprintf("%.1f ± %.1f", t.DHkJmol, t.DHUncertaintyKJmol)
		tc = ceilingText(t)
		x = fmt.Sprintf("%.3f", t.EqConversion)
	}
	return fmt.Sprintf("%s\t%s\t%.3f\t%s\t%s\t%s\t%s", id, r.Verdict, r.Score, dh, tc, x, judge.MainReasons(r))
}

// writeJSON appends v as encoding/json writes it (HTML characters escaped, no newline).
func writeJSON(buf *bytes.Buffer, v any) {
	b, err := json.Marshal(v)
	if err != nil {
		b = []byte("null")
	}
	buf.Write(b)
}

// writeCompact writes the ranked compact rows.
func writeCompact(out io.Writer, format string, rows iter.Seq[*compactRow], sp *rowSpool, extraCols []string) error {
	switch format {
	case "csv":
		bw := bufioWriter(out)
		bw.Write(batch.AppendCSVRecord(nil, batch.CSVHeader(extraCols)))
		var num [20]byte
		if err := eachKeptRow(rows, sp, func(rank int, t []byte) {
			bw.Write(strconv.AppendInt(num[:0], int64(rank), 10)) // no string per row
			bw.Write(t[1:])                                       // the record after its "0"
		}); err != nil {
			return err
		}
		return bw.Flush()
	case "jsonl":
		bw := bufioWriter(out)
		// the extra columns as a map writes them: keys sorted, each key encoded once
		byName := make([]int, len(extraCols))
		keys := make([][]byte, len(extraCols))
		for k, c := range extraCols {
			byName[k] = k
			keys[k], _ = json.Marshal(c)
		}
		sort.Slice(byName, func(i, j int) bool { return extraCols[byName[i]] < extraCols[byName[j]] })
		if err := eachKeptRow(rows, sp, func(rank int, t []byte) {
			pre, post, _ := bytes.Cut(t, []byte{0})
			bw.WriteByte('{')
			a, rest, _ := bytes.Cut(pre, []byte{1})
			vals, b, _ := bytes.Cut(rest, []byte{1})
			bw.Write(a)
			if len(extraCols) > 0 {
				bw.WriteString(`"extra":{`)
				var parts [][]byte
				if len(vals) > 0 {
					parts = bytes.Split(bytes.TrimSuffix(vals, []byte{2}), []byte{2})
				}
				n := 0
				for _, k := range byName {
					if k >= len(parts) {
						continue
					}
					if n > 0 {
						bw.WriteByte(',')
					}
					n++
					bw.Write(keys[k])
					bw.WriteByte(':')
					bw.Write(parts[k])
				}
				bw.WriteString("},")
			}
			bw.Write(b)
			bw.WriteString(`,"rank":`)
			bw.WriteString(strconv.Itoa(rank))
			bw.Write(post)
			bw.WriteString("}\n")
		}); err != nil {
			return err
		}
		return bw.Flush()
	default:
		tw := tabwriter.NewWriter(out, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "RANK\tID\tVERDICT\tSCORE\tΔH_p kJ/mol\tT_c K\tX_eq\tMAIN REASONS")
		if err := eachKeptRow(rows, sp, func(rank int, t []byte) { fmt.Fprintf(tw, "%d\t%s\n", rank, t) }); err != nil {
			return err
		}
		if err := tw.Flush(); err != nil {
			return err
		}
		_, err := fmt.Fprintln(out, "* extrapolated: far outside any measured ceiling temperature (200–500 K)")
		return err
	}
}

// eachKeptRow calls fn with the rank and the rendered text of every ranked row the output
// filter keeps (a dropped row still takes its rank), reading the text back from the spool.
func eachKeptRow(rows iter.Seq[*compactRow], sp *rowSpool, fn func(rank int, text []byte)) error {
	var scratch []byte
	rank := 0
	for r := range rows {
		rank++
		if !r.keep {
			continue
		}
		t, err := sp.bytes(r.off, int(r.n), &scratch)
		if err != nil {
			return err
		}
		fn(rank, t)
	}
	return nil
}
