package main

import (
	"bytes"
	"cmp"
	"context"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strings"
	"testing"
	"text/tabwriter"

	"ringsieve/screening"
	"ringsieve/screening/batch"
)

// TestStreamedOutputUnchanged: the streamed offline screen writes byte for byte what the
// earlier whole-list writer (kept here as the reference) wrote, for every format, with extra
// CSV columns, unreadable rows and an output filter.
func TestStreamedOutputUnchanged(t *testing.T) {
	b, err := os.ReadFile("testdata/demo/membrane_candidates.csv")
	if err != nil {
		t.Fatal(err)
	}
	input := string(b) + "MEM-98,C1=CC(C,broken\nMEM-99,C1CC1,cyclopropane\n"
	cond := screening.DefaultConditions()
	cond.ThermoMethod = "table" // the rendering is what is compared; the fast tier keeps the test quick
	keepAll := batch.ResultFilter{}
	someVerdicts, err := batch.ParseFilter("polymerizes,equilibrium_limited", "", "")
	if err != nil {
		t.Fatal(err)
	}
	for _, format := range []string{"csv", "jsonl", "table"} {
		for _, f := range []batch.ResultFilter{keepAll, someVerdicts} {
			in, err := batch.ReadInput(strings.NewReader(input), "", "", 0)
			if err != nil {
				t.Fatal(err)
			}
			rows := make([]batch.Row, len(in.Items))
			for i, it := range in.Items {
				r, err := batch.ScreenItemContext(context.Background(), it, cond)
				rows[i] = batch.NewRow(i, r, err)
			}
			batch.Rank(rows)
			var want, got bytes.Buffer
			if err := writeRanked(&want, format, in.Items, rows, in.ExtraColumns, f); err != nil {
				t.Fatal(err)
			}
			// rows in memory, in the spool's file (mapped), and split between the two
			for _, sc := range []spoolConfig{{}, {MemBytes: -1, Dir: t.TempDir()}, {MemBytes: 700, Dir: t.TempDir()}} {
				got.Reset()
				if _, err := screenStream(context.Background(), strings.NewReader(input), "", "", cond, format, f, &got, nil, sc); err != nil {
					t.Fatal(err)
				}
				if got.String() != want.String() {
					t.Errorf("%s (filter %v, spool %+v): streamed output differs\n got: %.600s\nwant: %.600s", format, f.Active(), sc, got.String(), want.String())
				}
				if sc.Dir != "" {
					if left, _ := os.ReadDir(sc.Dir); len(left) != 0 {
						t.Errorf("the spool left %d files in its directory", len(left))
					}
				}
			}
		}
	}
}

// writeRanked is the earlier writer of a whole ranked list (the reference for the streamed one).
func writeRanked(out io.Writer, format string, items []batch.InputItem, rs []batch.Row, extraCols []string, f batch.ResultFilter) error {
	skip := func(r batch.Row) bool { return f.Active() && (r.Result == nil || !f.Keeps(r.Result)) }
	switch format {
	case "csv":
		w := csv.NewWriter(out)
		w.Write(batch.CSVHeader(extraCols))
		for i, r := range rs {
			if skip(r) {
				continue
			}
			msg := ""
			if r.Err != nil {
				msg = r.Err.Error()
			}
			it := items[r.Seq]
			// the row's fields read back from the appended record and written again by
			// encoding/csv (the fields themselves are checked in screening/batch)
			fields, err := csv.NewReader(bytes.NewReader(batch.AppendCSVRow(nil, i+1, it.ID, it.Line, r.Result, msg, it.Extra))).Read()
			if err != nil {
				return err
			}
			w.Write(fields)
		}
		w.Flush()
		return w.Error()
	case "jsonl":
		enc := json.NewEncoder(out)
		for i, r := range rs {
			if skip(r) {
				continue
			}
			it := items[r.Seq]
			row := map[string]any{"rank": i + 1, "id": it.ID, "line": it.Line}
			if r.Err != nil {
				row["error"] = r.Err.Error()
			} else {
				row["result"] = r.Result
			}
			if len(extraCols) > 0 {
				ex := map[string]string{}
				for k, c := range extraCols {
					if k < len(it.Extra) {
						ex[c] = it.Extra[k]
					}
				}
				row["extra"] = ex
			}
			if err := enc.Encode(row); err != nil {
				return err
			}
		}
		return nil
	default:
		tw := tabwriter.NewWriter(out, 2, 4, 2, ' ', 0)
		fmt.Fprintln(tw, "RANK\tID\tVERDICT\tSCORE\tΔH_p kJ/mol\tT_c K\tX_eq\tMAIN REASONS")
		for i, r := range rs {
			if skip(r) {
				continue
			}
			fmt.Fprintf(tw, "%d\t%s\n", i+1, tableCells(items[r.Seq].ID, r.Result, r.Err))
		}
		if err := tw.Flush(); err != nil {
			return err
		}
		_, err := fmt.Fprintln(out, "* extrapolated: far outside any measured ceiling temperature (200–500 K)")
		return err
	}
}

// TestSortKeyOrdersAsCompare: the words a row's key is read into (setKey) order rows as
// batch.Compare orders the keys (and so as bytes.Compare orders their bytes), on scores and
// ΔG_p values around every boundary and on the failed key.
func TestSortKeyOrdersAsCompare(t *testing.T) {
	var keys []batch.Key
	for _, score := range []float64{0, 0.02, 0.35, 0.5, 0.7, 0.9999, 1} {
		for _, dg := range []float64{math.Inf(-1), -50, -1e-9, 0, math.Copysign(0, -1), 1e-9, 12.5, math.Inf(1)} {
			keys = append(keys, batch.ScoreKey(score, dg))
		}
	}
	keys = append(keys, batch.FailedKey())
	sign := func(c int) int { return cmp.Compare(c, 0) }
	for _, a := range keys {
		for _, b := range keys {
			var x, y compactRow // the same sequence number: only the keys decide
			x.setKey(a)
			y.setKey(b)
			got := compareRows(&x, &y)
			if want := batch.Compare(a, b); sign(got) != want || bytes.Compare(a[:], b[:]) != want {
				t.Fatalf("%x vs %x: sort key gives %d, Compare %d, bytes %d", a, b, got, want, bytes.Compare(a[:], b[:]))
			}
		}
	}
}

// TestMergeRunsSorts: merging runs (rankedRows) that are each in rank order gives the order a sort of all
// the rows gives, for runs of every length including empty ones and keys with many ties.
func TestMergeRunsSorts(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for trial := 0; trial < 200; trial++ {
		var runs [][]compactRow
		var all []compactRow
		seq := 0
		for k := rng.IntN(12); k >= 0; k-- {
			run := make([]compactRow, rng.IntN(40))
			for i := range run {
				run[i] = compactRow{first: byte(rng.IntN(2)), w1: uint64(rng.IntN(4)), w2: uint64(rng.IntN(3)), seq: seq}
				seq++
			}
			slices.SortFunc(run, func(a, b compactRow) int { return compareRows(&a, &b) })
			runs = append(runs, run)
			all = append(all, run...)
		}
		slices.SortFunc(all, func(a, b compactRow) int { return compareRows(&a, &b) })
		var got []compactRow
		for r := range rankedRows(runs) {
			got = append(got, *r)
		}
		if !slices.Equal(got, all) {
			t.Fatalf("trial %d: merged order differs from the sorted order", trial)
		}
	}
}
