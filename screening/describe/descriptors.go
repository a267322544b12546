package describe

import (
	"math"
	"sort"

	"ringsieve/screening/rings"
	"ringsieve/screening/units"
)

// Ring-system kinds (descriptor ring_system).
const (
	SystemMonocyclic = rings.KindMonocyclic
	SystemBridged    = rings.KindBridged
	SystemFused      = rings.KindFused
	SystemSpiro      = rings.KindSpiro
)

// Conjugation partners of a ring olefin (descriptor conjugated_with).
const (
	ConjRingOlefin = "ring_olefin" // another C=C of the same ring: a conjugated diene in the ring
	ConjOlefin     = "olefin"      // an exocyclic or other-ring C=C
	ConjCarbonyl   = "carbonyl"
	ConjNitrile    = "nitrile"
	ConjAromatic   = "aromatic"
)

// OlefinSummary describes a ring olefin other than the one screened.
type OlefinSummary struct {
	RingSize           int     `json:"ring_size"`
	RingSystem         string  `json:"ring_system"`
	OlefinSubstitution int     `json:"olefin_substitution"`
	SkeletonKey        string  `json:"skeleton_key,omitempty"`
	DHkJmol            float64 `json:"dh_kj_mol"`
	Note               string  `json:"note,omitempty"`
	// Count is how many equivalent ring olefins this entry stands for (by symmetry: the four
	// C=C of cyclooctatetraene are one entry with the screened one and count 3); 0 means 1.
	Count int `json:"count,omitempty"`
}

// Descriptors is the ROMP descriptor record: what a caller may supply without a structure, and
// what ringsieve derives from one. Only RingSize is required in a supplied record; 0 means the
// monomer has no ring C=C.
type Descriptors struct {
	RingSize            int      `json:"ring_size"`
	RingSystem          string   `json:"ring_system,omitempty"`
	OlefinSubstitution  int      `json:"olefin_substitution,omitempty"`
	StrainkJmol         *float64 `json:"strain_kj_mol,omitempty"`
	DHkJmol             *float64 `json:"dh_kj_mol,omitempty"`
	DSJmolK             *float64 `json:"ds_j_mol_k,omitempty"`
	Conjugated          bool     `json:"conjugated"`
	ConjugatedWith      []string `json:"conjugated_with,omitempty"`
	EWGOnOlefinRing     bool     `json:"ewg_on_olefin_ring"`
	EWGOnOlefin         bool     `json:"ewg_on_olefin"`
	AllylicSubstituents int      `json:"allylic_substituents"`
	BulkyAllylic        bool     `json:"bulky_allylic,omitempty"`
	// QuaternaryAllylicEWG: a fully substituted allylic ring carbon carries a carbonyl or nitrile
	// directly (the ring-opened alkylidene is crowded and electron-poor).
	QuaternaryAllylicEWG    bool     `json:"quaternary_allylic_ewg,omitempty"`
	HomoallylicSubstituents int      `json:"homoallylic_substituents,omitempty"`
	GemDisubstituted        int      `json:"gem_disubstituted,omitempty"`
	TransOlefin             bool     `json:"trans_olefin"`
	TransRingFusion         bool     `json:"trans_ring_fusion,omitempty"`
	ExoEndo                 string   `json:"exo_endo,omitempty"`
	FunctionalGroups        []string `json:"functional_groups,omitempty"`

	// Derived from a structure only.
	SMILES        string  `json:"smiles,omitempty"`
	Formula       string  `json:"formula,omitempty"`
	MolWeightGmol float64 `json:"mol_weight_g_mol,omitempty"`
	// RecordFormula and RecordMolWeightGmol describe the whole input as weighed (a salt with its
	// counter-ions, a hydrate); Formula and MolWeightGmol the screened component (contract v1.1).
	RecordFormula       string  `json:"record_formula,omitempty"`
	RecordMolWeightGmol float64 `json:"record_mol_weight_g_mol,omitempty"`
	MonoisotopicMass    float64 `json:"monoisotopic_mass,omitempty"`
	HeavyAtoms          int     `json:"heavy_atoms,omitempty"`
	RingCount           int     `json:"ring_count,omitempty"`
	AromaticAtoms       int     `json:"aromatic_atoms,omitempty"`
	RingSystemRings     int     `json:"ring_system_rings,omitempty"`
	SkeletonKey         string  `json:"skeleton_key,omitempty"`
	CoreKey             string  `json:"core_key,omitempty"`
	// EquivalentRingOlefins counts the other ring olefins equivalent to the screened one (same
	// ring, substitution and estimate), which are not listed again.
	EquivalentRingOlefins int             `json:"equivalent_ring_olefins,omitempty"`
	RingOlefins           int             `json:"ring_olefins,omitempty"`
	OtherRingOlefins      []OlefinSummary `json:"other_ring_olefins,omitempty"`
	CounterIons           []string        `json:"counter_ions,omitempty"`
	// FromStructure marks a record derived from SMILES (set by the describer).
	FromStructure bool `json:"from_structure,omitempty"`
}

