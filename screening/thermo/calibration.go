package thermo

import (
	"fmt"
	"math"
	"sort"
	"strconv"
	"sync"

	"ringsieve/screening/describe"
)

// Calibration per class, leave-one-out on data/measured.csv. For each measured row the table
// tier and the force-field tier each predict ΔH_p without any measurement of that structure
// (estimateTable leaves the structure's anchor, its offset-fit rows and corrections derived from
// it out; the force-field tier adds the strain difference of data/ff_measured.csv, computed by
// this package and checked by TestFFMeasuredIsCurrent, to the parent so estimated). A class's
// force-field uncertainty is the root-mean-square of its leave-one-out residuals (at least 2
// kJ/mol); the force field is applied in `auto` only where its leave-one-out mean absolute error
// is not worse than the table's. A class with fewer than two measured structures is uncalibrated:
// the force field is applied with a widened uncertainty, hypot(6, 0.25·|difference|) kJ/mol.

// ClassCalibration is the leave-one-out result of one class.
type ClassCalibration struct {
	Class string
	// N counts measured rows, Structures distinct structures.
	N, Structures int
	// MAE of the leave-one-out predictions, kJ/mol, and the share of rows within ±1σ.
	MAETable, MAEFF       float64
	InsideTable, InsideFF float64
	// SigmaFF is the class's force-field uncertainty (kJ/mol; 0: uncalibrated), SigmaTable the
	// extra uncertainty the table tier carries in the class (RMS of its residuals beyond its own
	// σ), SigmaS the class's ΔS_p° uncertainty from the measured entropies (J/(mol K); 0: none).
	SigmaFF, SigmaTable, SigmaS float64
	FFEnabled                   bool
	Calibrated                  bool
	Rows                        []LOORow

	// the status texts, made once when the calibrations are loaded (every estimate carries one)
	tableText, ffText string
}

// LOORow is one measured row's leave-one-out predictions.
type LOORow struct {
	ID, Name          string
	Measured          float64
	Table, FF         float64
	UTable, UFF       float64
	FFDelta           float64
	MeasuredDS        *float64
	TableDS           float64
	ForceFieldApplied bool
}

func (c ClassCalibration) statusTable() string {
	if c.tableText != "" {
		return c.tableText
	}
	if c.N == 0 {
		return "uncalibrated (no measurement in this class)"
	}
	return fmt.Sprintf("leave-one-out on %d measurement(s) of %d structure(s)", c.N, c.Structures)
}

func (c ClassCalibration) statusFF() string {
	if c.ffText != "" {
		return c.ffText
	}
	if !c.Calibrated {
		return "uncalibrated"
	}
	return fmt.Sprintf("calibrated on %d measurement(s) of %d structure(s)", c.N, c.Structures)
}

// sigmaFF is the force-field uncertainty for a difference d.
func (c ClassCalibration) sigmaFF(d float64) float64 {
	if c.Calibrated && c.SigmaFF > 0 {
		return math.Hypot(c.SigmaFF, 0.1*d)
	}
	return math.Hypot(6, 0.25*d)
}

var (
	calOnce sync.Once
	calData map[string]ClassCalibration
	calErr  error
)

// loadCalibration sets the class calibrations: the precomputed ones when data/precomputed.tsv
// holds them for the embedded data, else computed.
func loadCalibration() {
	if p := embeddedPrecomputed(); p != nil && p.cal != nil {
		calData = p.cal
	} else {
		calData, calErr = calibrate()
	}
	for k, c := range calData {
		c.tableText, c.ffText = c.statusTable(), c.statusFF()
		calData[k] = c
	}
}

// Calibrations returns every class's calibration (computed once).
func Calibrations() ([]ClassCalibration, error) {
	calOnce.Do(loadCalibration)
	if calErr != nil {
		return nil, calErr
	}
	var out []ClassCalibration
	for _, c := range calData {
		out = append(out, c)
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Class < out[j].Class })
	return out, nil
}

func calibrationFor(class string) ClassCalibration {
	calOnce.Do(loadCalibration)
	if c, ok := calData[class]; ok {
		return c
	}
	return ClassCalibration{Class: class, FFEnabled: true}
}

// FFMeasured is one row of data/ff_measured.csv: the force-field strain difference of a
// measured structure against its parent.
type FFMeasured struct {
	ID, SMILES, Parent string
	DeltakJmol         float64
}

// FFMeasuredData reads data/ff_measured.csv.
func FFMeasuredData() (map[string]FFMeasured, error) {
	recs, err := readCSV("data/ff_measured.csv")
	if err != nil {
		return nil, err
	}
	out := map[string]FFMeasured{}
	for i, rec := range recs {
		if i == 0 {
			continue
		}
		if len(rec) != 4 {
			return nil, fmt.Errorf("ff_measured.csv row %d: %d fields, want 4", i, len(rec))
		}
		v, err := strconv.ParseFloat(rec[3], 64)
		if err != nil {
			return nil, fmt.Errorf("ff_measured.csv row %d: %w", i, err)
		}
		out[rec[0]] = FFMeasured{ID: rec[0], SMILES: rec[1], Parent: rec[2], DeltakJmol: v}
	}
	return out, nil
}

