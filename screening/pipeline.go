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
	return screenStructure(ctx, s, c, nil)
}

// Reuse is storage that screening reuses from one structure to the next, for a caller that is
// done with each result before it screens the next (a streaming worker that renders a row and
// drops the result; a job worker that encodes it): the molecule's workspace, the result blocks
// (judge.Blocks), the olefin candidates, the estimate notes, the other-olefin list and the
// formulas' bytes. A result screened with a Reuse — its texts and lists included — is valid
// only until the next screening with the same Reuse: render, encode or copy it first, never
// keep it. The zero value is ready; a Reuse is for one goroutine.
type Reuse struct {
	ws     describe.Workspace
	blocks judge.Blocks
	cands  []olefinCand             // a structure's judged ring olefins, when it has several
	notes  []thermo.Note            // an olefin's estimate notes, read into its result's reasons
	others []describe.OlefinSummary // the result's other ring olefins
	text   []byte                   // the result's formulas (describe.MoleculeDescriptorsIn)
}

// blockList is u's result blocks; nil (blocks of their own) when u is nil.
func (u *Reuse) blockList() *judge.Blocks {
	if u == nil {
		return nil
	}
	return &u.blocks
}

// ScreenWith is ScreenContext reusing u's storage (see Reuse: the result is valid until the
// next call with u).
func ScreenWith(ctx context.Context, u *Reuse, src Source, c Conditions) (Result, error) {
	u.blocks.Reset()
	u.text = u.text[:0]
	if src.Molfile != "" || (src.Descriptors != nil && strings.TrimSpace(src.SMILES) == "") {
		return ScreenContext(ctx, src, c) // as ScreenContext chooses; no storage of u's to reuse
	}
	defer u.release()
	s, err := describe.DescribeInto(&u.ws, src.SMILES)
	if err != nil {
		return Result{}, err
	}
	return screenStructure(ctx, s, c, u)
}

// release empties u's molecule, dropping its storage when a huge structure grew it (as
// putWorkspace does for the pool).
func (u *Reuse) release() {
	if cap(u.ws.Mol.Atoms) > pooledAtomsMax {
		u.ws = describe.Workspace{}
		return
	}
	u.ws.Mol.Reset()
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
	return screenStructure(ctx, s, c, nil)
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
	return screenStructure(ctx, s, c, nil)
}

