package screening

import (
	"os/exec"
	"strings"
	"testing"
)

// TestPureComputation proves with `go list -deps` that screening imports no HTTP, SQL or gin
// (design: screening/ is pure computation).
func TestPureComputation(t *testing.T) {
	out, err := exec.Command("go", "list", "-deps", "ringsieve/screening").Output()
	if err != nil {
		t.Skipf("go list unavailable: %v", err)
	}
	for _, dep := range strings.Fields(string(out)) {
		for _, banned := range []string{"net/http", "database/sql", "github.com/gin-gonic", "github.com/mattn/go-sqlite3", "ringsieve/api", "ringsieve/data"} {
			if dep == banned || strings.HasPrefix(dep, banned+"/") {
				t.Errorf("screening depends on %s", dep)
			}
		}
	}
}
