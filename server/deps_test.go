package server_test

import (
	"os/exec"
	"strings"
	"testing"
)

// TestDependencyDirection guards the architecture of DEVELOPERS.md:
// cmd → server → (domain packages, sync, storage); storage → sync; the
// pure domain packages import neither server nor storage; nothing imports
// cmd; sync imports nothing of the project.
func TestDependencyDirection(t *testing.T) {
	out, err := exec.Command("go", "list", "-f", `{{.ImportPath}} {{join .Imports " "}}`, "cornerbook/...").Output()
	if err != nil {
		t.Fatalf("go list: %v", err)
	}
	pure := map[string]bool{"cornerbook/server/records": true, "cornerbook/server/flags": true,
		"cornerbook/server/plan": true, "cornerbook/server/series": true, "cornerbook/server/fitness": true,
		"cornerbook/server/fightweek": true, "cornerbook/server/medical": true}
	for _, line := range strings.Split(strings.TrimSpace(string(out)), "\n") {
		f := strings.Fields(line)
		pkg, imports := f[0], f[1:]
		for _, imp := range imports {
			if !strings.HasPrefix(imp, "cornerbook") {
				continue
			}
			switch {
			case strings.HasPrefix(imp, "cornerbook/cmd"):
				t.Errorf("%s imports %s: nothing may import cmd", pkg, imp)
			case strings.HasPrefix(pkg, "cornerbook/sync") && !strings.HasPrefix(imp, "cornerbook/sync"):
				t.Errorf("%s imports %s: sync depends on nothing of the project", pkg, imp)
			case strings.HasPrefix(pkg, "cornerbook/storage") && !strings.HasPrefix(imp, "cornerbook/storage") && !strings.HasPrefix(imp, "cornerbook/sync"):
				t.Errorf("%s imports %s: storage may import only sync", pkg, imp)
			case isPure(pkg, pure) && (imp == "cornerbook/server" || strings.HasPrefix(imp, "cornerbook/storage") || strings.HasPrefix(imp, "cornerbook/pwa")):
				t.Errorf("%s imports %s: the pure domain packages import neither server nor storage", pkg, imp)
			case strings.HasPrefix(pkg, "cornerbook/pwa") && !strings.HasPrefix(pkg, "cornerbook/pwa/pwatest") && imp != "cornerbook/pwa" && !strings.HasPrefix(imp, "cornerbook/pwa/") && imp != "cornerbook/server/records" && imp != "cornerbook/sync":
				t.Errorf("%s imports %s: the app package serves files and imports of the hub only the registry of record kinds", pkg, imp)
			}
		}
	}
}

func isPure(pkg string, pure map[string]bool) bool {
	for p := range pure {
		if pkg == p || strings.HasPrefix(pkg, p+"/") {
			return true
		}
	}
	return false
}
