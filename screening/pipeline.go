// Package screening strings the science steps together: a SMILES, a molfile or a descriptor
// record goes in, a verdict with reasons, thermodynamics and cautions comes out. The steps live
// in the sub-packages (mol ← smiles, molfile ← rings ← canon ← describe ← thermo ← judge ←
// plan); this package holds the pipeline and re-exports the domain types callers use, so that
// the API and the commands speak one vocabulary. It imports nothing of HTTP, SQL or gin.
package screening

import (
	"context"
	"errors"
	"fmt"
	"math"
	"sort"
	"strings"
	"sync"
	"time"

	"ringsieve/screening/depict"
	"ringsieve/screening/describe"
	"ringsieve/screening/internal/memo"
	"ringsieve/screening/judge"
	"ringsieve/screening/molfile"
	"ringsieve/screening/smiles"
	"ringsieve/screening/thermo"
	"ringsieve/screening/units"
)

// Domain types, defined by the step that computes them.
type (
	Result        = judge.Result
	Reason        = judge.Reason
	Compatibility = judge.Compatibility
	ConditionsOut = judge.ConditionsOut
	Thermo        = thermo.Thermo
	Descriptors   = describe.Descriptors
	Structure     = describe.Structure
	Conditions    = units.Conditions
	CatalystClass = units.CatalystClass
	TempK         = units.TempK
	ConcMolL      = units.ConcMolL
	FieldError    = units.FieldError
	SMILESError   = smiles.Error
	MolfileError  = molfile.Error
)

// Error sentinels: every malformed SMILES matches ErrSMILES; every out-of-range or inconsistent
// value (and every malformed molfile) matches ErrInvalid.
var (
	ErrSMILES     = smiles.ErrSMILES
	ErrInvalid    = units.ErrInvalid
	ErrTooComplex = units.ErrTooComplex
)

// MaxRingWork bounds the work of screening one structure, counted in ring look-ups: each
// analysed ring olefin costs the number of rings in its ring system (every ring of the system
// is keyed and looked up before and after opening). Real monomers stay far below it
// (dicyclopentadiene: 2 olefins × 4 rings = 8; a porphyrin-bearing norbornene about 10); a
// ladder of 100 fused olefin rings reaches ~1,200 and costs a quarter of a CPU-second
// (design choice: the limit keeps every accepted structure under ~0.1 CPU-second in the table tier).
const MaxRingWork = 500

// checkWork returns an ErrTooComplex error naming the numbers when s is over MaxRingWork.
func checkWork(s *Structure) error {
	work, most := 0, 0
	for _, o := range s.Olefins {
		work += len(o.SystemRings)
		most = max(most, len(o.SystemRings))
	}
	if work > MaxRingWork {
		return fmt.Errorf("%d analysed ring olefins in ring systems of up to %d rings need %d ring look-ups; the limit per structure is %d: %w",
			len(s.Olefins), most, work, MaxRingWork, ErrTooComplex)
	}
	return nil
}

// StructureKey is the canonical key of a SMILES's screened component: its constitution and,
// when the SMILES specifies stereo, the stereo the descriptors see. Two SMILES of the same
// structure give the same key. Errors are *SMILESError values.
func StructureKey(text string) (string, error) {
	s, err := describe.Describe(text)
	if err != nil {
		return "", err
	}
	return thermo.StructureKeyOf(s), nil
}

// Ceiling temperatures outside these bounds (K) are marked extrapolated.
const (
	ExtrapolatedBelowK = thermo.ExtrapolatedBelowK
	ExtrapolatedAboveK = thermo.ExtrapolatedAboveK
)

// EngineVersion identifies the rules, table and formulas that produced a result.
const EngineVersion = judge.EngineVersion

// Verdicts (contract), best first.
const (
	VerdictPolymerizes = judge.VerdictPolymerizes
	VerdictEquilibrium = judge.VerdictEquilibrium
	VerdictUnfavorable = judge.VerdictUnfavorable
	VerdictBlocked     = judge.VerdictBlocked
	VerdictNotMonomer  = judge.VerdictNotMonomer
)

// WithForceFieldDeadline bounds the force-field work done under ctx: past the deadline, auto
// estimates fall back to the ring table with a note.
func WithForceFieldDeadline(ctx context.Context, t time.Time) context.Context {
	return thermo.WithForceFieldDeadline(ctx, t)
}

