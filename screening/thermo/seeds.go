package thermo

import (
	"errors"
	"strconv"
	"strings"
	"sync"
	"sync/atomic"

	"ringsieve/screening/canon"
)

// Seeds: values shipped with the program for the ring systems of the table's olefin rows and of
// common derivatives (seedDerivatives in seeds_test.go). A process starts with empty caches, and
// the caches are keyed by written signatures, which depend on how a structure was written; the
// first structure of each skeleton and writing would pay for a canonical key (colour
// refinement), a gas-phase ring estimate (two extracted copies, their ring perception and keys)
// and the parent's name. seeds_gen.go holds, for one writing of each such ring system (and each
// olefin core of it), the skeleton key, the gas-phase estimate for opening each of its ring
// olefins and the parent name of each; a signature met at run time is matched to the shipped one
// it renumbers (canon.SignatureIndex) and the values are read through the renumbering. The data
// are Go source, laid out by the linker: a process pays nothing to load them but the inputs
// check and the index's map (the JSON file this began as took 0.4 ms to decode, more than a
// first structure saves).
//
// Local numbers are the signature's; a pair is written lower number first. seedInputs is the
// SHA-256 of the CSV files (as data/precomputed.tsv records it); seeds computed from other CSV
// files are ignored. TestSeedsFresh regenerates seeds_gen.go (-update rewrites it) and checks
// that every SMILES writing of every seeded structure — each order of its ring atoms a writing
// can give, all of them or an even sample — gets from the seeds exactly what is computed.

// seedSystem is one shipped ring system (or core): a writing's signature, its shape
// (canon.SignatureShape), skeleton key, gas-phase estimates and parents.
type seedSystem struct {
	Name, Signature, Shape, Key string
	Gas                         []seedGas
	Parents                     []seedParent
}

// seedGas is the gas-phase estimate for opening the olefin between local atoms Open.
type seedGas struct {
	Open           [2]int
	Trans          bool
	DH, DS, UH, US float64
	AllHits        bool
	Terms, Survive []string
	Row            string // the whole-system row's key ("" for none)
	Spectate       int
	Path           string
}

// seedParent is the parent name of the olefin between local atoms Olefin (Error: why there is
// none).
type seedParent struct {
	Olefin      [2]int
	Name, Error string
}

// seedSet is the shipped systems with their signature index (empty when not usable).
type seedSet struct {
	index   *canon.SignatureIndex
	systems []seedSystem
}

var (
	seeds    = sync.OnceValue(func() *seedSet { return newSeedSet(seedInputs, seedSystems) })
	seedsOff atomic.Bool
)

// UseSeeds turns the shipped values on (the default) or off; benchmarks of a cold start without
// them, and tests that compute everything, turn them off.
func UseSeeds(on bool) { seedsOff.Store(!on) }

func init() { canon.SetKeySeed(seededKey) }

// newSeedSet indexes systems computed from the CSV files of hash inputs; an empty set when the
// embedded CSV files differ (checkInputs).
func newSeedSet(inputs string, systems []seedSystem) *seedSet {
	if checkInputs(inputs) != nil {
		return &seedSet{}
	}
	sigs, shapes := make([]string, len(systems)), make([]string, len(systems))
	for i, s := range systems {
		sigs[i], shapes[i] = s.Signature, s.Shape
	}
	return &seedSet{index: canon.NewShapedSignatureIndex(sigs, shapes), systems: systems}
}

// match finds the shipped system sig renumbers: the system, the renumbering and sig's suffix.
func (s *seedSet) match(sig string) (*seedSystem, []int, string, bool) {
	if seedsOff.Load() || s.index == nil {
		return nil, nil, "", false
	}
	e, perm, suffix, ok := s.index.Match(sig)
	if !ok {
		return nil, nil, "", false
	}
	return &s.systems[e], perm, suffix, true
}

// seededKey is the skeleton key of the subgraph signature sig describes, when shipped.
func seededKey(sig string) (string, bool) {
	sys, _, suffix, ok := seeds().match(sig)
	if !ok || suffix != "" {
		return "", false
	}
	return sys.Key, true
}

// localPair reads "a-b" (two local numbers) and maps them through perm, lower first.
func localPair(s string, perm []int) ([2]int, bool) {
	x, y, ok := strings.Cut(s, "-")
	if !ok {
		return [2]int{}, false
	}
	a, err1 := strconv.Atoi(x)
	b, err2 := strconv.Atoi(y)
	if err1 != nil || err2 != nil || a < 0 || b < 0 || a >= len(perm) || b >= len(perm) {
		return [2]int{}, false
	}
	return orderedPair(perm[a], perm[b]), true
}

func orderedPair(a, b int) [2]int { return [2]int{min(a, b), max(a, b)} }

// seededGas is the gas-phase estimate under the gas-cache key sig (the system's signature,
// "|open a-b|" and the trans flag), when shipped.
func (t *ringTable) seededGas(sig string) (GasEstimate, bool) {
	sys, perm, suffix, ok := seeds().match(sig)
	if !ok {
		return GasEstimate{}, false
	}
	rest, found := strings.CutPrefix(suffix, "|open ")
	pair, flag, found2 := strings.Cut(rest, "|")
	if !found || !found2 {
		return GasEstimate{}, false
	}
	open, ok := localPair(pair, perm)
	trans, err := strconv.ParseBool(flag)
	if !ok || err != nil {
		return GasEstimate{}, false
	}
	for _, g := range sys.Gas {
		if g.Open != open || g.Trans != trans {
			continue
		}
		e := GasEstimate{DH: g.DH, DS: g.DS, UH: g.UH, US: g.US, AllHits: g.AllHits,
			Terms: g.Terms, Survive: g.Survive, Spectate: g.Spectate, Path: g.Path}
		if g.Row != "" {
			if e.Row = t.byKey[g.Row]; e.Row == nil {
				return GasEstimate{}, false
			}
		}
		return e, true
	}
	return GasEstimate{}, false
}

// seededParent is the parent name under the parent-cache key (parentKey), when shipped.
func seededParent(key string) (parentName, bool) {
	sys, perm, suffix, ok := seeds().match(key)
	if !ok {
		return parentName{}, false
	}
	pair, found := strings.CutPrefix(suffix, "|olefin ")
	if !found {
		return parentName{}, false
	}
	ol, ok := localPair(pair, perm)
	if !ok {
		return parentName{}, false
	}
	for _, p := range sys.Parents {
		if p.Olefin == ol {
			v := parentName{name: p.Name}
			if p.Error != "" {
				v.err = errors.New(p.Error)
			}
			return v, true
		}
	}
	return parentName{}, false
}
