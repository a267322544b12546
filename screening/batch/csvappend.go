package batch

import (
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"ringsieve/screening"
	"ringsieve/screening/internal/numfmt"
	"ringsieve/screening/judge"
)

// The ranked-table rows appended as bytes: what encoding/csv's Writer writes for a row's fields
// (comma-separated, quoted where it quotes, "\n" at the end), and what Summary joins — without
// building each field as a string first. The offline screen and job downloads write every row
// this way; TestCSVAppendMatchesWriter holds the bytes equal to the Writer's for the fields of
// the earlier []string implementation (kept in the test) over the corpus and over fields that
// need quoting.

// fieldList appends fields with a separator, quoting them as encoding/csv does when csv is set.
type fieldList struct {
	b   []byte
	n   int
	sep byte
	csv bool
}

func (f *fieldList) next() {
	if f.n > 0 {
		f.b = append(f.b, f.sep)
	}
	f.n++
}

func (f *fieldList) str(s string) {
	f.next()
	if f.csv && csvNeedsQuotes(s) {
		f.b = appendCSVQuoted(f.b, s)
		return
	}
	f.b = append(f.b, s...)
}

// mainReasons appends judge.MainReasons(r) as str would, without building the string first.
func (f *fieldList) mainReasons(r *screening.Result) {
	f.next()
	start := len(f.b)
	f.b = judge.AppendMainReasons(f.b, r)
	if f.csv && csvNeedsQuotes(f.b[start:]) { // rare: write it again in quotes
		s := string(f.b[start:])
		f.b = appendCSVQuoted(f.b[:start], s)
	}
}

// num appends x as strconv.FormatFloat(x, 'g', prec, 64) (never a character that needs quotes).
func (f *fieldList) num(x float64, prec int) {
	f.next()
	f.b = numfmt.AppendSig(f.b, x, prec)
}

// posInt appends i, or nothing when it is not positive.
func (f *fieldList) posInt(i int) {
	f.next()
	if i > 0 {
		f.b = strconv.AppendInt(f.b, int64(i), 10)
	}
}

// csvNeedsQuotes is encoding/csv's rule for a comma-separated field: empty fields are not
// quoted; `\.` is; so is a field holding a quote, comma, carriage return or newline, or one
// starting with a space character.
func csvNeedsQuotes[T string | []byte](s T) bool {
	if len(s) == 0 {
		return false
	}
	if string(s) == `\.` {
		return true
	}
	for i := 0; i < len(s); i++ {
		if csvSpecial[s[i]] {
			return true
		}
	}
	if c := s[0]; c < utf8.RuneSelf { // without decoding a rune
		return isASCIISpace(c)
	}
	r, _ := utf8.DecodeRuneInString(string(s[:min(len(s), utf8.UTFMax)]))
	return unicode.IsSpace(r)
}

// csvSpecial marks the bytes that make a field need quotes wherever they stand.
var csvSpecial = [256]bool{'\n': true, '\r': true, '"': true, ',': true}

// appendCSVQuoted appends s in quotes with its quotes doubled (line breaks kept as they are, as
// encoding/csv's Writer does without UseCRLF).
func appendCSVQuoted(b []byte, s string) []byte {
	b = append(b, '"')
	for {
		i := strings.IndexByte(s, '"')
		if i < 0 {
			break
		}
		b = append(b, s[:i+1]...)
		b = append(b, '"')
		s = s[i+1:]
	}
	b = append(b, s...)
	return append(b, '"')
}

// AppendCSVRecord appends one record as encoding/csv's Writer writes it.
func AppendCSVRecord(b []byte, record []string) []byte {
	f := fieldList{b: b, sep: ',', csv: true}
	for _, s := range record {
		f.str(s)
	}
	return append(f.b, '\n')
}

// resultFields appends a result's fields from verdict to error (columns 4 to 19 of CSVHeader).
func resultFields(f *fieldList, r *screening.Result, errMsg string) {
	if r == nil {
		for range 15 {
			f.next()
		}
		f.str(errMsg)
		return
	}
	f.str(r.Verdict)
	f.num(r.Score, 4)
	if t := r.Thermo; t != nil {
		f.num(t.DHkJmol, 5)
		f.num(t.DHUncertaintyKJmol, 3)
		f.num(t.DSJmolK, 5)
		f.num(t.DGkJmol, 5)
		if t.CeilingTempK != nil {
			f.num(*t.CeilingTempK, 5)
		} else {
			f.next()
		}
		f.num(t.EqMonomerMolL, 4)
		f.num(t.EqConversion, 4)
		f.str(t.Basis)
	} else {
		for range 8 {
			f.next()
		}
	}
	f.str(r.Descriptors.Formula)
	if r.Descriptors.MolWeightGmol > 0 {
		f.num(r.Descriptors.MolWeightGmol, 7)
	} else {
		f.next()
	}
	f.posInt(r.Descriptors.RingSize)
	f.str(r.Descriptors.RingSystem)
	f.mainReasons(r)
	f.str(errMsg)
}

// head appends a row's rank, id and line (empty when not positive).
func (f *fieldList) head(rank int, id string, line int) {
	f.next()
	f.b = strconv.AppendInt(f.b, int64(rank), 10)
	f.str(id)
	f.posInt(line)
}

// AppendCSVRow appends one ranked row (CSVHeader's columns) as encoding/csv's Writer writes it;
// r is nil for an item that failed with errMsg, line 0 leaves the line empty.
func AppendCSVRow(b []byte, rank int, id string, line int, r *screening.Result, errMsg string, extra []string) []byte {
	f := fieldList{b: b, sep: ',', csv: true}
	f.head(rank, id, line)
	resultFields(&f, r, errMsg)
	for _, s := range extra {
		f.str(s)
	}
	return append(f.b, '\n')
}

// AppendCSVRowFromSummary appends the ranked row of a stored summary (see Summary) as
// encoding/csv's Writer writes it.
func AppendCSVRowFromSummary(b []byte, rank int, id string, line int, summary string, extra []string) []byte {
	f := fieldList{b: b, sep: ',', csv: true}
	f.head(rank, id, line)
	for {
		s, rest, more := strings.Cut(summary, SummarySep)
		f.str(s)
		if !more {
			break
		}
		summary = rest
	}
	for _, s := range extra {
		f.str(s)
	}
	return append(f.b, '\n')
}

// appendSummary appends Summary's text.
func appendSummary(b []byte, r *screening.Result, errMsg string) []byte {
	f := fieldList{b: b, sep: SummarySep[0]}
	resultFields(&f, r, errMsg)
	return f.b
}