// DefaultConditions are the contract's defaults: 25 °C, 1.0 mol/L, ru-nhc.
func DefaultConditions() Conditions { return units.DefaultConditions() }

// Source names one monomer to screen: exactly one of a SMILES, a V2000 molfile or a descriptor
// record.
type Source struct {
	SMILES      string
	Molfile     string
	Descriptors *Descriptors
}

// Screen screens one source under conditions c (no deadline; see ScreenContext).
func Screen(src Source, c Conditions) (Result, error) {
	return ScreenContext(context.Background(), src, c)
}

// ScreenContext screens one source under conditions c; ctx bounds the force-field work of the
// thermodynamics (see thermo.WithForceFieldDeadline).
func ScreenContext(ctx context.Context, src Source, c Conditions) (Result, error) {
	switch {
	case src.Molfile != "":
		return ScreenMolfileContext(ctx, src.Molfile, c)
	case src.Descriptors != nil && strings.TrimSpace(src.SMILES) == "":
		return ScreenDescriptors(*src.Descriptors, c)
	default:
		return ScreenSMILESContext(ctx, src.SMILES, c)
	}
}

// Warm loads the embedded tables a screening reads (ring table, measurements, calibration,
// rule keys) by screening one structure in the table tier, so that a server's first request
// does not pay for them (a few milliseconds). Safe to call more than once.
func Warm() {
	c := DefaultConditions()
	c.ThermoMethod = units.ThermoTable
	ScreenSMILES("C1=CC2CCC1C2", c) // norbornene
}

// ScreenSMILES screens a structure. Errors: *SMILESError for malformed SMILES; *FieldError when
// bulk conditions cannot be estimated.
func ScreenSMILES(text string, c Conditions) (Result, error) {
	return ScreenSMILESContext(context.Background(), text, c)
}

// ScreenSMILESContext is ScreenSMILES under ctx.
func ScreenSMILESContext(ctx context.Context, text string, c Conditions) (Result, error) {
	w := workspaces.Get().(*describe.Workspace)
	defer putWorkspace(w)
	s, err := describe.DescribeInto(w, text)
	if err != nil {
		return Result{}, err
	}
	return ScreenStructureContext(ctx, s, c)
}

// workspaces holds the molecules and ring perceptions whose storage (atom, bond and index
// arrays, ring sizes, rings, aromaticity flags and perception scratch) screening reuses: a
// result keeps nothing of the molecule it was computed from (its descriptors are values and
// strings, and the caches keep copies), so the storage goes back to the pool once the result is
// built.
var workspaces = sync.Pool{New: func() any { return &describe.Workspace{} }}

// pooledAtomsMax bounds the structures whose storage is kept for reuse (design choice: a rare
// huge structure is left to the collector rather than pinned in the pool).
const pooledAtomsMax = 256

func putWorkspace(w *describe.Workspace) {
	if cap(w.Mol.Atoms) > pooledAtomsMax {
		return
	}
	w.Mol.Reset()
	workspaces.Put(w)
}

// ScreenMolfile screens a V2000 molfile. Errors are *MolfileError values (an atom beyond its
// valence is reported on its atom line).
func ScreenMolfile(text string, c Conditions) (Result, error) {
	return ScreenMolfileContext(context.Background(), text, c)
}

// ScreenMolfileContext is ScreenMolfile under ctx.
func ScreenMolfileContext(ctx context.Context, text string, c Conditions) (Result, error) {
	m, _, err := molfile.Parse(text)
	if err != nil {
		return Result{}, err
	}
	s, err := describe.DescribeMolecule(m, "")
	if err != nil {
		var ve *describe.ValenceError
		if errors.As(err, &ve) {
			return Result{}, &molfile.Error{Line: 5 + ve.Atom, Msg: ve.Msg}
		}
		return Result{}, err
	}
	return ScreenStructureContext(ctx, s, c)
}

// ScreenStructure screens a described structure: every ring olefin is judged and the most
// reactive one is reported, the others listed in descriptors.other_ring_olefins. It merges the
// molecule's descriptors into each olefin's (s.Olefins[i].Desc), so s must not be screened by
// two goroutines at once.
func ScreenStructure(s *Structure, c Conditions) (Result, error) {
	return ScreenStructureContext(context.Background(), s, c)
}

