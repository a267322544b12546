package batch

import (
	"bytes"
	"encoding/csv"
	"strconv"
	"strings"
	"testing"
	"unicode"
	"unicode/utf8"

	"ringsieve/screening"
	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/judge"
	"ringsieve/screening/units"
)

// awkward are ids, extra columns and messages that make encoding/csv quote or not: separators,
// quotes, line breaks, leading spaces of several kinds, `\.`, the summary separator, non-ASCII.
var awkward = []string{"", "plain", "a,b", `say "hi"`, "two\nlines", "cr\rlf", " lead", "\tlead", "\u00a0nbsp",
	"\u2003em", `\.`, `\.x`, "x\x1fy", "Δ 5 °C", `"`, ",", "trail ", "ok;ok"}

// writerBytes is what encoding/csv's Writer writes for one record.
func writerBytes(t *testing.T, record []string) []byte {
	t.Helper()
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	if err := w.Write(record); err != nil {
		t.Fatal(err)
	}
	w.Flush()
	return b.Bytes()
}

// TestCSVAppendMatchesWriter: the appended rows are byte for byte what encoding/csv's Writer
// writes for the fields of the earlier implementation (csvRow, csvRowFromSummary, kept here),
// over every third corpus structure (two temperatures), a failed row and awkward ids, extra
// columns and messages; and Summary is those fields joined by the separator.
func TestCSVAppendMatchesWriter(t *testing.T) {
	var results []*screening.Result
	for i, e := range reftest.Corpus(t) {
		if i%3 != 0 {
			continue
		}
		c := screening.DefaultConditions()
		c.ThermoMethod = units.ThermoTable
		if i%2 == 0 {
			c.Temp, _ = units.NewTempK(380)
		}
		r, err := screening.ScreenSMILES(e.SMILES, c)
		if err != nil {
			continue
		}
		results = append(results, &r)
	}
	if len(results) < 2000 {
		t.Fatalf("only %d results", len(results))
	}
	results = append(results, nil) // a failed row
	for i, r := range results {
		id, msg := awkward[i%len(awkward)], ""
		extra := []string{awkward[(i+3)%len(awkward)], awkward[(i+7)%len(awkward)]}
		if i%5 == 0 {
			extra = nil
		}
		if r == nil {
			msg = awkward[(i+1)%len(awkward)]
		}
		rank, line := i+1, i%4
		want := writerBytes(t, csvRow(rank, id, line, r, msg, extra))
		if got := AppendCSVRow([]byte("prefix"), rank, id, line, r, msg, extra); !bytes.Equal(got[6:], want) || string(got[:6]) != "prefix" {
			t.Fatalf("row %d: appended\n%q\nWriter\n%q", i, got, want)
		}
		if got := AppendCSVRecord(nil, csvRow(rank, id, line, r, msg, extra)); !bytes.Equal(got, want) {
			t.Fatalf("record %d: appended\n%q\nWriter\n%q", i, got, want)
		}
		if r == nil {
			continue
		}
		sum := Summary(r, "")
		if old := strings.Join(csvRow(0, "", 0, r, "", nil)[3:], SummarySep); sum != old {
			t.Fatalf("summary %d:\n%q\nwant\n%q", i, sum, old)
		}
		want = writerBytes(t, csvRowFromSummary(rank, id, line, sum, extra))
		if got := AppendCSVRowFromSummary(nil, rank, id, line, sum, extra); !bytes.Equal(got, want) {
			t.Fatalf("summary row %d: appended\n%q\nWriter\n%q", i, got, want)
		}
	}
	for _, s := range awkward { // every awkward field alone, as a whole record
		if got, want := AppendCSVRecord(nil, []string{s}), writerBytes(t, []string{s}); !bytes.Equal(got, want) {
			t.Errorf("field %q: appended %q, Writer %q", s, got, want)
		}
	}
}

// csvRowFromSummary is the record AppendCSVRowFromSummary is held to (the earlier
// implementation, as fields for encoding/csv's Writer).
func csvRowFromSummary(rank int, id string, line int, summary string, extra []string) []string {
	ln := ""
	if line > 0 {
		ln = strconv.Itoa(line)
	}
	row := make([]string, 0, 19+len(extra))
	row = append(row, strconv.Itoa(rank), id, ln)
	row = append(row, strings.Split(summary, SummarySep)...)
	return append(row, extra...)
}

// csvRow is the record AppendCSVRow is held to (the earlier implementation, as fields for
// encoding/csv's Writer); r is nil for an item that failed with errMsg.
func csvRow(rank int, id string, line int, r *screening.Result, errMsg string, extra []string) []string {
	row := make([]string, 0, 19+len(extra))
	ln := ""
	if line > 0 {
		ln = strconv.Itoa(line)
	}
	row = append(row, strconv.Itoa(rank), id, ln)
	if r == nil {
		row = append(row, "", "", "", "", "", "", "", "", "", "", "", "", "", "", "", errMsg)
		return append(row, extra...)
	}
	var dh, udh, ds, dg, tc, meq, conv, basis string
	if t := r.Thermo; t != nil {
		dh, udh, ds, dg = fnum(t.DHkJmol, 5), fnum(t.DHUncertaintyKJmol, 3), fnum(t.DSJmolK, 5), fnum(t.DGkJmol, 5)
		if t.CeilingTempK != nil {
			tc = fnum(*t.CeilingTempK, 5)
		}
		meq, conv, basis = fnum(t.EqMonomerMolL, 4), fnum(t.EqConversion, 4), t.Basis
	}
	mw := ""
	if r.Descriptors.MolWeightGmol > 0 {
		mw = fnum(r.Descriptors.MolWeightGmol, 7)
	}
	rs := ""
	if r.Descriptors.RingSize > 0 {
		rs = strconv.Itoa(r.Descriptors.RingSize)
	}
	row = append(row, r.Verdict, fnum(r.Score, 4), dh, udh, ds, dg, tc, meq, conv, basis, r.Descriptors.Formula, mw,
		rs, r.Descriptors.RingSystem, judge.MainReasons(r), errMsg)
	return append(row, extra...)
}

func fnum(x float64, prec int) string { return strconv.FormatFloat(x, 'g', prec, 64) }

// TestCSVNeedsQuotesLeadingSpace: the ASCII shortcut for a field's first character decides as
// encoding/csv's rule does (unicode.IsSpace of the first rune), for every first byte and for
// the non-ASCII spaces, on strings and on bytes.
func TestCSVNeedsQuotesLeadingSpace(t *testing.T) {
	rule := func(s string) bool {
		if s == "" {
			return false
		}
		if s == `\.` || strings.ContainsAny(s, "\"\r\n,") {
			return true
		}
		r, _ := utf8.DecodeRuneInString(s)
		return unicode.IsSpace(r)
	}
	var fields []string
	for c := range 256 {
		fields = append(fields, string([]byte{byte(c)})+"x", string(rune(c))+"x")
	}
	fields = append(fields, "\u2003x", "\u3000x", "\u00a0", "\u0085y", "é", "")
	for _, f := range fields {
		if got, want := csvNeedsQuotes(f), rule(f); got != want {
			t.Errorf("csvNeedsQuotes(%q) = %v, encoding/csv's rule says %v", f, got, want)
		}
		if got, want := csvNeedsQuotes([]byte(f)), rule(f); got != want {
			t.Errorf("csvNeedsQuotes([]byte(%q)) = %v, encoding/csv's rule says %v", f, got, want)
		}
	}
}
