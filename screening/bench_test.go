package screening_test

import (
	"context"
	"ringsieve/screening/describe"
	"ringsieve/screening/units"
	"runtime"
	"testing"

	. "ringsieve/screening"
	"ringsieve/screening/canon"
	"ringsieve/screening/internal/reftest"
	"ringsieve/screening/mol"
	"ringsieve/screening/rings"
	"ringsieve/screening/smiles"
	"ringsieve/screening/thermo"
)

// Benchmarks on the committed corpus of 10,000 generated candidate monomers
// (testdata/corpus/candidates.smi). Targets and measured numbers are in the README's
// performance section; run: go test ./screening -run '^$' -bench . -benchmem

func loadCorpus(b testing.TB) []string {
	var out []string
	for _, e := range reftest.Corpus(b) {
		out = append(out, e.SMILES)
	}
	if len(out) < 10000 {
		b.Fatalf("corpus has %d structures", len(out))
	}
	return out
}

func BenchmarkParseSMILES(b *testing.B) {
	c := loadCorpus(b)
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := smiles.Parse(c[i%len(c)]); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkScreenSMILESCold is the same with empty caches at the start of the timed loop (the
// first pass over a corpus pays for canonical keys and ring estimates).
func BenchmarkScreenSMILESCold(b *testing.B) {
	c := loadCorpus(b)
	cond := DefaultConditions()
	cond.ThermoMethod = units.ThermoTable // the fast tier (BenchmarkScreenForceField for the other)
	thermo.Table()
	canon.ResetCache()
	rings.ResetCache()
	thermo.ResetCache()
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := ScreenSMILES(c[i%len(c)], cond); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkScreenFreshProcess is what a process that has screened nothing yet pays for the
// demo lab's candidate list (testdata/demo, 15 common monomers: norbornenes, imides and
// anhydrides, cyclooctene, dicyclopentadiene, an oxanorbornene ether), every cache emptied
// before each pass: with the shipped seeds (thermo/seeds.go) and without them. ns/op is one
// pass; ns/structure divides by the list's length.
func BenchmarkScreenFreshProcess(b *testing.B) {
	in := demoInput(b)
	cond := DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	thermo.Table()
	for _, seeded := range []bool{true, false} {
		name := "seeds"
		if !seeded {
			name = "no_seeds"
		}
		b.Run(name, func(b *testing.B) {
			thermo.UseSeeds(seeded)
			defer thermo.UseSeeds(true)
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				b.StopTimer()
				canon.ResetCache()
				rings.ResetCache()
				thermo.ResetCache()
				b.StartTimer()
				for _, it := range in.Items {
					if _, err := ScreenSMILES(it.SMILES, cond); err != nil {
						b.Fatal(err)
					}
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*len(in.Items)), "ns/structure")
		})
	}
}

func BenchmarkPerceive(b *testing.B) {
	c := loadCorpus(b)
	mols := make([]*mol.Molecule, len(c))
	for i, s := range c {
		mols[i], _ = smiles.Parse(s)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		rings.Perceive(mols[i%len(mols)])
	}
}

// BenchmarkScreenSMILES measures a running service's steady state: one untimed pass over the
// corpus first fills the skeleton-key and ring-estimate caches (about 100 distinct ring systems
// in the corpus), as the first requests do in a service.
func BenchmarkScreenSMILES(b *testing.B) {
	c := loadCorpus(b)
	cond := DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	for _, s := range c {
		ScreenSMILES(s, cond)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := ScreenSMILES(c[i%len(c)], cond); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkScreenWith is BenchmarkScreenSMILES as the offline screen's workers run it: the
// molecule's storage and the result blocks reused from one structure to the next (Reuse).
func BenchmarkScreenWith(b *testing.B) {
	c := loadCorpus(b)
	cond := DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	var u Reuse
	for _, s := range c {
		ScreenWith(context.Background(), &u, Source{SMILES: s}, cond)
	}
	b.ReportAllocs()
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if _, err := ScreenWith(context.Background(), &u, Source{SMILES: c[i%len(c)]}, cond); err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkScreenForceField screens the first 20 corpus structures with thermo_method
// forcefield and cold caches: the cost of the force-field tier per new structure.
func BenchmarkScreenForceField(b *testing.B) {
	c := loadCorpus(b)[:20]
	cond := DefaultConditions()
	cond.ThermoMethod = units.ThermoForceField
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		if i%len(c) == 0 {
			thermo.ResetFFCache()
		}
		if _, err := ScreenSMILES(c[i%len(c)], cond); err != nil {
			b.Fatal(err)
		}
	}
}

// TestAllocationGuard keeps the allocations per structure from creeping up (a guard on the
// steady state, not a timing): parsing, perception and full table-tier screening of 500 corpus
// structures with warm caches, averaged. Bounds are today's counts plus a small margin
// (design choice); lower them as the molecular core sheds allocations.
func TestAllocationGuard(t *testing.T) {
	if testing.Short() {
		t.Skip("allocation guard")
	}
	c := loadCorpus(t)[:500]
	cond := DefaultConditions()
	cond.ThermoMethod = units.ThermoTable
	// the ring systems' cache afresh: after other tests it holds thousands of entries, and the
	// ones added here would settle only after as many lookups (below)
	rings.ResetCache()
	for _, s := range c { // warm the caches
		ScreenSMILES(s, cond)
	}
	// grow the core's storage to the largest structure, and let the caches settle: a cache
	// publishes its newer entries for lock-free reads (a copy: an allocation) once lookups of
	// them outnumber its entries (internal/memo), which one pass may leave for the counts below
	var core describe.Workspace
	for range 3 {
		for _, s := range c {
			if smiles.ParseInto(&core.Mol, s) == nil {
				rings.PerceiveInto(&core.Rings, &core.Mol)
			}
		}
	}
	var reuse Reuse
	per := func(fn func(s string)) float64 {
		return testing.AllocsPerRun(3, func() {
			for _, s := range c {
				fn(s)
			}
		}) / float64(len(c))
	}
	for _, g := range []struct {
		name   string
		max    float64
		allocs float64
	}{
		{"parse", 5, per(func(s string) { smiles.Parse(s) })},
		{"parse and perceive", 10, per(func(s string) {
			if m, err := smiles.Parse(s); err == nil {
				rings.Perceive(m)
			}
		})},
		// the molecular core as a worker uses it: one molecule and one perception reused
		{"parse and perceive, reused", 0, per(func(s string) {
			if smiles.ParseInto(&core.Mol, s) == nil {
				rings.PerceiveInto(&core.Rings, &core.Mol)
			}
		})},
		{"screen (table tier)", 4, per(func(s string) { ScreenSMILES(s, cond) })},
		// as the offline screen's workers do: storage reused from one structure to the next
		{"screen (table tier), reused", 1, per(func(s string) { ScreenWith(context.Background(), &reuse, Source{SMILES: s}, cond) })},
	} {
		t.Logf("%s: %.1f allocations per structure (guard %.0f)", g.name, g.allocs, g.max)
		if g.allocs > g.max {
			t.Errorf("%s: %.1f allocations per structure, more than the guard of %.0f", g.name, g.allocs, g.max)
		}
	}
	// the bytes too: in a short process every new byte is a new page for the system to map,
	// which costs more than the allocation itself (DEVELOPERS.md: "Fresh memory"); a result
	// whose reasons outgrow its block's array allocates a new one
	bytesPer := func(fn func(s string)) float64 {
		var before, after runtime.MemStats
		runtime.ReadMemStats(&before)
		for range 3 {
			for _, s := range c {
				fn(s)
			}
		}
		runtime.ReadMemStats(&after)
		return float64(after.TotalAlloc-before.TotalAlloc) / float64(3*len(c))
	}
	const maxBytes = 64 // design choice: today's 43 plus a margin (93 with the reasons array of eight)
	got := bytesPer(func(s string) { ScreenWith(context.Background(), &reuse, Source{SMILES: s}, cond) })
	t.Logf("screen (table tier), reused: %.0f bytes allocated per structure (guard %d)", got, maxBytes)
	if got > maxBytes {
		t.Errorf("screen (table tier), reused: %.0f bytes allocated per structure, more than the guard of %d", got, maxBytes)
	}
}