// ScreenStructureContext is ScreenStructure under ctx.
func ScreenStructureContext(ctx context.Context, s *Structure, c Conditions) (Result, error) {
	if err := checkWork(s); err != nil {
		return Result{}, err
	}
	base := s.MoleculeDescriptors()
	var bulkNote *Reason
	if c.Bulk {
		conc, rel, ok := s.BulkConcentration()
		if !ok {
			return Result{}, units.FieldErr("conditions.bulk", "cannot estimate the neat density of this monomer; give monomer_conc_mol_l instead")
		}
		c.Conc = conc
		v := float64(conc)
		bulkNote = &Reason{Code: "bulk_concentration_estimate", Effect: judge.EffectNote, Value: &v, Unit: "mol/L",
			Detail: fmt.Sprintf("neat monomer: [M]0 ≈ %.2f mol/L ± %.0f%% from the McGowan volume (liquid molar volume ≈ 1.25 × McGowan volume)", v, 100*rel)}
	}
	if len(s.Olefins) == 0 {
		d := base
		d.RingSize = 0
		d.FunctionalGroups = s.Groups
		r := judge.Judge(&d, nil, c)
		r.Reasons[0].Detail += s.WhyNoOlefin()
		return r, nil
	}
	first, cands := rankOlefins(ctx, s, &base, c) // the olefin that opens, then the others
	best := first.r
	best.Descriptors.RingOlefins = 1 + len(cands)
	// equivalent olefins (same ring, substitution, core and estimate) are listed once, counted
	same := func(a, b olefinCand) bool {
		return a.o.Desc.RingSize == b.o.Desc.RingSize && a.o.Desc.OlefinSubstitution == b.o.Desc.OlefinSubstitution &&
			a.o.Desc.CoreKey == b.o.Desc.CoreKey && a.r.Verdict == b.r.Verdict && math.Abs(a.e.DHkJmol-b.e.DHkJmol) < 0.01
	}
	equivalentToBest := 0
	for _, x := range cands {
		if same(x, first) {
			equivalentToBest++
			continue
		}
		merged := false
		for k := range best.Descriptors.OtherRingOlefins {
			o := &best.Descriptors.OtherRingOlefins[k]
			if o.RingSize == x.o.Desc.RingSize && o.OlefinSubstitution == x.o.Desc.OlefinSubstitution && o.SkeletonKey == x.o.Desc.CoreKey &&
				math.Abs(o.DHkJmol-describe.Round(x.e.DHkJmol, 2)) < 0.01 {
				o.Count = max(o.Count, 1) + 1
				merged = true
				break
			}
		}
		if merged {
			continue
		}
		best.Descriptors.OtherRingOlefins = append(best.Descriptors.OtherRingOlefins, describe.OlefinSummary{
			RingSize: x.o.Desc.RingSize, RingSystem: x.o.Desc.RingSystem, OlefinSubstitution: x.o.Desc.OlefinSubstitution,
			SkeletonKey: x.o.Desc.CoreKey, DHkJmol: describe.Round(x.e.DHkJmol, 2), Note: "verdict for this olefin alone: " + x.r.Verdict,
		})
	}
	if equivalentToBest > 0 {
		best.Descriptors.EquivalentRingOlefins = equivalentToBest
	}
	best.Descriptors.RingOlefins += s.Skipped
	if n := 1 + len(cands) + s.Skipped; n > 1 {
		det := fmt.Sprintf("%d ring olefins: screened on the most reactive; the others can react later (cross-linking, e.g. the cyclopentene ring of dicyclopentadiene)", n)
		if s.Skipped > 0 {
			det += fmt.Sprintf("; %d were not analysed (more than %d ring olefins)", s.Skipped, describe.MaxOlefinsAnalysed)
		}
		best.Reasons = append(best.Reasons, Reason{Code: "several_ring_olefins", Effect: judge.EffectNote, Detail: det})
	}
	if bulkNote != nil {
		best.Reasons = append(best.Reasons, *bulkNote)
	}
	if len(s.CounterIons) > 0 {
		best.Reasons = append(best.Reasons, Reason{Code: "counter_ion", Effect: judge.EffectNote, Detail: saltDetail(s.CounterIons)})
	}
	return best, nil
}

