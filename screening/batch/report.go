package batch

import (
	"ringsieve/screening"
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

// SummarySep separates the fields of a stored result summary (the ASCII unit separator, which
// no field contains).
const SummarySep = "\x1f"

// Summary returns the result's CSV fields (verdict to error, without rank, id, line and extra
// columns) joined by SummarySep: what a job stores to write its CSV without decoding results.
func Summary(r *screening.Result, errMsg string) string {
	var stack [512]byte // the fields are written on the stack and copied once into the string
	return string(appendSummary(stack[:0], r, errMsg))
}