// Bounds of a supplied record (design choices: beyond any ring olefin we screen).
const (
	MaxRecordRingSize = 64
	MaxRecordCount    = 8
)

// Validate checks a caller-supplied record and fills defaults (olefin substitution 2, ring system
// monocyclic). Errors are *units.FieldError values.
func (d *Descriptors) Validate() error {
	if d.RingSize < 0 || (d.RingSize > 0 && d.RingSize < 3) || d.RingSize > MaxRecordRingSize {
		return units.FieldErr("descriptors.ring_size", "must be 0 (no ring C=C) or 3 to 64 (got %d)", d.RingSize)
	}
	switch d.RingSystem {
	case "":
		d.RingSystem = SystemMonocyclic
	case SystemMonocyclic, SystemBridged, SystemFused, SystemSpiro:
	default:
		return units.FieldErr("descriptors.ring_system", "must be monocyclic, bridged, fused or spiro (got %q)", d.RingSystem)
	}
	if d.OlefinSubstitution == 0 {
		d.OlefinSubstitution = 2
	}
	if d.OlefinSubstitution < 2 || d.OlefinSubstitution > 4 {
		return units.FieldErr("descriptors.olefin_substitution", "must be 2, 3 or 4 (got %d)", d.OlefinSubstitution)
	}
	for name, v := range map[string]*float64{"descriptors.strain_kj_mol": d.StrainkJmol, "descriptors.dh_kj_mol": d.DHkJmol, "descriptors.ds_j_mol_k": d.DSJmolK} {
		if v != nil && (math.IsNaN(*v) || math.IsInf(*v, 0) || math.Abs(*v) > units.MaxAbsThermo) {
			return units.FieldErr(name, "must be a finite number within ±500")
		}
	}
	if d.StrainkJmol != nil && *d.StrainkJmol < 0 {
		return units.FieldErr("descriptors.strain_kj_mol", "must not be negative")
	}
	if d.DSJmolK != nil && d.DHkJmol == nil {
		return units.FieldErr("descriptors.ds_j_mol_k", "supply dh_kj_mol with ds_j_mol_k")
	}
	if d.AllylicSubstituents < 0 || d.AllylicSubstituents > MaxRecordCount {
		return units.FieldErr("descriptors.allylic_substituents", "must be 0 to 8")
	}
	if d.HomoallylicSubstituents < 0 || d.HomoallylicSubstituents > MaxRecordCount {
		return units.FieldErr("descriptors.homoallylic_substituents", "must be 0 to 8")
	}
	if d.GemDisubstituted < 0 || d.GemDisubstituted > MaxRecordCount {
		return units.FieldErr("descriptors.gem_disubstituted", "must be 0 to 8")
	}
	switch d.ExoEndo {
	case "", "exo", "endo", "exo,endo", "unspecified":
	default:
		return units.FieldErr("descriptors.exo_endo", "must be exo, endo, exo,endo or unspecified")
	}
	for _, c := range d.ConjugatedWith {
		switch c {
		case ConjRingOlefin, ConjOlefin, ConjCarbonyl, ConjNitrile, ConjAromatic:
		default:
			return units.FieldErr("descriptors.conjugated_with", "unknown conjugation partner %q", c)
		}
	}
	if len(d.ConjugatedWith) > 0 {
		d.Conjugated = true
	} else if d.Conjugated {
		// A bare "conjugated": true in a record means a conjugated diene in the ring.
		d.ConjugatedWith = []string{ConjRingOlefin}
	}
	for _, g := range d.FunctionalGroups {
		if !IsKnownFunctionalGroup(g) {
			return units.FieldErr("descriptors.functional_groups", "unknown functional group %q", g)
		}
	}
	sort.Strings(d.FunctionalGroups)
	return nil
}

// ConjugatedWithKind reports a conjugation partner of the given kind.
func (d *Descriptors) ConjugatedWithKind(kind string) bool {
	for _, c := range d.ConjugatedWith {
		if c == kind {
			return true
		}
	}
	return false
}

// HasGroup reports a functional group of the inventory.
func (d *Descriptors) HasGroup(g string) bool {
	for _, x := range d.FunctionalGroups {
		if x == g {
			return true
		}
	}
	return false
}
