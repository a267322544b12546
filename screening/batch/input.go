// Package batch screens many monomers: input readers (SMILES lines, CSV, SDF), the one ranking
// rule, result filters, the ranked-table rows, an ordered worker pool, and the job runner over a
// store interface that the data layer implements. It imports nothing of HTTP, SQL or gin.
package batch

import (
	"bufio"
	"bytes"
	"context"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"strconv"
	"strings"
	"unicode"
	"unicode/utf8"

	"ringsieve/screening"
	"ringsieve/screening/molfile"
	"ringsieve/screening/units"
)

// Input file formats for offline screening and job uploads.
const (
	FormatSMILES = "smiles" // one SMILES per line, optionally followed by whitespace and an id
	FormatCSV    = "csv"    // id,smiles (+ any columns, carried through); header optional
	FormatSDF    = "sdf"    // MDL SD file with V2000 molfiles
)

// InputItem is one monomer read from a file: a SMILES or a molfile, with the caller's id, the
// 1-based line where it starts and the values of extra CSV columns.
type InputItem struct {
	ID      string
	SMILES  string
	Molfile string
	Line    int
	Extra   []string
}

// InputError reports a row that could not be read, by 1-based line number.
type InputError struct {
	Line int    `json:"line"`
	ID   string `json:"id,omitempty"`
	Msg  string `json:"message"`
}

func (e InputError) Error() string { return fmt.Sprintf("line %d: %s", e.Line, e.Msg) }

// Input is a parsed file.
type Input struct {
	Format       string
	Items        []InputItem // empty when items were handed to an emit function
	Count        int         // items read
	ExtraColumns []string
	Errors       []InputError
	emit         func(InputItem) error
}

// MaxInputLine bounds one line of an input file.
const MaxInputLine = 1 << 20

// DetectFormat guesses the format from the first bytes: an SD file has a counts line with
// V2000 or an M  END line; a first non-comment line with a comma is CSV; else SMILES lines.
func DetectFormat(head []byte) string {
	if bytes.Contains(head, []byte("V2000")) || bytes.Contains(head, []byte("M  END")) || bytes.Contains(head, []byte("$$$$")) {
		return FormatSDF
	}
	for _, ln := range strings.Split(string(head), "\n") {
		ln = strings.TrimSpace(ln)
		if ln == "" || strings.HasPrefix(ln, "#") {
			continue
		}
		if strings.Contains(ln, ",") {
			return FormatCSV
		}
		return FormatSMILES
	}
	return FormatSMILES
}

// ReadInput reads a whole input of the given format ("" detects it). idField names the SDF data
// field (or CSV column) that holds the id; empty means the molfile name line (SDF) or the column
// named "id" (CSV). Bad rows are reported in Errors and skipped; err is for unreadable input.
func ReadInput(r io.Reader, format, idField string, maxItems int) (*Input, error) {
	in, err := ScanInput(r, format, idField, maxItems, nil)
	return in, err
}

// ScanInput reads an input like ReadInput but hands each item to emit as soon as it is read
// (emit == nil collects them in Input.Items), so that a large file need not be held as items.
// An error from emit stops the scan and is returned.
func ScanInput(r io.Reader, format, idField string, maxItems int, emit func(InputItem) error) (*Input, error) {
	br := bufio.NewReaderSize(r, 64<<10)
	if format == "" {
		head, _ := br.Peek(8 << 10)
		format = DetectFormat(head)
	}
	in := &Input{Format: format, emit: emit}
	var err error
	switch format {
	case FormatSMILES:
		err = readSMILESLines(br, in, maxItems)
	case FormatCSV:
		err = readCSVInput(br, in, idField, maxItems)
	case FormatSDF:
		err = readSDF(br, in, idField, maxItems)
	default:
		return nil, units.FieldErr("format", "unknown input format %q (smiles, csv or sdf)", format)
	}
	return in, err
}

// add hands an item on (or keeps it) and enforces the item limit.
func (in *Input) add(it InputItem, max int) error {
	if max > 0 && in.Count >= max {
		return tooMany(max)
	}
	in.Count++
	if in.emit != nil {
		return in.emit(it)
	}
	in.Items = append(in.Items, it)
	return nil
}

var errTooMany = errors.New("too many items")

func tooMany(max int) error {
	return fmt.Errorf("%w: more than %d", errTooMany, max)
}

// isASCIISpace is unicode.IsSpace for a byte below utf8.RuneSelf: space, \t, \n, \v, \f, \r.
func isASCIISpace(c byte) bool { return c == ' ' || c >= '\t' && c <= '\r' }

// indexSpace is strings.IndexFunc(s, unicode.IsSpace) with the ASCII bytes tested directly
// (a SMILES is ASCII; the rune is decoded only past it).
func indexSpace(s string) int {
	for i := 0; i < len(s); i++ {
		c := s[i]
		if c < utf8.RuneSelf {
			if isASCIISpace(c) {
				return i
			}
			continue
		}
		if j := strings.IndexFunc(s[i:], unicode.IsSpace); j >= 0 {
			return i + j
		}
		return -1
	}
	return -1
}

