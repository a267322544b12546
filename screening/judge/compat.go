package judge

import (
	"cmp"
	"slices"

	"ringsieve/screening/describe"
	"ringsieve/screening/internal/memo"
	"ringsieve/screening/units"
)

// Catalyst-class × functional-group tolerance.
//
// Changes after a review of every cell (issue "a day at the bench"): phosphine poisons the
// ruthenium classes (was "slows"); isocyanide and sulfonic acid added; see the README's list.
//
// Source: the class × group matrix and ranking of what each metal's alkylidene attacks first, as
// compiled in the project reference romp_facts.md section (a) from the
// functional-group tolerance reviews: Trnka et al., Acc. Chem. Res. 2001, 34, 18,
// DOI 10.1021/ar000114f, reprinted in Bielawski et al., Prog. Polym. Sci. 2007, 32, 1,
// DOI 10.1016/j.progpolymsci.2006.08.006 (cells: from memory unless a cell names a read source
// in that file). Where the matrix gives two codes for a class ("tolerated / conditional") the
// milder is used for the verdict and the stricter is stated in the remedy.

// Tolerance codes.
const (
	TolTolerated   = "tolerated"
	TolSlows       = "slows"
	TolPoisons     = "poisons"
	TolReacts      = "reacts"
	TolConditional = "conditional"
)

type tolRow struct {
	ruPhos, ruNHC, ruPy, moW, classical string
	remedy                              string
}

