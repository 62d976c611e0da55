package records

import (
	"math"
	"testing"
)

func TestLbKg(t *testing.T) {
	tests := []struct {
		name      string
		got, want float64
		tol       float64
	}{
		// 1959 international yard and pound agreement; NIST SP 811 B.8: exact.
		{"1 lb", LbToKg(1), 0.45359237, 0},
		// REFERENCES.md §7.1 worked example (inverse of the exact factor).
		{"70 kg in lb", KgToLb(70), 154.323584, 1e-6},
		// REFERENCES.md §7.1: 150 lb = 68.0388555 kg.
		{"150 lb", LbToKg(150), 68.0388555, 1e-9},
		// REFERENCES.md summary table, pro_limit_lightweight.
		{"135 lb", LbToKg(135), 61.23496995, 1e-8},
		// REFERENCES.md summary table, pro_limit_cruiser.
		{"200 lb", LbToKg(200), 90.718474, 1e-8},
		// REFERENCES.md §7.1: featherweight 126 lb is 57.153 kg, not 61.2.
		{"126 lb", LbToKg(126), 57.15263862, 1e-8},
		// Round trip: 1 kg = 2.2046226218488 lb (REFERENCES.md §7.1).
		{"1 kg in lb", KgToLb(1), 2.2046226218488, 1e-12},
	}
	for _, tt := range tests {
		if math.Abs(tt.got-tt.want) > tt.tol {
			t.Errorf("%s: got %.12f, want %.12f ± %g", tt.name, tt.got, tt.want, tt.tol)
		}
	}
}

func TestJumpHeightCm(t *testing.T) {
	// REFERENCES.md §1.3, h = g·t²/8 with g = 9.81; tolerance ±0.0005 m = ±0.05 cm.
	tests := []struct {
		ms, wantCm float64
	}{
		{500, 30.6563}, // 0.306563 m
		{600, 44.1450}, // 0.441450 m
		// t = 0.570846 s ↔ h = 0.399592 m (REFERENCES.md §1.3, v = 2.80 m/s row).
		{570.846, 39.9592},
		// t = √(8h/g): h = 0.40 m ↔ t = 0.571137 s (REFERENCES.md §1.3).
		{571.137, 40.0},
	}
	for _, tt := range tests {
		if got := JumpHeightCm(tt.ms); math.Abs(got-tt.wantCm) > 0.05 {
			t.Errorf("JumpHeightCm(%v) = %.5f cm, want %.4f ± 0.05", tt.ms, got, tt.wantCm)
		}
	}
	// Tighter: the exact arithmetic of the formula for 0.5 s is 30.65625 cm.
	if got := JumpHeightCm(500); math.Abs(got-30.65625) > 1e-9 {
		t.Errorf("JumpHeightCm(500) = %v, want 30.65625 exactly (9.81 × 0.25 / 8 m)", got)
	}
}

func TestSessionLoad(t *testing.T) {
	// Foster et al. 2001; REFERENCES.md §3.3 week (420, 225, 720, 360, 120 AU).
	tests := []struct{ rpe, min, want float64 }{
		{7, 60, 420}, {5, 45, 225}, {8, 90, 720}, {6, 60, 360}, {4, 30, 120},
	}
	for _, tt := range tests {
		if got := SessionLoad(tt.rpe, tt.min); got != tt.want {
			t.Errorf("SessionLoad(%v, %v) = %v, want %v", tt.rpe, tt.min, got, tt.want)
		}
	}
}

func TestIntervalsSeconds(t *testing.T) {
	// Arithmetic of the definition sets × reps × (work + rest) + (sets − 1) × set rest.
	tests := []struct {
		work, rest     float64
		reps, sets     int
		setRest, wantS float64
	}{
		{180, 60, 3, 1, 0, 720},    // three 3-minute rounds, 1 minute between: 12 min
		{20, 10, 8, 1, 0, 240},     // 20 s / 10 s × 8: 4 min
		{30, 15, 8, 2, 180, 900},   // 2 × 8 × 45 s + 180 s
		{15, 15, 12, 3, 180, 1440}, // 3 × 12 × 30 s + 2 × 180 s
		{30, 15, 8, 0, 180, 0},     // no sets, no time
	}
	for _, tt := range tests {
		if got := IntervalsSeconds(tt.work, tt.rest, tt.reps, tt.sets, tt.setRest); got != tt.wantS {
			t.Errorf("IntervalsSeconds(%v,%v,%d,%d,%v) = %v, want %v", tt.work, tt.rest, tt.reps, tt.sets, tt.setRest, got, tt.wantS)
		}
	}
}