// LOOPredict gives the leave-one-out predictions of one measured row: the table tier and the
// force-field tier (parent estimated without the structure's measurements, plus delta).
func LOOPredict(m Measurement, delta float64) (row LOORow, class string, err error) {
	s, err := describe.Describe(m.SMILES)
	if err != nil || len(s.Olefins) == 0 {
		return row, "", fmt.Errorf("%s: %v", m.ID, err)
	}
	o := firstOlefin(s)
	excl := ConstitutionKey(s)
	tab := estimateTable(s, o, excl, nil)
	parent, pbond, pname, err := coreParent(s, o)
	if err != nil {
		return row, "", err
	}
	ps, err := describe.DescribeMolecule(parent, "")
	if err != nil {
		return row, "", err
	}
	var po *describe.Olefin
	for _, x := range ps.Olefins {
		if x.Bond == pbond {
			po = x
		}
	}
	if po == nil {
		return row, "", fmt.Errorf("%s: parent olefin not found", m.ID)
	}
	pe := estimateTable(ps, po, excl, nil)
	bare := ConstitutionKey(ps) == excl
	row = LOORow{ID: m.ID, Name: m.Name, Measured: m.DH, Table: tab.DHkJmol, UTable: tab.UH,
		FF: pe.DHkJmol + delta, UFF: pe.UH, FFDelta: delta, MeasuredDS: m.DS, TableDS: tab.DSJmolK, ForceFieldApplied: !bare}
	if bare {
		row.FF, row.UFF = tab.DHkJmol, tab.UH
	}
	return row, classOf(s, o, pname), nil
}

// MeasuredOlefin is the olefin of s a measured ΔH_p refers to (see firstOlefin).
func MeasuredOlefin(s *describe.Structure) *describe.Olefin {
	if len(s.Olefins) == 0 {
		return nil
	}
	return firstOlefin(s)
}

// firstOlefin is the olefin the measured value refers to: the most strained ring's (the
// norbornene olefin of dicyclopentadiene), taken as the one in the smallest bridged core, else
// the first.
func firstOlefin(s *describe.Structure) *describe.Olefin {
	best := s.Olefins[0]
	for _, o := range s.Olefins[1:] {
		if len(o.CoreRings) > len(best.CoreRings) {
			best = o
		}
	}
	return best
}

func calibrate() (map[string]ClassCalibration, error) {
	ff, err := FFMeasuredData()
	if err != nil {
		return nil, err
	}
	byClass := map[string][]LOORow{}
	structs := map[string]map[string]bool{}
	for _, m := range Measurements() {
		f, ok := ff[m.ID]
		if !ok {
			return nil, fmt.Errorf("ff_measured.csv has no row for %s (regenerate: go test ./screening/thermo -run FFMeasured -update)", m.ID)
		}
		row, class, err := LOOPredict(m, f.DeltakJmol)
		if err != nil {
			return nil, err
		}
		byClass[class] = append(byClass[class], row)
		if structs[class] == nil {
			structs[class] = map[string]bool{}
		}
		structs[class][m.SMILES] = true
	}
	out := map[string]ClassCalibration{}
	for class, rows := range byClass {
		c := ClassCalibration{Class: class, N: len(rows), Structures: len(structs[class]), Rows: rows}
		var et, ef, rf, rt2 []float64
		for _, r := range rows {
			et = append(et, math.Abs(r.Table-r.Measured))
			ef = append(ef, math.Abs(r.FF-r.Measured))
			rf = append(rf, r.FF-r.Measured)
			excess := math.Abs(r.Table-r.Measured) - r.UTable
			if excess > 0 {
				rt2 = append(rt2, excess)
			}
		}
		c.MAETable, c.MAEFF = mean(et), mean(ef)
		c.Calibrated = c.Structures >= 2
		if c.Calibrated {
			c.SigmaFF = math.Max(2, rms(rf))
			c.FFEnabled = c.MAEFF <= c.MAETable+1e-9
		} else {
			c.FFEnabled = true
		}
		if len(rt2) > 0 {
			c.SigmaTable = rms(rt2)
		}
		// share inside ±1σ, each row against σ computed without it
		for i, r := range rows {
			if math.Abs(r.Table-r.Measured) <= math.Hypot(r.UTable, c.SigmaTable) {
				c.InsideTable++
			}
			var others []float64
			for j, q := range rows {
				if j != i {
					others = append(others, q.FF-q.Measured)
				}
			}
			sf := math.Hypot(6, 0.25*r.FFDelta)
			if c.Calibrated && len(others) > 0 {
				sf = math.Hypot(math.Max(2, rms(others)), 0.1*r.FFDelta)
			}
			if math.Abs(r.FF-r.Measured) <= math.Hypot(r.UFF, sf) {
				c.InsideFF++
			}
		}
		c.InsideTable /= float64(len(rows))
		c.InsideFF /= float64(len(rows))
		// entropy: residuals of the table's ΔS_p° against measured entropies
		var rs []float64
		for _, r := range rows {
			if r.MeasuredDS != nil {
				rs = append(rs, r.TableDS-*r.MeasuredDS)
			}
		}
		if len(rs) >= 2 {
			c.SigmaS = rms(rs)
		}
		out[class] = c
	}
	return out, nil
}

func mean(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	s := 0.0
	for _, v := range x {
		s += v
	}
	return s / float64(len(x))
}

func rms(x []float64) float64 {
	if len(x) == 0 {
		return 0
	}
	s := 0.0
	for _, v := range x {
		s += v * v
	}
	return math.Sqrt(s / float64(len(x)))
}
