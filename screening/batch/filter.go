package batch

import (
	"math"
	"strconv"
	"strings"

	"ringsieve/screening"
	"ringsieve/screening/judge"
	"ringsieve/screening/units"
)

// ResultFilter selects ranked results: verdicts, a catalyst class the monomer is compatible with
// (tolerated or conditional), and a least ceiling temperature (the top of a working temperature
// window: only monomers still favoured there pass).
type ResultFilter struct {
	Verdicts    map[string]bool
	Compatible  screening.CatalystClass
	MinCeilingK *float64
}

// Active reports whether the filter removes anything.
func (f ResultFilter) Active() bool {
	return len(f.Verdicts) > 0 || f.Compatible != "" || f.MinCeilingK != nil
}

// Keeps reports whether a result passes the filter.
func (f ResultFilter) Keeps(r *screening.Result) bool {
	if len(f.Verdicts) > 0 && !f.Verdicts[r.Verdict] {
		return false
	}
	if f.Compatible != "" {
		ok := false
		for _, cp := range r.CatalystCompatibility {
			if cp.Catalyst == f.Compatible && (cp.Status == judge.TolTolerated || cp.Status == judge.TolConditional) {
				ok = true
			}
		}
		if !ok {
			return false
		}
	}
	if f.MinCeilingK != nil && (r.Thermo == nil || r.Thermo.CeilingTempK == nil || *r.Thermo.CeilingTempK < *f.MinCeilingK) {
		return false
	}
	return true
}

// ParseFilter builds a filter from its text form, as the command line and the results endpoint
// take it: verdicts comma-separated, a catalyst class, and a least ceiling temperature in °C
// (empty strings: no filter). Errors are *units.FieldError values naming the field.
func ParseFilter(verdicts, compatibleWith, minCeilingC string) (ResultFilter, error) {
	f := ResultFilter{Verdicts: map[string]bool{}}
	if verdicts != "" {
		for _, v := range strings.Split(verdicts, ",") {
			v, err := judge.ParseVerdict("verdict", strings.TrimSpace(v))
			if err != nil {
				return f, err
			}
			f.Verdicts[v] = true
		}
	}
	if compatibleWith != "" {
		c, err := units.ParseCatalystClass(compatibleWith)
		if err != nil {
			return f, units.Refield(err, "compatible_with")
		}
		f.Compatible = c
	}
	if minCeilingC != "" {
		x, err := strconv.ParseFloat(minCeilingC, 64)
		if err != nil || math.IsNaN(x) || math.IsInf(x, 0) {
			return f, units.FieldErr("min_ceiling_c", "must be a finite number (°C)")
		}
		k := x + units.ZeroCelsiusK
		f.MinCeilingK = &k
	}
	return f, nil
}
