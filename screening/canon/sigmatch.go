package canon

import (
	"errors"
	"slices"
	"strconv"
	"strings"
	"sync"
)

// Signature matching: a written signature (WrittenSignature) spells out a labelled graph — atom
// labels, bonds with local numbers, orders and aromaticity — so two signatures of the same
// subgraph written in different atom orders are isomorphic labelled graphs. A SignatureIndex
// holds a few signatures (one writing each of the ring systems whose values ship with the
// program) and finds, for a signature met at run time, the indexed one it is a renumbering of,
// with the renumbering: what is computed from the subgraph alone and does not depend on its
// numbering (a canonical key; a strain estimate named by the opened bond's atoms) can then be
// read from the indexed entry instead of computed.

// ErrSignature reports a string that is not a written signature.
var ErrSignature = errors.New("not a written signature")

// sigGraph is a parsed signature: atom labels and, per atom, its neighbours with bond labels.
type sigGraph struct {
	label []string
	nbr   [][]sigEdge
	shape string // labels and bond labels, sorted: equal for isomorphic graphs
}

type sigEdge struct {
	to    int
	label string // order and aromaticity, as written ("1", "2", "1a")
}

// parseSignature reads the graph part of a signature (up to the end of its bond list; an extra
// suffix, which WrittenSignature appends after the last bond's space, is returned as rest).
func parseSignature(sig string) (g sigGraph, rest string, err error) {
	atoms, bonds, ok := strings.Cut(sig, "|")
	if !ok || !strings.HasSuffix(atoms, ",") {
		return g, "", ErrSignature
	}
	g.label = strings.Split(strings.TrimSuffix(atoms, ","), ",")
	g.nbr = make([][]sigEdge, len(g.label))
	var bondLabels []string
	for bonds != "" {
		tok, after, found := strings.Cut(bonds, " ")
		if !found {
			break // the suffix (no bond token lacks its trailing space)
		}
		i, jl, ok := strings.Cut(tok, "-")
		if !ok {
			break
		}
		k := 0
		for k < len(jl) && jl[k] >= '0' && jl[k] <= '9' {
			k++
		}
		// the last digit run before the order: local number then a one-digit order
		if k < 2 {
			return g, "", ErrSignature
		}
		a, err1 := strconv.Atoi(i)
		b, err2 := strconv.Atoi(jl[:k-1])
		if err1 != nil || err2 != nil || a < 0 || b <= a || b >= len(g.label) {
			return g, "", ErrSignature
		}
		lab := jl[k-1:]
		g.nbr[a] = append(g.nbr[a], sigEdge{b, lab})
		g.nbr[b] = append(g.nbr[b], sigEdge{a, lab})
		bondLabels = append(bondLabels, lab)
		bonds = after
	}
	labels := slices.Clone(g.label)
	slices.Sort(labels)
	slices.Sort(bondLabels)
	g.shape = strings.Join(labels, ",") + "|" + strings.Join(bondLabels, ",")
	return g, bonds, nil
}

// SignatureIndex finds indexed signatures that a given signature is a renumbering of. Entries
// are parsed when a signature of their shape is first looked up, so building an index from
// shapes computed ahead (SignatureShape) costs almost nothing.
type SignatureIndex struct {
	sigs    []string
	byShape map[string][]int
	once    []sync.Once
	graphs  []sigGraph
	bad     []bool // an entry that did not parse (never matches)
}

// SignatureShape is the shape a SignatureIndex files sig under (its sorted atom and bond labels;
// equal for renumberings of one graph). Errors: ErrSignature.
func SignatureShape(sig string) (string, error) {
	g, rest, err := parseSignature(sig)
	if err != nil || rest != "" {
		return "", ErrSignature
	}
	return g.shape, nil
}

// NewSignatureIndex indexes sigs (signatures without suffix). Errors: a string that is not a
// signature (ErrSignature, with its position in sigs).
func NewSignatureIndex(sigs []string) (*SignatureIndex, error) {
	shapes := make([]string, len(sigs))
	for i, s := range sigs {
		sh, err := SignatureShape(s)
		if err != nil {
			return nil, errors.Join(ErrSignature, errors.New("entry "+strconv.Itoa(i)+": "+strconv.Quote(s)))
		}
		shapes[i] = sh
	}
	return NewShapedSignatureIndex(sigs, shapes), nil
}

