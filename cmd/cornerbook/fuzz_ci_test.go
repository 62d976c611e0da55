package main

import (
	"context"
	"os"
	"os/exec"
	"strings"
	"testing"
	"time"
)

// fuzzTimePerTarget is how long CI fuzzes each target.
const fuzzTimePerTarget = "20s"

// TestFuzzTargets runs every fuzz target of the module for 20 s each
// under CI=true (a short, real fuzzing run on every submission; crashers
// land in the package's testdata/fuzz as regression seeds). Locally it
// skips: run `CI=true go test ./cmd/cornerbook -run TestFuzzTargets`.
func TestFuzzTargets(t *testing.T) {
	if os.Getenv("CI") != "true" {
		t.Skip("fuzzing runs under CI=true; locally: CI=true go test ./cmd/cornerbook -run TestFuzzTargets -v")
	}
	out, err := exec.Command("go", "test", "-list", "^Fuzz", "cornerbook/...").CombinedOutput()
	if err != nil {
		t.Fatalf("list fuzz targets: %v\n%s", err, out)
	}
	// go test -list prints the targets of a package, then "ok  <pkg>".
	var pending []string
	targets := 0
	for _, line := range strings.Split(string(out), "\n") {
		f := strings.Fields(line)
		switch {
		case len(f) == 1 && strings.HasPrefix(f[0], "Fuzz"):
			pending = append(pending, f[0])
		case len(f) >= 2 && f[0] == "ok":
			for _, name := range pending {
				targets++
				pkg := f[1]
				t.Run(pkg+"/"+name, func(t *testing.T) {
					ctx, cancel := context.WithTimeout(context.Background(), 3*time.Minute)
					defer cancel()
					for attempt := 1; ; attempt++ {
						cmd := exec.CommandContext(ctx, "go", "test", "-run", "^$", "-fuzz", "^"+name+"$", "-fuzztime", fuzzTimePerTarget, pkg)
						b, err := cmd.CombinedOutput()
						if err == nil {
							break
						}
						// The fuzzing engine sometimes reports its own deadline
						// while stopping workers at the end of -fuzztime, with
						// no input failing; that run is repeated once. Any
						// failing input fails the test at once.
						engineStop := strings.Contains(string(b), "context deadline exceeded") && !strings.Contains(string(b), "Failing input written")
						if !engineStop || attempt == 2 {
							t.Fatalf("%s in %s found a failure:\n%s", name, pkg, b)
						}
						t.Logf("%s: the fuzzing engine stopped on its own deadline with no failing input; running it again", name)
					}
				})
			}
			pending = nil
		}
	}
	if targets < 4 {
		t.Fatalf("found only %d fuzz targets:\n%s", targets, out)
	}
}
