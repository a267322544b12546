package screening

import (
	"context"
	"fmt"
	"strings"

	"ringsieve/screening/forcefield"
	"ringsieve/screening/mol"
	"ringsieve/screening/molfile"
	"ringsieve/screening/smiles"
	"ringsieve/screening/units"
)

// Force-field names re-exported for callers.
type (
	Variant      = forcefield.Variant
	EnergyTerms  = forcefield.Terms
	SearchBudget = forcefield.Budget
)

// Force-field variants and sentinels.
const (
	MMFF94  = forcefield.MMFF94
	MMFF94s = forcefield.MMFF94s
)

var (
	// ErrBudget matches a molecule or request past the force field's work budget.
	ErrBudget = forcefield.ErrBudget
	// ErrEmbedding matches a structure for which no 3-D geometry with its stereo was found.
	ErrEmbedding = forcefield.ErrEmbedding
	// ErrNotCovered matches a structure the force field cannot type or parameterize.
	ErrNotCovered = forcefield.ErrNotCovered
)

// ParseVariant reads "mmff94" or "mmff94s" ("" is mmff94).
func ParseVariant(s string) (Variant, error) {
	if strings.TrimSpace(s) == "" {
		return MMFF94, nil
	}
	v, err := forcefield.ParseVariant(s)
	if err != nil {
		return v, units.FieldErr("variant", "%v", err)
	}
	return v, nil
}

// ConformerRequest asks for the lowest conformers of one structure: a SMILES (stereo from its
// '@' and '/' '\' marks) or a molfile (stereo from its 3-D coordinates when it has them).
type ConformerRequest struct {
	SMILES  string
	Molfile string
	Max     int
	Variant Variant
	Seed    uint64
	Budget  SearchBudget
}

// ConformerOut is one conformer: its energy and a 3-D V2000 molfile with explicit hydrogens.
type ConformerOut struct {
	EnergyKcalMol float64 `json:"energy_kcal_mol"`
	Molfile       string  `json:"molfile"`
}

// ConformerSet is the outcome of a conformer search.
type ConformerSet struct {
	SMILES        string         `json:"smiles"`
	Variant       string         `json:"variant"`
	MinEnergy     float64        `json:"min_energy_kcal_mol"`
	Distinct      int            `json:"conformers"`
	Minimizations int            `json:"minimizations"`
	Converged     bool           `json:"converged"`
	Conformers    []ConformerOut `json:"-"`
}

// MaxConformersPerRequest caps the conformers one request may ask for.
const MaxConformersPerRequest = forcefield.CeilingConformers

// Conformers runs the conformer search for one structure. Errors: ErrSMILES or ErrInvalid
// (malformed input, max outside 1…MaxConformersPerRequest), ErrBudget, ErrEmbedding,
// ErrNotCovered (elements or groups the force field does not cover), or the context's error.
func Conformers(ctx context.Context, req ConformerRequest) (*ConformerSet, error) {
	if req.Max < 0 || req.Max > MaxConformersPerRequest {
		return nil, units.FieldErr("max", "must be between 1 and %d", MaxConformersPerRequest)
	}
	opt := forcefield.SearchOptions{Variant: req.Variant, Seed: req.Seed, Budget: req.Budget}
	opt.Budget.MaxConformers = req.Max
	var m *mol.Molecule
	title := strings.TrimSpace(req.SMILES)
	switch {
	case strings.TrimSpace(req.Molfile) != "":
		rec, err := molfile.ParseRecord(req.Molfile)
		if err != nil {
			return nil, units.Refield(err, "molfile")
		}
		m = rec.Mol
		title = rec.Name
		if rec.HasCoords && is3D(rec.Coords) && m.ImplicitHCount() == 0 {
			x := make([]float64, 0, 3*len(rec.Coords))
			for _, c := range rec.Coords {
				x = append(x, c[0], c[1], c[2])
			}
			st := forcefield.StereoFromCoords(m, x)
			opt.Stereo, opt.Start = &st, x
		}
	default:
		var err error
		m, err = smiles.Parse(req.SMILES)
		if err != nil {
			return nil, units.Refield(err, "smiles")
		}
	}
	res, err := forcefield.Search(ctx, m, opt)
	if err != nil {
		return nil, fmt.Errorf("conformer search: %w", err)
	}
	out := &ConformerSet{SMILES: req.SMILES, Variant: req.Variant.String(), Distinct: res.Distinct,
		Minimizations: res.Minimizations, Converged: res.Converged}
	for k, c := range res.Conformers {
		var b strings.Builder
		w := molfile.Written{Title: title, Coords: c.X, ThreeD: true,
			Comment: fmt.Sprintf("conformer %d of %s, %s %.4f kcal/mol", k+1, title, req.Variant, c.EnergyKcalMol)}
		if err := molfile.Write(&b, res.System.Mol, w); err != nil {
			return nil, err
		}
		out.Conformers = append(out.Conformers, ConformerOut{EnergyKcalMol: round4(c.EnergyKcalMol), Molfile: b.String()})
	}
	if len(out.Conformers) > 0 {
		out.MinEnergy = out.Conformers[0].EnergyKcalMol
	}
	return out, nil
}

func round4(v float64) float64 {
	return float64(int64(v*1e4+sign(v)*0.5)) / 1e4
}

func sign(v float64) float64 {
	if v < 0 {
		return -1
	}
	return 1
}

func is3D(c [][3]float64) bool {
	for _, p := range c {
		if p[2] != 0 {
			return true
		}
	}
	return false
}

// EnergyRecord is the force-field energy of one molfile at its own coordinates.
type EnergyRecord struct {
	Name      string      `json:"name"`
	Energy    float64     `json:"energy_kcal_mol"`
	Terms     EnergyTerms `json:"terms"`
	AtomTypes []int       `json:"atom_types"`
}

// MolfileEnergy types a molfile (every hydrogen written as an atom) and returns the energy at the
// coordinates given, nothing moved. Errors: ErrInvalid for a malformed molfile, missing
// coordinates or implicit hydrogens; ErrNotCovered for structures the force field does not
// cover.
func MolfileEnergy(text string, v Variant) (*EnergyRecord, error) {
	rec, err := molfile.ParseRecord(text)
	if err != nil {
		return nil, err
	}
	if !rec.HasCoords {
		return nil, units.FieldErr("molfile", "coordinates are not numbers")
	}
	for i, a := range rec.Mol.Atoms {
		if a.HCount > 0 {
			return nil, units.FieldErr("molfile", "atom %d carries %d hydrogens that are not written as atoms; energies need every atom's position", i+1, a.HCount)
		}
	}
	s, err := forcefield.Setup(rec.Mol, v)
	if err != nil {
		return nil, err
	}
	x := make([]float64, 0, 3*len(rec.Coords))
	for _, c := range rec.Coords {
		x = append(x, c[0], c[1], c[2])
	}
	t := s.Terms(x)
	return &EnergyRecord{Name: rec.Name, Energy: t.Total(), Terms: t, AtomTypes: s.Types}, nil
}