// screenStructure is ScreenStructureContext reusing u's storage (nil: none).
func screenStructure(ctx context.Context, s *Structure, c Conditions, u *Reuse) (Result, error) {
	if err := checkWork(s); err != nil {
		return Result{}, err
	}
	var text *[]byte
	if u != nil {
		text = &u.text
	}
	base := s.MoleculeDescriptorsIn(text)
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
		r := judge.JudgeWith(u.blockList(), &d, nil, c)
		r.Reasons[0].Detail += s.WhyNoOlefin()
		return r, nil
	}
	first, cands := rankOlefins(ctx, s, &base, c, u) // the olefin that opens, then the others
	best := first.r
	best.Descriptors.RingOlefins = 1 + len(cands)
	// equivalent olefins (same ring, substitution, core and estimate) are listed once, counted
	same := func(a, b *olefinCand) bool {
		return a.o.Desc.RingSize == b.o.Desc.RingSize && a.o.Desc.OlefinSubstitution == b.o.Desc.OlefinSubstitution &&
			a.o.Desc.CoreKey == b.o.Desc.CoreKey && a.r.Verdict == b.r.Verdict && math.Abs(a.e.DHkJmol-b.e.DHkJmol) < 0.01
	}
	equivalentToBest := 0
	if u != nil && len(cands) > 0 {
		best.Descriptors.OtherRingOlefins = u.others[:0]
	}
	for i := range cands {
		x := &cands[i]
		if same(x, &first) {
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
			SkeletonKey: x.o.Desc.CoreKey, DHkJmol: describe.Round(x.e.DHkJmol, 2), Note: aloneNote(x.r.Verdict),
		})
	}
	if u != nil && len(cands) > 0 {
		u.others = best.Descriptors.OtherRingOlefins[:0]
		if len(best.Descriptors.OtherRingOlefins) == 0 {
			best.Descriptors.OtherRingOlefins = nil // as without reuse: no list
		}
	}
	if equivalentToBest > 0 {
		best.Descriptors.EquivalentRingOlefins = equivalentToBest
	}
	best.Descriptors.RingOlefins += s.Skipped
	if n := 1 + len(cands) + s.Skipped; n > 1 {
		det := severalText(n)
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
func judgeOlefin(ctx context.Context, s *Structure, o *describe.Olefin, base *Descriptors, c Conditions, meas *thermo.Measurement, measNote string, measured bool, u *Reuse) olefinCand {
	var notes []thermo.Note
	if u != nil {
		notes = u.notes
	}
	e := thermo.EstimateInto(ctx, s, o, c.ThermoMethod, notes)
	if measured {
		e.Measured, e.MeasuredNote = meas, measNote
	}
	// the molecule's descriptors are merged into the olefin's own (they are the same for every
	// olefin of s, so merging again changes nothing): no copy to allocate
	o.Desc.MergeMolecule(base)
	cand := olefinCand{o, judge.JudgeWith(u.blockList(), &o.Desc, &e, c), e}
	if u != nil {
		// the result's reasons hold copies of the notes: their storage is the next olefin's
		u.notes, cand.e.Notes = e.Notes[:0], nil
	}
	return cand
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
func rankOlefins(ctx context.Context, s *Structure, base *Descriptors, c Conditions, u *Reuse) (olefinCand, []olefinCand) {
	meas, measNote := thermo.MeasuredFor(s)
	var measOlefin *describe.Olefin
	if meas != nil {
		measOlefin = thermo.MeasuredOlefin(s)
	}
	if len(s.Olefins) == 1 {
		o := s.Olefins[0]
		return judgeOlefin(ctx, s, o, base, c, meas, measNote, o == measOlefin, u), nil
	}
	var cands []olefinCand
	if u != nil {
		cands = u.cands[:0]
	}
	for _, o := range s.Olefins {
		cands = append(cands, judgeOlefin(ctx, s, o, base, c, meas, measNote, o == measOlefin, u))
	}
	if u != nil {
		u.cands = cands
	}
	// most reactive first; stable (equally reactive olefins keep their order). An insertion
	// sort: a structure has at most MaxOlefinsAnalysed, and sort.SliceStable's swapper costs
	// two allocations.
	for i := 1; i < len(cands); i++ {
		for j := i; j > 0 && judge.MoreReactive(&cands[j].r, &cands[j-1].r); j-- {
			cands[j], cands[j-1] = cands[j-1], cands[j]
		}
	}
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
		first, _ := rankOlefins(context.Background(), s, &base, c, nil)
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

// severalTexts is the several_ring_olefins reason's text per count of ring olefins up to
// MaxOlefinsAnalysed, written once.
var severalTexts = func() []string {
	out := make([]string, describe.MaxOlefinsAnalysed+1)
	for n := range out {
		out[n] = makeSeveralText(n)
	}
	return out
}()

func severalText(n int) string {
	if n < len(severalTexts) {
		return severalTexts[n]
	}
	return makeSeveralText(n)
}

func makeSeveralText(n int) string {
	return fmt.Sprintf("%d ring olefins: screened on the most reactive; the others can react later (cross-linking, e.g. the cyclopentene ring of dicyclopentadiene)", n)
}

// aloneNotes is the note of another ring olefin's summary for each verdict (judge.Verdicts'
// order), written once.
var aloneNotes = func() []string {
	out := make([]string, len(judge.Verdicts))
	for i, v := range judge.Verdicts {
		out[i] = "verdict for this olefin alone: " + v
	}
	return out
}()

// aloneNote is the note of another ring olefin's summary whose verdict is v.
func aloneNote(v string) string {
	if i := judge.VerdictRank(v); i < len(aloneNotes) {
		return aloneNotes[i]
	}
	return "verdict for this olefin alone: " + v
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