// NewShapedSignatureIndex indexes sigs under shapes computed ahead (SignatureShape of each; an
// entry whose signature does not parse to its shape never matches).
func NewShapedSignatureIndex(sigs, shapes []string) *SignatureIndex {
	x := &SignatureIndex{sigs: sigs, byShape: make(map[string][]int, len(sigs)),
		once: make([]sync.Once, len(sigs)), graphs: make([]sigGraph, len(sigs)), bad: make([]bool, len(sigs))}
	for i := range sigs {
		x.byShape[shapes[i]] = append(x.byShape[shapes[i]], i)
	}
	return x
}

// Len is the number of indexed signatures.
func (x *SignatureIndex) Len() int { return len(x.sigs) }

// graph returns entry e parsed (once; safe for concurrent use), nil when it does not parse to
// the shape it was filed under.
func (x *SignatureIndex) graph(e int, shape string) *sigGraph {
	x.once[e].Do(func() {
		g, rest, err := parseSignature(x.sigs[e])
		x.graphs[e], x.bad[e] = g, err != nil || rest != "" || g.shape != shape
	})
	if x.bad[e] {
		return nil
	}
	return &x.graphs[e]
}

// Match parses sig (a signature, possibly with a suffix) and looks for an indexed signature
// with the same labelled graph. It returns the entry's position, perm (perm[i] is the entry's
// local number of sig's atom i), sig's suffix, and ok false when none matches or sig is not a
// signature.
func (x *SignatureIndex) Match(sig string) (entry int, perm []int, suffix string, ok bool) {
	if x == nil {
		return 0, nil, "", false
	}
	g, rest, err := parseSignature(sig)
	if err != nil {
		return 0, nil, "", false
	}
	for _, e := range x.byShape[g.shape] {
		if h := x.graph(e, g.shape); h != nil {
			if p := isomorphism(&g, h); p != nil {
				return e, p, rest, true
			}
		}
	}
	return 0, nil, "", false
}

// matchBudget bounds the candidate pairs one isomorphism search tries (design choice: ring
// systems of the shipped size need a few hundred; a pathological same-shape graph gives up).
const matchBudget = 200000

// isomorphism returns a label-preserving bijection from g's atoms to h's (nil when there is
// none): depth-first over g's atoms in breadth-first order, each mapped to an unused atom of h
// with the same label and degree whose bonds to the atoms mapped so far agree. Signatures of
// ring systems are small (tens of atoms), so the search is short; it gives up (nil) past
// matchBudget.
func isomorphism(g, h *sigGraph) []int {
	n := len(g.label)
	if n != len(h.label) {
		return nil
	}
	// g's atoms in an order where each (after the first of its component) has a mapped neighbour
	order := make([]int, 0, n)
	seen := make([]bool, n)
	for s := 0; s < n; s++ {
		if seen[s] {
			continue
		}
		seen[s] = true
		order = append(order, s)
		for q := len(order) - 1; q < len(order); q++ {
			for _, e := range g.nbr[order[q]] {
				if !seen[e.to] {
					seen[e.to] = true
					order = append(order, e.to)
				}
			}
		}
	}
	perm, inv := make([]int, n), make([]int, n)
	for i := range perm {
		perm[i], inv[i] = -1, -1
	}
	steps := 0
	var try func(k int) bool
	try = func(k int) bool {
		if k == n {
			return true
		}
		a := order[k]
		for b := 0; b < n; b++ {
			if steps++; steps > matchBudget {
				return false // give up: a miss only costs the value's computation
			}
			if inv[b] >= 0 || h.label[b] != g.label[a] || len(h.nbr[b]) != len(g.nbr[a]) || !edgesAgree(g, h, perm, inv, a, b) {
				continue
			}
			perm[a], inv[b] = b, a
			if try(k + 1) {
				return true
			}
			perm[a], inv[b] = -1, -1
		}
		return false
	}
	if !try(0) {
		return nil
	}
	return perm
}

// edgesAgree reports whether mapping g's atom a to h's atom b keeps the bonds among mapped
// atoms: each bond of a to a mapped atom has the same label at b, and b has no bond to a mapped
// atom that a lacks (perm maps g to h, inv h to g; -1 unmapped).
func edgesAgree(g, h *sigGraph, perm, inv []int, a, b int) bool {
	mapped := 0
	for _, e := range g.nbr[a] {
		if perm[e.to] < 0 {
			continue
		}
		mapped++
		found := false
		for _, f := range h.nbr[b] {
			if f.to == perm[e.to] {
				if f.label != e.label {
					return false
				}
				found = true
				break
			}
		}
		if !found {
			return false
		}
	}
	for _, f := range h.nbr[b] {
		if inv[f.to] >= 0 {
			mapped--
		}
	}
	return mapped == 0
}