// tolerance maps a functional group to its row; groups not listed are tolerated by every class.
var tolerance = map[string]tolRow{
	describe.FGCarboxylicAcid:  {TolTolerated, TolTolerated, TolTolerated, TolPoisons, TolPoisons, "protic acids protonate early-metal alkylidenes: use a ruthenium class, or protect the acid as an ester"},
	describe.FGCarboxylate:     {TolConditional, TolConditional, TolConditional, TolPoisons, TolPoisons, "use a ruthenium class; free carboxylate can bind ruthenium, run in the acid form or as an ester"},
	describe.FGAlcohol:         {TolTolerated, TolTolerated, TolTolerated, TolPoisons, TolPoisons, "use a ruthenium class, or protect the alcohol as a silyl ether or ester"},
	describe.FGPhenol:          {TolTolerated, TolTolerated, TolTolerated, TolPoisons, TolPoisons, "use a ruthenium class, or protect the phenol"},
	describe.FGWater:           {TolTolerated, TolTolerated, TolTolerated, TolPoisons, TolPoisons, "dry the monomer, or use a ruthenium class"},
	describe.FGAromaticNHetero: {TolTolerated, TolTolerated, TolTolerated, TolPoisons, TolPoisons, "protic N–H: use a ruthenium class, or protect the nitrogen"},
	describe.FGAldehyde:        {TolTolerated, TolTolerated, TolTolerated, TolReacts, TolPoisons, "aldehydes olefinate Mo/W alkylidenes (used on purpose to end chains): use a ruthenium class, or protect as an acetal"},
	describe.FGKetone:          {TolTolerated, TolTolerated, TolTolerated, TolSlows, TolPoisons, "use a ruthenium class; Mo/W alkylidenes can olefinate ketones slowly"},
	describe.FGEster:           {TolTolerated, TolTolerated, TolTolerated, TolTolerated, TolConditional, "Lewis-basic esters deactivate many classical co-catalyst systems (Romer et al., ACS Comb. Sci. 2014, seen in abstract); prefer a well-defined class"},
	describe.FGAmide:           {TolTolerated, TolTolerated, TolTolerated, TolTolerated, TolConditional, "tertiary amides: classical systems are deactivated by Lewis bases; prefer a well-defined class"},
	describe.FGImide:           {TolTolerated, TolTolerated, TolTolerated, TolTolerated, TolConditional, "classical systems are deactivated by Lewis bases; prefer a well-defined class"},
	describe.FGAnhydride:       {TolTolerated, TolTolerated, TolTolerated, TolTolerated, TolConditional, "keep dry (hydrolysis gives the diacid); prefer a well-defined class"},
	describe.FGCarbamate:       {TolTolerated, TolTolerated, TolTolerated, TolTolerated, TolConditional, "prefer a well-defined class"},
	describe.FGNitrile:         {TolSlows, TolTolerated, TolTolerated, TolTolerated, TolPoisons, "nitriles coordinate the first-generation phosphine type and classical systems; use the N-heterocyclic-carbene or pyridine-adduct class"},
	describe.FGPrimaryAmine:    {TolPoisons, TolPoisons, TolPoisons, TolPoisons, TolPoisons, "primary amines strip the ruthenium alkylidene and poison early metals: protect as an ammonium salt (non-coordinating anion), carbamate or amide"},
	describe.FGSecondaryAmine:  {TolPoisons, TolPoisons, TolPoisons, TolPoisons, TolPoisons, "protect as an ammonium salt, carbamate or amide"},
	describe.FGHinderedAmine:   {TolSlows, TolSlows, TolSlows, TolConditional, TolPoisons, "a secondary amine flanked by fully substituted carbons binds ruthenium weakly; expect slower propagation"},
	describe.FGTertiaryAmine:   {TolSlows, TolSlows, TolSlows, TolConditional, TolPoisons, "tertiary amines slow ruthenium catalysts (strong amidine bases decompose them); protonate for clean living polymerization"},
	describe.FGAmmonium:        {TolTolerated, TolTolerated, TolTolerated, TolPoisons, TolPoisons, "protic ammonium N–H: use a ruthenium class"},
	describe.FGPyridineN:       {TolSlows, TolSlows, TolSlows, TolSlows, TolPoisons, "pyridine-type nitrogen competes for the metal: expect slower propagation, or protonate"},
	describe.FGThiol:           {TolPoisons, TolPoisons, TolPoisons, TolPoisons, TolPoisons, "free thiols poison every class: protect as a thioester or disulfide"},
	describe.FGThioether:       {TolSlows, TolSlows, TolSlows, TolSlows, TolPoisons, "thioethers chelate and slow propagation"},
	describe.FGThioester:       {TolTolerated, TolTolerated, TolTolerated, TolConditional, TolPoisons, ""},
	describe.FGPhosphine:       {TolPoisons, TolPoisons, TolPoisons, TolSlows, TolPoisons, "a free phosphine in every monomer unit outnumbers the catalyst by the monomer-to-initiator ratio: it blocks the ruthenium's open site and decomposes the N-heterocyclic-carbene types (common practice); protect as the phosphine–borane or the oxide"},
	describe.FGIsocyanide:      {TolPoisons, TolPoisons, TolPoisons, TolPoisons, TolPoisons, "isocyanides bind ruthenium alkylidenes irreversibly — they are used to quench ROMP (common practice) — and coordinate early metals: no metathesis catalyst class tolerates one per monomer unit"},
	describe.FGSulfonicAcid:    {TolConditional, TolConditional, TolConditional, TolPoisons, TolPoisons, "a strong protic acid: protonates Mo/W and classical alkylidenes; ruthenium classes survive acid additives but not a free sulfonic acid in every unit at high conversion (common practice) — polymerize the sulfonate ester or a salt with a non-coordinating cation"},
	describe.FGPhosphineBorane: {TolTolerated, TolTolerated, TolTolerated, TolConditional, TolConditional, ""},
	describe.FGPhosphite:       {TolSlows, TolSlows, TolSlows, TolSlows, TolPoisons, "phosphites are used on purpose as latency agents: expect an induction period"},
	describe.FGSulfoxide:       {TolSlows, TolSlows, TolSlows, TolSlows, TolPoisons, ""},
	describe.FGSulfonamide:     {TolTolerated, TolTolerated, TolTolerated, TolConditional, TolPoisons, "N–H sulfonamides are protic toward early metals"},
	describe.FGVinylEther:      {TolReacts, TolReacts, TolReacts, TolReacts, TolPoisons, "an acyclic enol ether forms a Fischer carbene with ruthenium and ends the chain; remove or replace it"},
	describe.FGTerminalOlefin:  {TolReacts, TolReacts, TolReacts, TolReacts, TolReacts, "acyclic olefins transfer chains (lower M_n, branching or cross-linking); acceptable when intended"},
	describe.FGAcyclicOlefin:   {TolReacts, TolReacts, TolReacts, TolReacts, TolReacts, "acyclic olefins transfer chains; acceptable when intended"},
	describe.FGAlkyne:          {TolReacts, TolReacts, TolReacts, TolReacts, TolReacts, "alkynes undergo enyne metathesis or alkyne polymerization; protect (e.g. silyl) or expect side reactions"},
	describe.FGEther:           {TolTolerated, TolTolerated, TolTolerated, TolTolerated, TolConditional, ""},
	describe.FGSilylEther:      {TolTolerated, TolTolerated, TolTolerated, TolTolerated, TolConditional, ""},
	describe.FGHalide:          {TolTolerated, TolTolerated, TolTolerated, TolTolerated, TolConditional, ""},
	describe.FGEpoxide:         {TolTolerated, TolTolerated, TolTolerated, TolConditional, TolPoisons, ""},
	describe.FGNitro:           {TolTolerated, TolTolerated, TolTolerated, TolSlows, TolPoisons, ""},
	describe.FGBoronicEster:    {TolTolerated, TolTolerated, TolTolerated, TolConditional, TolConditional, ""},
}

