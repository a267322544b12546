package main

import (
	"os/exec"
	"strings"
	"testing"
)

// layers is the import order of the project (design: lower packages never import higher ones).
// A package may import only packages of a strictly lower layer; a new package must be given its
// layer here.
var layers = map[string]int{
	"ringsieve/screening/units":            0,
	"ringsieve/screening/internal/memo":    0,
	"ringsieve/screening/internal/reftest": 0,
	"ringsieve/screening/internal/numfmt":  0,
	"ringsieve/screening/internal/scratch": 0,
	"ringsieve/screening/mol":              1,
	"ringsieve/screening/smiles":           2,
	"ringsieve/screening/molfile":          2,
	"ringsieve/screening/rings":            3,
	"ringsieve/screening/forcefield":       3,
	"ringsieve/screening/canon":            4,
	"ringsieve/screening/describe":         5,
	"ringsieve/screening/thermo":           6,
	"ringsieve/screening/judge":            7,
	"ringsieve/screening/plan":             8,
	"ringsieve/screening/depict":           5,
	"ringsieve/screening":                  9,
	"ringsieve/screening/batch":            10,
	"ringsieve/migrations":                 10,
	"ringsieve/openapi":                    10,
	"ringsieve/data/pgtest":                10,
	"ringsieve/data":                       11,
	"ringsieve/api":                        12,
	"ringsieve":                            13,
}

// forbidden lists, per package prefix, dependencies it must not have at any depth: screening is
// pure computation (no HTTP, SQL or gin); the store imports no HTTP.
var forbidden = map[string][]string{
	"ringsieve/screening": {"net/http", "database/sql", "github.com/gin-gonic", "github.com/mattn/go-sqlite3", "github.com/jackc", "ringsieve/api", "ringsieve/data"},
	"ringsieve/data":      {"net/http", "github.com/gin-gonic", "ringsieve/api"},
}

func TestLayering(t *testing.T) {
	out, err := exec.Command("go", "list", "-f", "{{.ImportPath}}|{{join .Imports \",\"}}|{{join .Deps \",\"}}", "ringsieve/...").Output()
	if err != nil {
		t.Skipf("go list unavailable: %v", err)
	}
	for _, line := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		f := strings.Split(line, "|")
		pkg, imports, deps := f[0], strings.Split(f[1], ","), strings.Split(f[2], ",")
		layer, ok := layers[pkg]
		if !ok {
			t.Errorf("%s has no layer: give it one in layout_test.go", pkg)
			continue
		}
		for _, imp := range imports {
			if l, own := layers[imp]; own && l >= layer {
				t.Errorf("%s (layer %d) imports %s (layer %d): lower packages never import higher ones", pkg, layer, imp, l)
			}
		}
		for prefix, bans := range forbidden {
			if pkg != prefix && !strings.HasPrefix(pkg, prefix+"/") {
				continue
			}
			for _, dep := range deps {
				for _, ban := range bans {
					if dep == ban || strings.HasPrefix(dep, ban+"/") {
						t.Errorf("%s depends on %s", pkg, dep)
					}
				}
			}
		}
	}
}
