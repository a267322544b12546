package thermo

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"sort"
	"strconv"
	"strings"
	"sync"
)

// Precomputed table values. Loading the ring table computes, for each of its rows, the
// canonical key of the ring system and the constitution key, and for each row of the offset
// fit a gas-phase estimate; the measured values need each structure's keys, and the class
// calibration screens every measured structure leave-one-out: parsing, ring perception and
// canonical labelling of every structure, several milliseconds at the first screening of every
// process (most of the time of a one-structure `ringsieve screen`). data/precomputed.tsv holds those values computed ahead (our own
// tab-separated layout, one record per line):
//
//	inputs <hash>                                   SHA-256 of the CSV files they come from
//	row <name> <SMILES> <trans> <key> <constitution key> <rings> <ring atoms>
//	fit <id> <SMILES> <kind> <ΔH gas, kJ/mol> <ΔS gas, J/(mol K)> <constitution key>
//	measured <id> <SMILES> <constitution key> <stereo signature or empty>
//	calibration <JSON list of ClassCalibration, by class>
//
// When the recorded hash differs from the embedded CSV files' (a table edited without
// regenerating) the file is ignored and everything is computed as before, so a stale file
// cannot change a result; a code change that alters keys or estimates is caught by
// TestPrecomputedTableFresh, which recomputes everything and compares. Regenerate with
// `go test ./screening/thermo -run PrecomputedTableFresh -update`.
const precomputedFile = "data/precomputed.tsv"

// rowKeys are a table row's computed values.
type rowKeys struct {
	key, constKey string
	rings, atoms  int
}

// fitValues are a fit row's computed values.
type fitValues struct {
	dhGas, dsGas float64
	constKey     string
}

// precomputed holds data/precomputed.tsv by record identity (name or id, SMILES and flag),
// and the class calibrations by class (nil when the file has none).
type precomputed struct {
	rows     map[string]rowKeys
	fits     map[string]fitValues
	measures map[string]measuredKeys
	cal      map[string]ClassCalibration
}

func measuredID(m Measurement) string { return m.ID + "\t" + m.SMILES }

// measured returns the precomputed keys of m (ok false when there are none; p may be nil).
func (p *precomputed) measured(m Measurement) (measuredKeys, bool) {
	if p == nil {
		return measuredKeys{}, false
	}
	k, ok := p.measures[measuredID(m)]
	return k, ok
}

// embeddedPrecomputed is readPrecomputed, read once.
var embeddedPrecomputed = sync.OnceValue(readPrecomputed)

func rowID(r *RingRow) string { return r.Name + "\t" + r.SMILES + "\t" + boolField(r.Trans) }
func fitID(f FitRow) string   { return f.ID + "\t" + f.SMILES + "\t" + f.Kind }

func boolField(b bool) string {
	if b {
		return "1"
	}
	return "0"
}

// row returns the precomputed keys of r (ok false when there are none; p may be nil).
func (p *precomputed) row(r *RingRow) (rowKeys, bool) {
	if p == nil {
		return rowKeys{}, false
	}
	k, ok := p.rows[rowID(r)]
	return k, ok
}

// fit returns the precomputed values of f (ok false when there are none; p may be nil).
func (p *precomputed) fit(f FitRow) (fitValues, bool) {
	if p == nil {
		return fitValues{}, false
	}
	v, ok := p.fits[fitID(f)]
	return v, ok
}

// inputsHash is the SHA-256 (hex) of the CSV files the precomputed values and the seeds come
// from, computed once per process (the files are embedded).
var inputsHash = sync.OnceValues(computeInputsHash)

// errOtherInputs reports precomputed values or seeds computed from other CSV files.
var errOtherInputs = errors.New("computed from other table files")

// checkInputs compares a recorded inputs hash with the embedded CSV files' (errOtherInputs when
// they differ).
func checkInputs(recorded string) error {
	want, err := inputsHash()
	if err != nil {
		return err
	}
	if recorded != want {
		return errOtherInputs
	}
	return nil
}

func computeInputsHash() (string, error) {
	h := sha256.New()
	for _, name := range []string{"data/ring_table.csv", "data/condensed_fit.csv", "data/measured.csv", "data/ff_measured.csv"} {
		b, err := dataFS.ReadFile(name)
		if err != nil {
			return "", err
		}
		fmt.Fprintf(h, "%s %d\n", name, len(b))
		h.Write(b)
	}
	return hex.EncodeToString(h.Sum(nil)), nil
}

// readPrecomputed reads the embedded precomputed values; nil when the file is missing,
// malformed or computed from other inputs (then the table is computed in full).
func readPrecomputed() *precomputed {
	b, err := dataFS.ReadFile(precomputedFile)
	if err != nil {
		return nil
	}
	p, err := parsePrecomputed(b)
	if err != nil {
		return nil
	}
	return p
}