// Tolerance returns the tolerance code of a catalyst class toward a group and the remedy text.
func Tolerance(c units.CatalystClass, group string) (code, remedy string) {
	row, ok := tolerance[group]
	if !ok {
		return TolTolerated, ""
	}
	switch c {
	case units.CatRuPhosphine:
		code = row.ruPhos
	case units.CatRuNHC:
		code = row.ruNHC
	case units.CatRuPyridine:
		code = row.ruPy
	case units.CatMoWImido:
		code = row.moW
	case units.CatClassical:
		code = row.classical
	}
	return code, row.remedy
}

// blocksHomopolymer reports whether a tolerance code prevents homopolymerization: poisons, and
// reacts for groups consumed with the alkylidene (not for chain-transfer olefins and alkynes).
func blocksHomopolymer(code, group string) bool {
	if code == TolPoisons {
		return true
	}
	if code == TolReacts {
		switch group {
		case describe.FGTerminalOlefin, describe.FGAcyclicOlefin, describe.FGAlkyne:
			return false
		}
		return true
	}
	return false
}

// Compatibility is one catalyst class's standing for a monomer.
type Compatibility struct {
	Catalyst units.CatalystClass `json:"catalyst"`
	Status   string              `json:"status"`
	Groups   []string            `json:"groups"`
	Remedy   string              `json:"remedy,omitempty"`
}

var statusRank = map[string]int{TolTolerated: 0, TolConditional: 1, TolSlows: 2, TolReacts: 3, TolPoisons: 4}

// CompatibilityFor ranks every catalyst class for a functional-group inventory, best first (ties
// keep the contract's class order). Status is the worst code over the groups.
func CompatibilityFor(groups []string) []Compatibility {
	var stack [512]byte // the key, groups joined by ",", built on the stack (a hit allocates nothing)
	key := stack[:0]
	for i, g := range groups {
		if i > 0 {
			key = append(key, ',')
		}
		key = append(key, g...)
	}
	return compatMemo.DoBytes(key, func(string) []Compatibility { return compatibilityFor(groups) })
}

// compatMemo caches rankings by group set (results are shared: read-only).
var compatMemo = memo.New[[]Compatibility](10000)

func compatibilityFor(groups []string) []Compatibility {
	var out []Compatibility
	for _, c := range units.CatalystClasses {
		cp := Compatibility{Catalyst: c, Status: TolTolerated, Groups: []string{}}
		for _, g := range groups {
			code, remedy := Tolerance(c, g)
			if code == TolTolerated {
				continue
			}
			if statusRank[code] > statusRank[cp.Status] {
				cp.Status = code
				cp.Remedy = remedy
			} else if cp.Remedy == "" {
				cp.Remedy = remedy
			}
			cp.Groups = append(cp.Groups, g)
		}
		out = append(out, cp)
	}
	slices.SortStableFunc(out, func(a, b Compatibility) int { return cmp.Compare(statusRank[a.Status], statusRank[b.Status]) })
	return out
}
