package forcefield

import (
	"context"
	"math/rand/v2"
	"slices"
	"testing"

	"ringsieve/screening/smiles"
)

// Benchmark structures (our own demo monomers): a heptyl norbornene-2-carboxylate, 41 atoms with
// hydrogens, for the energy and the minimization; an N-octyl norbornene dicarboximide, 20 heavy
// atoms, for the full conformer search.
const (
	benchEster41 = "CCCCCCCOC(=O)[C@@H]1C[C@@H]2C=C[C@H]1C2"
	benchImide20 = "O=C1N(CCCCCCCC)C(=O)[C@@H]2[C@H]3C=C[C@H](C3)[C@@H]12"
)

func benchSystem(b *testing.B, smi string) (*System, []float64) {
	m, err := smiles.Parse(smi)
	if err != nil {
		b.Fatal(err)
	}
	s, err := Setup(m, MMFF94)
	if err != nil {
		b.Fatal(err)
	}
	x, err := s.Embed(StereoFromGraph(s.Mol), rand.New(rand.NewPCG(1, 2)))
	if err != nil {
		b.Fatal(err)
	}
	return s, x
}

// BenchmarkEnergyGradient is one energy and gradient evaluation of a 41-atom molecule.
func BenchmarkEnergyGradient(b *testing.B) {
	s, x := benchSystem(b, benchEster41)
	g := make([]float64, len(x))
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		s.Gradient(x, g)
	}
	b.ReportMetric(float64(len(s.Mol.Atoms)), "atoms")
}

// BenchmarkMinimize relaxes the 41-atom molecule from a structure with one bond turned.
func BenchmarkMinimize(b *testing.B) {
	s, x := benchSystem(b, benchEster41)
	sr := &searcher{s: s, rng: rand.New(rand.NewPCG(3, 4)), rot: rotatableBonds(s.Mol)}
	starts := make([][]float64, 16)
	for k := range starts {
		starts[k] = slices.Clone(x)
		sr.turn(starts[k])
	}
	b.ResetTimer()
	iters := 0
	for i := 0; i < b.N; i++ {
		y := slices.Clone(starts[i%len(starts)])
		r, err := s.Minimize(y, MinimizeOptions{})
		if err != nil {
			b.Fatal(err)
		}
		iters += r.Iterations
	}
	b.ReportMetric(float64(iters)/float64(b.N), "iterations/op")
}

// BenchmarkConformerSearch is the full search of a 20-heavy-atom norbornene derivative.
func BenchmarkConformerSearch(b *testing.B) {
	m, err := smiles.Parse(benchImide20)
	if err != nil {
		b.Fatal(err)
	}
	mins := 0
	for i := 0; i < b.N; i++ {
		res, err := Search(context.Background(), m, SearchOptions{Seed: uint64(i + 1)})
		if err != nil {
			b.Fatal(err)
		}
		mins += res.Minimizations
	}
	b.ReportMetric(float64(mins)/float64(b.N), "minimizations/op")
}