// parsePrecomputed reads the layout described above. Errors: a malformed record, or an inputs
// hash other than the embedded CSV files'.
func parsePrecomputed(b []byte) (*precomputed, error) {
	p := &precomputed{rows: map[string]rowKeys{}, fits: map[string]fitValues{}, measures: map[string]measuredKeys{}}
	sc := bufio.NewScanner(bytes.NewReader(b))
	sc.Buffer(make([]byte, 0, 64*1024), 1<<20)
	inputsOK := false
	for n := 1; sc.Scan(); n++ {
		line := sc.Text()
		if line == "" || strings.HasPrefix(line, "#") {
			continue
		}
		f := strings.Split(line, "\t")
		bad := fmt.Errorf("%s line %d: malformed %q record", precomputedFile, n, f[0])
		switch {
		case f[0] == "inputs" && len(f) == 2:
			if err := checkInputs(f[1]); err != nil {
				return nil, fmt.Errorf("%s: %w", precomputedFile, err)
			}
			inputsOK = true
		case f[0] == "row" && len(f) == 8:
			rings, err1 := strconv.Atoi(f[6])
			atoms, err2 := strconv.Atoi(f[7])
			if err1 != nil || err2 != nil {
				return nil, bad
			}
			p.rows[strings.Join(f[1:4], "\t")] = rowKeys{key: f[4], constKey: f[5], rings: rings, atoms: atoms}
		case f[0] == "measured" && len(f) == 5:
			p.measures[strings.Join(f[1:3], "\t")] = measuredKeys{key: f[3], stereo: f[4]}
		case f[0] == "calibration" && len(f) == 2:
			var list []ClassCalibration
			if err := json.Unmarshal([]byte(f[1]), &list); err != nil {
				return nil, bad
			}
			p.cal = map[string]ClassCalibration{}
			for _, c := range list {
				p.cal[c.Class] = c
			}
		case f[0] == "fit" && len(f) == 7:
			dh, err1 := strconv.ParseFloat(f[4], 64)
			ds, err2 := strconv.ParseFloat(f[5], 64)
			if err1 != nil || err2 != nil {
				return nil, bad
			}
			p.fits[strings.Join(f[1:4], "\t")] = fitValues{dhGas: dh, dsGas: ds, constKey: f[6]}
		default:
			return nil, bad
		}
	}
	if err := sc.Err(); err != nil {
		return nil, err
	}
	if !inputsOK {
		return nil, fmt.Errorf("%s: no inputs record", precomputedFile)
	}
	return p, nil
}

// writePrecomputed writes, in the layout above, the values of a table, a measured set and the
// class calibrations computed in full (loadTable(nil), loadMeasured(nil), calibrate). Errors:
// a field holding a tab or a line break, a value JSON cannot hold.
func writePrecomputed(t *ringTable, ms *measuredSet, cal map[string]ClassCalibration) ([]byte, error) {
	hash, err := inputsHash()
	if err != nil {
		return nil, err
	}
	var b bytes.Buffer
	b.WriteString("# generated by `go test ./screening/thermo -run PrecomputedTableFresh -update` from data/ring_table.csv,\n")
	b.WriteString("# data/condensed_fit.csv, data/measured.csv and data/ff_measured.csv (see precomputed.go); do not edit\n")
	fmt.Fprintf(&b, "inputs\t%s\n", hash)
	// record writes one record, refusing fields that would break the layout
	record := func(fields ...string) error {
		for _, f := range fields {
			if strings.ContainsAny(f, "\t\r\n") {
				return fmt.Errorf("precomputed value %q holds a tab or a line break", f)
			}
		}
		b.WriteString(strings.Join(fields, "\t"))
		b.WriteByte('\n')
		return nil
	}
	for _, r := range t.rows {
		if err := record("row", r.Name, r.SMILES, boolField(r.Trans), r.Key, r.constKey, strconv.Itoa(r.Rings), strconv.Itoa(r.atoms)); err != nil {
			return nil, err
		}
	}
	for _, f := range t.fitRows {
		if err := record("fit", f.ID, f.SMILES, f.Kind, strconv.FormatFloat(f.DHGas, 'g', -1, 64), strconv.FormatFloat(f.DSGas, 'g', -1, 64), f.constKey); err != nil {
			return nil, err
		}
	}
	for _, m := range ms.rows {
		if err := record("measured", m.ID, m.SMILES, m.key, m.stereo); err != nil {
			return nil, err
		}
	}
	list := make([]ClassCalibration, 0, len(cal))
	for _, c := range cal {
		list = append(list, c)
	}
	sort.Slice(list, func(i, j int) bool { return list[i].Class < list[j].Class })
	js, err := json.Marshal(list) // escapes tabs and line breaks inside strings
	if err != nil {
		return nil, fmt.Errorf("calibration: %w", err)
	}
	if err := record("calibration", string(js)); err != nil {
		return nil, err
	}
	return b.Bytes(), nil
}