func readSMILESLines(r *bufio.Reader, in *Input, max int) error {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), MaxInputLine)
	line := 0
	for sc.Scan() {
		line++
		t := strings.TrimSpace(sc.Text())
		if t == "" || strings.HasPrefix(t, "#") {
			continue
		}
		// the SMILES, then the id: the other whitespace-separated fields joined by one space
		smi, id := t, ""
		if i := indexSpace(t); i >= 0 {
			smi, id = t[:i], strings.TrimSpace(t[i:])
			if indexSpace(id) >= 0 {
				id = strings.Join(strings.Fields(id), " ")
			}
		} else {
			id = strconv.Itoa(line)
		}
		if err := in.add(InputItem{ID: id, SMILES: smi, Line: line}, max); err != nil {
			return err
		}
	}
	if err := sc.Err(); err != nil {
		return fmt.Errorf("line %d: %w", line+1, err)
	}
	return nil
}

func readCSVInput(r *bufio.Reader, in *Input, idField string, max int) error {
	cr := csv.NewReader(r)
	cr.FieldsPerRecord = -1
	cr.Comment = '#'
	cr.ReuseRecord = false
	idCol, smiCol := 0, 1
	header := false
	var extraIdx []int
	row := 0
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				in.Errors = append(in.Errors, InputError{Line: pe.Line, Msg: pe.Err.Error()})
				if errors.Is(pe.Err, csv.ErrQuote) || errors.Is(pe.Err, csv.ErrBareQuote) {
					continue
				}
				return fmt.Errorf("line %d: %w", pe.Line, err)
			}
			return err
		}
		line, _ := cr.FieldPos(0)
		row++
		if row == 1 {
			for _, h := range rec {
				if strings.EqualFold(strings.TrimSpace(h), "smiles") {
					header = true
				}
			}
			if header {
				idCol = -1
				want := "id"
				if idField != "" {
					want = idField
				}
				for j, h := range rec {
					h = strings.TrimSpace(h)
					switch {
					case strings.EqualFold(h, "smiles"):
						smiCol = j
					case strings.EqualFold(h, want):
						idCol = j
					}
				}
				for j, h := range rec {
					if j != smiCol && j != idCol {
						extraIdx = append(extraIdx, j)
						in.ExtraColumns = append(in.ExtraColumns, strings.TrimSpace(h))
					}
				}
				continue
			}
			for j := 2; j < len(rec); j++ {
				extraIdx = append(extraIdx, j)
				in.ExtraColumns = append(in.ExtraColumns, fmt.Sprintf("column_%d", j+1))
			}
		}
		if len(rec) == 1 && strings.TrimSpace(rec[0]) == "" {
			continue
		}
		id := strconv.Itoa(line)
		if idCol >= 0 && idCol < len(rec) && strings.TrimSpace(rec[idCol]) != "" {
			id = strings.TrimSpace(rec[idCol])
		}
		if smiCol >= len(rec) || strings.TrimSpace(rec[smiCol]) == "" {
			in.Errors = append(in.Errors, InputError{Line: line, ID: id, Msg: "no SMILES in this row"})
			continue
		}
		extra := make([]string, len(extraIdx))
		for k, j := range extraIdx {
			if j < len(rec) {
				extra[k] = rec[j]
			}
		}
		if err := in.add(InputItem{ID: id, SMILES: strings.TrimSpace(rec[smiCol]), Line: line, Extra: extra}, max); err != nil {
			return err
		}
	}
	return nil
}

func readSDF(r *bufio.Reader, in *Input, idField string, max int) error {
	return molfile.ReadSD(r, func(rec molfile.SDRecord) error {
		num := in.Count + len(in.Errors) + 1
		text, ok := rec.Molfile()
		if !ok {
			in.Errors = append(in.Errors, InputError{Line: rec.Start, ID: strconv.Itoa(num), Msg: "record has no M  END line"})
			return nil
		}
		id := strings.TrimSpace(rec.Lines[0])
		if idField != "" {
			v, ok := rec.Fields()[idField]
			if !ok {
				in.Errors = append(in.Errors, InputError{Line: rec.Start, ID: id, Msg: fmt.Sprintf("record has no data field <%s>", idField)})
				return nil
			}
			id = strings.TrimSpace(v)
		}
		if id == "" {
			id = strconv.Itoa(num)
		}
		if _, _, err := molfile.Parse(text); err != nil {
			var me *molfile.Error
			if errors.As(err, &me) {
				in.Errors = append(in.Errors, InputError{Line: rec.Start + me.Line - 1, ID: id, Msg: me.Msg})
				return nil
			}
			in.Errors = append(in.Errors, InputError{Line: rec.Start, ID: id, Msg: err.Error()})
			return nil
		}
		return in.add(InputItem{ID: id, Molfile: text, Line: rec.Start}, max)
	})
}

// ScreenItem screens one input item (SMILES or molfile).
func ScreenItem(it InputItem, c screening.Conditions) (screening.Result, error) {
	return ScreenItemContext(context.Background(), it, c)
}

// ScreenItemContext is ScreenItem under ctx.
func ScreenItemContext(ctx context.Context, it InputItem, c screening.Conditions) (screening.Result, error) {
	return screening.ScreenContext(ctx, screening.Source{SMILES: it.SMILES, Molfile: it.Molfile}, c)
}

// ScreenItemWith is ScreenItemContext reusing u's storage: the result is valid only until the
// next screening with u (see screening.Reuse).
func ScreenItemWith(ctx context.Context, u *screening.Reuse, it InputItem, c screening.Conditions) (screening.Result, error) {
	return screening.ScreenWith(ctx, u, screening.Source{SMILES: it.SMILES, Molfile: it.Molfile}, c)
}
