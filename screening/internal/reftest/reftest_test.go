package reftest

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// TestReferenceCopyIsCurrent keeps testdata/reference in step with the shared reference set when
// it sits beside the repository (as in CI).
func TestReferenceCopyIsCurrent(t *testing.T) {
	for _, name := range []string{"romp_thermo.csv", "romp_outcomes.csv", "romp_facts.md"} {
		shared, err := os.ReadFile(filepath.Join(Root(t), "..", "shared", "reference", name))
		if err != nil {
			t.Skipf("shared reference set not beside the repository (%v); using the committed copy", err)
		}
		if local := ReadFile(t, "reference/"+name); !bytes.Equal(shared, local) {
			t.Errorf("testdata/reference/%s differs from the shared reference set: copy the shared file", name)
		}
	}
}

// TestContractCopyIsCurrent keeps openapi/contract.md (the HTTP and command-line names callers
// depend on) in step with the shared contract when it sits beside the repository.
func TestContractCopyIsCurrent(t *testing.T) {
	shared, err := os.ReadFile(filepath.Join(Root(t), "..", "shared", "api-contract.md"))
	if err != nil {
		t.Skipf("shared contract not beside the repository (%v); using the committed copy", err)
	}
	local, err := os.ReadFile(filepath.Join(Root(t), "openapi", "contract.md"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(shared, local) {
		t.Error("openapi/contract.md differs from the shared contract: copy the shared file")
	}
}
