package rings

import (
	"math/bits"
	"slices"
	"sort"
)

// Ring-system kinds.
const (
	KindMonocyclic = "monocyclic"
	KindBridged    = "bridged"
	KindFused      = "fused"
	KindSpiro      = "spiro"
)

// Systems groups the rings into ring systems (rings sharing at least one atom): per ring the
// index of its system, and per system its ring indices in ring order.
func Systems(rings []Ring) (ringSystem []int, systems [][]int) {
	return SystemsIn(rings, nil, nil)
}

// SystemsIn is Systems with its answer carved from ints (4 × rings long, or nil) and the
// systems' list appended to lists (with room for one per ring, or nil) when they are large
// enough, else allocated: a caller that keeps such arrays screens without allocating here.
func SystemsIn(rings []Ring, ints []int, lists [][]int) (ringSystem []int, systems [][]int) {
	n := len(rings)
	if cap(ints) < 4*n {
		ints = make([]int, 4*n)
	}
	ints = ints[:4*n]
	clear(ints)
	systems = lists[:0]
	parent := ints[3*n : 4*n]
	for i := range parent {
		parent[i] = i
	}
	find := func(x int) int {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	for i := range rings {
		for j := i + 1; j < len(rings); j++ {
			if SharedAtoms(rings[i], rings[j]) > 0 {
				parent[find(i)] = find(j)
			}
		}
	}
	// per root ring: its system's number + 1 (0: not numbered yet), in the same allocation as
	// the answer and the systems' ring lists (each system's list is carved in ring order)
	idx, count, ringSystem := ints[:n:n], ints[n:2*n:2*n], ints[2*n:3*n:3*n]
	for i := range rings {
		r := find(i)
		if idx[r] == 0 {
			idx[r] = len(systems) + 1
			systems = append(systems, nil)
		}
		ringSystem[i] = idx[r] - 1
		count[ringSystem[i]]++
	}
	// the lists reuse idx, no longer needed: one slot per ring
	free := idx
	for k := range systems {
		systems[k], free = free[:0:count[k]], free[count[k]:]
	}
	for i, k := range ringSystem {
		systems[k] = append(systems[k], i)
	}
	return ringSystem, systems
}

// SharedAtoms counts the atoms two rings share.
func SharedAtoms(a, b Ring) int {
	n := 0
	for _, x := range a.Atoms {
		for _, y := range b.Atoms {
			if x == y {
				n++
			}
		}
	}
	return n
}

// Atoms returns the sorted atoms of the rings listed by index.
func Atoms(rings []Ring, idx []int) []int {
	total := 0
	for _, i := range idx {
		total += len(rings[i].Atoms)
	}
	return AppendAtoms(make([]int, 0, total), rings, idx)
}

// AppendAtoms appends the sorted atoms of the rings listed by index to dst and returns the
// extended slice.
func AppendAtoms(dst []int, rings []Ring, idx []int) []int {
	// atoms numbered below 256 (nearly every monomer): a bit set, read out in order — sorted and
	// without duplicates by construction
	var set [4]uint64
	small := true
scan:
	for _, i := range idx {
		for _, a := range rings[i].Atoms {
			if uint(a) >= 256 {
				small = false
				break scan
			}
			set[a>>6] |= 1 << uint(a&63)
		}
	}
	if small {
		for w, bitsLeft := range set {
			for bitsLeft != 0 {
				dst = append(dst, w<<6|bits.TrailingZeros64(bitsLeft))
				bitsLeft &= bitsLeft - 1
			}
		}
		return dst
	}
	start := len(dst)
	for _, i := range idx {
		for _, a := range rings[i].Atoms {
			dup := false
			for _, b := range dst[start:] {
				if a == b {
					dup = true
					break
				}
			}
			if !dup {
				dst = append(dst, a)
			}
		}
	}
	sort.Ints(dst[start:])
	return dst
}

// Kind classifies a set of rings: bridged if two share three or more atoms, else fused if two
// share a bond, else spiro if two share an atom, else monocyclic.
func Kind(rings []Ring, idx []int) string {
	kind := KindMonocyclic
	rank := func(k string) int {
		switch k {
		case KindSpiro:
			return 1
		case KindFused:
			return 2
		case KindBridged:
			return 3
		}
		return 0
	}
	for i := 0; i < len(idx); i++ {
		for j := i + 1; j < len(idx); j++ {
			k := ""
			switch n := SharedAtoms(rings[idx[i]], rings[idx[j]]); {
			case n >= 3:
				k = KindBridged
			case n == 2:
				k = KindFused
			case n == 1:
				k = KindSpiro
			}
			if k != "" && rank(k) > rank(kind) {
				kind = k
			}
		}
	}
	return kind
}

// Core returns the seed rings plus, repeatedly, every ring of the system sharing three or more
// atoms with them (the bridged core); rings fused by one bond or spiro-joined stay outside. The
// result is sorted.
func Core(rings []Ring, system []int, seed []int) []int {
	return AppendCore(make([]int, 0, len(system)), rings, system, seed)
}

// AppendCore appends Core's rings to dst and returns the extended slice.
func AppendCore(dst []int, rings []Ring, system []int, seed []int) []int {
	// the closure is the same whatever order rings join in (joining only adds atoms), so atoms
	// are marked as their rings join
	maxAtom := 0
	for _, r := range system {
		for _, a := range rings[r].Atoms {
			maxAtom = max(maxAtom, a)
		}
	}
	for _, r := range seed {
		for _, a := range rings[r].Atoms {
			maxAtom = max(maxAtom, a)
		}
	}
	var stack [256]bool // the marks, on the stack for molecules of common size
	var marks []bool
	if need := maxAtom + 1 + len(rings); need <= len(stack) {
		marks = stack[:need]
	} else {
		marks = make([]bool, need)
	}
	atoms, in := marks[:maxAtom+1], marks[maxAtom+1:]
	start := len(dst)
	core := dst
	join := func(r int) {
		in[r] = true
		core = append(core, r)
		for _, a := range rings[r].Atoms {
			atoms[a] = true
		}
	}
	for _, r := range seed {
		join(r)
	}
	for changed := true; changed; {
		changed = false
		for _, r := range system {
			if in[r] {
				continue
			}
			n := 0
			for _, a := range rings[r].Atoms {
				if atoms[a] {
					n++
				}
			}
			if n >= 3 {
				join(r)
				changed = true
			}
		}
	}
	slices.Sort(core[start:])
	return core
}

// AppendWithBond appends the rings of the system that hold bond bi, in system order, to out and
// returns the extended slice.
func AppendWithBond(out []int, rings []Ring, system []int, bi int) []int {
	for _, r := range system {
		for _, b := range rings[r].Bonds {
			if b == bi {
				out = append(out, r)
				break
			}
		}
	}
	return out
}
