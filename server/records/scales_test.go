package records

import "testing"

func TestCR10Anchors(t *testing.T) {
	// Foster et al. 2001, modified CR-10 (REFERENCES.md §3.1).
	want := map[float64]string{
		0: "Rest", 1: "Very, very easy", 2: "Easy", 3: "Moderate", 4: "Somewhat hard",
		5: "Hard", 6: "", 7: "Very hard", 8: "", 9: "", 10: "Maximal",
	}
	for r, label := range want {
		if got := CR10Label(r); got != label {
			t.Errorf("CR10Label(%v) = %q, want %q", r, got, label)
		}
	}
	if len(CR10) != 8 {
		t.Errorf("CR10 has %d anchors, want 8", len(CR10))
	}
}

func TestProtocols(t *testing.T) {
	seen := map[string]bool{ProtocolCustom: true}
	for _, p := range Protocols {
		if seen[p.ID] {
			t.Errorf("duplicate or reserved protocol id %q", p.ID)
		}
		seen[p.ID] = true
		// Every template must make a record that validation accepts.
		if p.WorkS <= 0 || p.Reps < 1 || p.Reps > MaxReps || p.Sets < 1 || p.Sets > MaxSets || p.Minutes() > MaxSessionMin {
			t.Errorf("%s: template outside the validation ranges: %+v", p.ID, p)
		}
	}
	// Three 3-minute rounds with a minute after each: 12 min (sets × reps × (work + rest)).
	if p, ok := ProtocolByID("rounds_3x3"); !ok || p.Minutes() != 12 {
		t.Errorf("rounds_3x3: got %+v minutes %v, want 12", p, p.Minutes())
	}
	// 20 s on / 10 s off × 8 = 4 min (common practice, no source).
	if p, ok := ProtocolByID("on20_off10_x8"); !ok || p.Minutes() != 4 {
		t.Errorf("on20_off10_x8: got %+v minutes %v, want 4", p, p.Minutes())
	}
}
