package records

import (
	"testing"
	"time"
)

// TestRegistryLimitsAreTheHubs holds Prepare to every limit the registry
// states: a value past a limit is refused with that field and the
// registry's words, a value at a limit is not refused for that field, and
// every case is refused naming its field. The app's checks are held to
// the same probes in Chromium (server TestAppRefusesWhatTheHubRefuses).
func TestRegistryLimitsAreTheHubs(t *testing.T) {
	now := time.Date(2026, 3, 2, 9, 0, 0, 0, time.UTC)
	probes, err := Probes(now)
	if err != nil {
		t.Fatal(err)
	}
	if len(probes) < 100 {
		t.Fatalf("only %d probes: the registry lost its fields", len(probes))
	}
	for _, p := range probes {
		switch {
		case p.WantField == "" && p.WantReason == "" && p.What != "the example" && !isCase(p):
			if p.Field != "" && p.Field == index0(fieldOfWhat(p.What)) {
				t.Errorf("%s %s: refused %s: %s; a value at a limit must be accepted", p.Kind, p.What, p.Field, p.Reason)
			}
		case p.What == "the example":
			if p.Field != "" {
				t.Errorf("%s: the registry's example is refused: %s: %s", p.Kind, p.Field, p.Reason)
			}
		case p.WantReason == "":
			if p.Field != p.WantField {
				t.Errorf("%s %s: hub named %q (%s), registry says %q", p.Kind, p.What, p.Field, p.Reason, p.WantField)
			}
		default:
			if p.Field != p.WantField || p.Reason != p.WantReason {
				t.Errorf("%s %s:\n hub:      %s: %s\n registry: %s: %s", p.Kind, p.What, p.Field, p.Reason, p.WantField, p.WantReason)
			}
		}
	}
}

func isCase(p Probe) bool {
	k, _ := KindOf(p.Kind)
	for _, c := range k.Cases {
		if c.Name == p.What {
			return true
		}
	}
	return false
}

func fieldOfWhat(what string) string {
	for i := range what {
		if what[i] == ' ' {
			return what[:i]
		}
	}
	return what
}

// TestRegistryDerivesTheTables: the kind list, body types and writers
// come from the registry, and every kind has a validator and an example.
func TestRegistryDerivesTheTables(t *testing.T) {
	if len(Kinds) != len(Registry) {
		t.Fatalf("Kinds has %d entries, Registry %d", len(Kinds), len(Registry))
	}
	seen := map[string]bool{}
	for i, k := range Registry {
		if Kinds[i] != k.Name || seen[k.Name] {
			t.Errorf("kind %d: %q listed as %q or twice", i, k.Name, Kinds[i])
		}
		seen[k.Name] = true
		if k.validate == nil || k.Example == "" || k.Label == "" || k.Plural == "" || k.Body == nil {
			t.Errorf("%s: validator, example, label, plural and body type are required", k.Name)
		}
		for _, f := range k.Fields {
			if f.Label == "" {
				t.Errorf("%s %s: a field needs its words", k.Name, f.Path)
			}
		}
	}
	if got := WrittenBy(RoleAthlete); len(got) != 3 || got[0] != KindCheckin || got[1] != KindSession || got[2] != KindNote {
		t.Errorf("athletes write %v; want check-ins, sessions and notes", got)
	}
}
