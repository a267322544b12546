package batch

import (
	"strconv"
	"strings"

	"ringsieve/screening"
	"ringsieve/screening/judge"
)

// Ranked-table rows shared by the offline screen command and job downloads, so that one list
// screened either way gives the same file.

// CSVHeader returns the column names of a ranked table, followed by the caller's extra columns.
func CSVHeader(extra []string) []string {
	h := []string{"rank", "id", "line", "verdict", "score", "dh_kj_mol", "dh_uncertainty_kj_mol", "ds_j_mol_k",
		"dg_kj_mol", "ceiling_temp_k", "eq_monomer_mol_l", "eq_conversion", "basis", "formula", "mol_weight_g_mol",
		"ring_size", "ring_system", "main_reasons", "error"}
	return append(h, extra...)
}

func fnum(x float64, prec int) string { return strconv.FormatFloat(x, 'g', prec, 64) }

// SummarySep separates the fields of a stored result summary (the ASCII unit separator, which
// no field contains).
const SummarySep = "\x1f"

// Summary returns the result's CSV fields (verdict to error, without rank, id, line and extra
// columns) joined by SummarySep: what a job stores to write its CSV without decoding results.
func Summary(r *screening.Result, errMsg string) string {
	return strings.Join(CSVRow(0, "", 0, r, errMsg, nil)[3:], SummarySep)
}

// CSVRowFromSummary builds a CSV row from a stored summary (see Summary).
func CSVRowFromSummary(rank int, id string, line int, summary string, extra []string) []string {
	ln := ""
	if line > 0 {
		ln = strconv.Itoa(line)
	}
	row := make([]string, 0, 19+len(extra))
	row = append(row, strconv.Itoa(rank), id, ln)
	row = append(row, strings.Split(summary, SummarySep)...)
	return append(row, extra...)
}

// CSVRow renders one ranked row; r is nil for an item that failed with errMsg.
func CSVRow(rank int, id string, line int, r *screening.Result, errMsg string, extra []string) []string {
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