// judgeOlefin estimates and judges ring olefin o of s (base: the molecule's descriptors);
// measured marks the olefin the measurement meas (with its note) belongs to.
func judgeOlefin(ctx context.Context, s *Structure, o *describe.Olefin, base *Descriptors, c Conditions, meas *thermo.Measurement, measNote string, measured bool) olefinCand {
	e := thermo.EstimateFor(ctx, s, o, c.ThermoMethod)
	if measured {
		e.Measured, e.MeasuredNote = meas, measNote
	}
	// the molecule's descriptors are merged into the olefin's own (they are the same for every
	// olefin of s, so merging again changes nothing): no copy to allocate
	o.Desc.MergeMolecule(base)
	return olefinCand{o, judge.Judge(&o.Desc, &e, c), e}
}

// olefinCand is one ring olefin of a structure with its estimate and verdict.
type olefinCand struct {
	o *describe.Olefin
	r Result
	e thermo.Estimate
}

// rankOlefins judges every analysed ring olefin of s (base: the molecule's descriptors) and
// returns the most reactive, which opens, and the others in order. A structure with one ring
// olefin (the common case) needs no candidates' slice (each candidate holds a whole result).
func rankOlefins(ctx context.Context, s *Structure, base *Descriptors, c Conditions) (olefinCand, []olefinCand) {
	meas, measNote := thermo.MeasuredFor(s)
	var measOlefin *describe.Olefin
	if meas != nil {
		measOlefin = thermo.MeasuredOlefin(s)
	}
	if len(s.Olefins) == 1 {
		o := s.Olefins[0]
		return judgeOlefin(ctx, s, o, base, c, meas, measNote, o == measOlefin), nil
	}
	cands := make([]olefinCand, 0, len(s.Olefins))
	for _, o := range s.Olefins {
		cands = append(cands, judgeOlefin(ctx, s, o, base, c, meas, measNote, o == measOlefin))
	}
	// by index: the candidates hold whole results, too large to copy per comparison
	sort.SliceStable(cands, func(i, j int) bool { return judge.MoreReactive(&cands[i].r, &cands[j].r) })
	return cands[0], cands[1:]
}

// Drawing is a 2-D depiction of a structure and the bond of the ring olefin that opens (−1 when
// it has none).
type Drawing struct {
	*depict.Layout
	OpeningBond int
}

// Depict lays out a SMILES in 2-D (every component, counter-ions included) and marks the ring
// olefin that would open under default conditions (the fast tier decides which, as screening
// does). Errors: *SMILESError, or ErrTooComplex for structures over the work bound.
func Depict(text string) (*Drawing, error) {
	s, err := describe.Describe(text)
	if err != nil {
		return nil, err
	}
	d := &Drawing{Layout: depict.Compute(s.Mol, s.Rings), OpeningBond: -1}
	if len(s.Olefins) > 0 && checkWork(s) == nil {
		c := DefaultConditions()
		c.ThermoMethod = units.ThermoTable
		base := s.MoleculeDescriptors()
		first, _ := rankOlefins(context.Background(), s, &base, c)
		d.OpeningBond = first.o.Bond
	}
	return d, nil
}

// ScreenDescriptors screens a caller's descriptor record.
func ScreenDescriptors(d Descriptors, c Conditions) (Result, error) {
	if err := d.Validate(); err != nil {
		return Result{}, err
	}
	if c.Bulk {
		return Result{}, units.FieldErr("conditions.bulk", "bulk needs a structure (smiles) to estimate the neat density; give monomer_conc_mol_l for a descriptor record")
	}
	if d.RingSize == 0 {
		return judge.Judge(&d, nil, c), nil
	}
	e := thermo.EstimateRecord(&d)
	return judge.Judge(&d, &e, c), nil
}

// saltTexts holds the counter_ion reason's text per list of other components (design choice:
// 4,096 lists, then the cache starts afresh).
var saltTexts = memo.New[string](4096)

// saltDetail is the counter_ion reason's text for the other components' formulas.
func saltDetail(ions []string) string {
	const lead = "salt: screened the largest organic component; other components: "
	var stack [320]byte
	b := append(stack[:0], lead...)
	for i, f := range ions {
		if i > 0 {
			b = append(b, "; "...)
		}
		b = append(b, f...)
	}
	return saltTexts.DoBytes(b, func(text string) string { return text })
}
