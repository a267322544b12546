package thermo

import (
	"encoding/json"
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
// and the parent's name. data/seeds.json holds, for one writing of each such ring system (and
// each olefin core of it), the skeleton key, the gas-phase estimate for opening each of its ring
// olefins and the parent name of each; a signature met at run time is matched to the shipped one
// it renumbers (canon.SignatureIndex) and the values are read through the renumbering. Layout
// (our own, JSON):
//
//	{"inputs": SHA-256 of the CSV files (as data/precomputed.tsv),
//	 "systems": [{"name", "signature", "key",
//	              "gas": [{"open": [a, b], "trans", "dh", "ds", "uh", "us", "all_hits", "terms",
//	                       "survive", "row", "spectate", "path"}],
//	              "parents": [{"olefin": [a, b], "name", "error"}]}]}
//
// Local numbers are the signature's; a pair is written lower number first. A file computed from
// other CSV files is ignored. TestSeedsFresh regenerates the file (-update rewrites it) and checks
// that every SMILES writing of every seeded structure — each order of its ring atoms a writing can
// give, all of them or an even sample — gets from the seeds exactly what is computed.
const seedsFile = "data/seeds.json"

type seedFile struct {
	Inputs  string       `json:"inputs"`
	Systems []seedSystem `json:"systems"`
}

type seedSystem struct {
	Name      string       `json:"name"`
	Signature string       `json:"signature"`
	Key       string       `json:"key"`
	Gas       []seedGas    `json:"gas,omitempty"`
	Parents   []seedParent `json:"parents,omitempty"`
}

type seedGas struct {
	Open     [2]int   `json:"open"`
	Trans    bool     `json:"trans"`
	DH       float64  `json:"dh"`
	DS       float64  `json:"ds"`
	UH       float64  `json:"uh"`
	US       float64  `json:"us"`
	AllHits  bool     `json:"all_hits"`
	Terms    []string `json:"terms"`
	Survive  []string `json:"survive"`
	Row      string   `json:"row,omitempty"` // the whole-system row's key
	Spectate int      `json:"spectate"`
	Path     string   `json:"path"`
}

type seedParent struct {
	Olefin [2]int `json:"olefin"`
	Name   string `json:"name"`
	Error  string `json:"error,omitempty"`
}

// seedSet is the loaded file with its signature index (empty when the file is not usable).
type seedSet struct {
	index   *canon.SignatureIndex
	systems []seedSystem
}

var (
	seeds    = sync.OnceValue(loadSeeds)
	seedsOff atomic.Bool
)

// UseSeeds turns the shipped values on (the default) or off; benchmarks of a cold start without
// them, and tests that compute everything, turn them off.
func UseSeeds(on bool) { seedsOff.Store(!on) }

func init() { canon.SetKeySeed(seededKey) }

func loadSeeds() *seedSet {
	b, err := dataFS.ReadFile(seedsFile)
	if err != nil {
		return &seedSet{}
	}
	s, err := parseSeeds(b)
	if err != nil {
		return &seedSet{}
	}
	return s
}

// errSeedInputs reports a seeds file computed from other CSV files.
var errSeedInputs = errors.New("seeds computed from other table files")

func parseSeeds(b []byte) (*seedSet, error) {
	var f seedFile
	if err := json.Unmarshal(b, &f); err != nil {
		return nil, err
	}
	want, err := inputsHash()
	if err != nil {
		return nil, err
	}
	if f.Inputs != want {
		return nil, errSeedInputs
	}
	sigs := make([]string, len(f.Systems))
	for i, s := range f.Systems {
		sigs[i] = s.Signature
	}
	x, err := canon.NewSignatureIndex(sigs)
	if err != nil {
		return nil, err
	}
	return &seedSet{index: x, systems: f.Systems}, nil
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
