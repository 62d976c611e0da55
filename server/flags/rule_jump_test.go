package flags

import (
	"strings"
	"testing"
)

// Flight-time heights: h = g·t²/8 with g = 9.81, REFERENCES §1.3 [D]
// (kinematics; the flight-time method).
func TestHeightFromFlight(t *testing.T) {
	approxV(t, "t 0.500 s", HeightFromFlight(500), 30.6563, 0.05)
	approxV(t, "t 0.600 s", HeightFromFlight(600), 44.1450, 0.05)
	approxV(t, "1.000 s", HeightFromFlight(1000), 122.625, 0.001)
}

// jumpBaseline logs five test days in the 28 days before d(40), with rest
// days and untested days between, whose daily means are 38.8, 41.2, 38.8,
// 41.2 and 40.0 cm: mean 40.0, SD 1.2, CV 3 % (so TE 1.2 cm, the
// REFERENCES §1.5 example).
func jumpBaseline(c *camp) {
	c.jump(d(12), 38.0, 39.6, 38.8) // day 40 − 28: first day of the window
	c.jump(d(19), 41.2, 41.2)
	c.jump(d(26), 38.8)
	c.jump(d(33), 40.2, 42.2)
	c.jump(d(38), 40.0, 39.0, 41.0)
	c.jump(d(11), 20.0, 20.0) // 29 days before: outside the window
}

func TestJumpDrop(t *testing.T) {
	cases := []struct {
		name          string
		today         []float64
		level, status string // "" level: no flag
		threshold     string
	}{
		// 37.0 cm: −7.5 %, −2.5 TE (REFERENCES §1.5, [D]); watch needs
		// > max(5 %, 2 × 3 %) = 6 %.
		{"watch", []float64{36.0, 37.0, 38.0}, LevelWatch, StatusFlag, "jump_drop.watch_cv"},
		// 5.75 % is over 5 % but inside 2 × CV: no flag.
		{"inside 2×CV", []float64{37.7}, "", "", ""},
		// 11.25 % > max(10 %, 9 %).
		{"alert", []float64{35.5, 35.5}, LevelAlert, StatusFlag, "jump_drop.alert_pct"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := &camp{}
			jumpBaseline(c)
			c.jump(d(40), tc.today...)
			fs := c.run(d(40))
			if tc.level == "" {
				none(t, fs, RuleJumpDrop)
				return
			}
			f := one(t, fs, RuleJumpDrop)
			wantLevel(t, f, tc.level, tc.status)
			approx(t, "baseline", f.Reference, 40.0, 1e-9)
			approxV(t, "noise", f.Details["cv_pct"], 3.0, 1e-6)
			approxV(t, "TE", f.Details["te_cm"], 1.2, 1e-6)
			if f.ThresholdName != tc.threshold {
				t.Errorf("threshold name %q, want %q", f.ThresholdName, tc.threshold)
			}
			if len(f.Inputs) != 6 {
				t.Errorf("inputs %v: want today's and the five baseline jumps", f.Inputs)
			}
		})
	}
	// The REFERENCES example itself, through the engine.
	c := &camp{}
	jumpBaseline(c)
	c.jump(d(40), 37.0)
	f := one(t, c.run(d(40)), RuleJumpDrop)
	approxV(t, "drop %", f.Details["drop_pct"], 7.5, 0.01)
	approxV(t, "drop TE", f.Details["drop_te"], 2.5, 0.01)
	approx(t, "watch line cm", f.Threshold, 40*(1-0.06), 1e-9)
	if !strings.Contains(f.Reason, "CMJ 37.0 cm, 7.5 % below the 28-day baseline of 40.0 cm") {
		t.Errorf("reason %q", f.Reason)
	}
}

func TestJumpDropNoiseFloorAndBest(t *testing.T) {
	// Nearly identical days: CV 0.1 % is floored at 2 %, so watch is 5 %.
	c := &camp{}
	for _, o := range []int{10, 15, 20, 25, 30} {
		c.jump(d(o), 40.0, 40.04)
	}
	c.jump(d(31), 37.5, 38.5, 40.0) // mean 38.67: 3.4 % drop, no flag
	none(t, c.run(d(31)), RuleJumpDrop)
	c = &camp{}
	for _, o := range []int{10, 15, 20, 25, 30} {
		c.jump(d(o), 40.0, 40.04)
	}
	c.jump(d(31), 36.0, 38.0, 40.0) // mean 38.0: 5.05 % drop; best 40.0 stays high
	f := one(t, c.run(d(31)), RuleJumpDrop)
	wantLevel(t, f, LevelWatch, StatusFlag)
	approxV(t, "noise floor", f.Details["cv_pct"], 2, 1e-9)
	approxV(t, "best", f.Details["best_cm"], 40.0, 1e-9)
	if f.ThresholdName != "jump_drop.watch_pct" {
		t.Errorf("threshold name %q", f.ThresholdName)
	}
}

func TestJumpDropForming(t *testing.T) {
	c := &camp{}
	c.jump(d(12), 40)
	c.jump(d(19), 41)
	c.jump(d(26), 39)
	c.jump(d(33), 40)
	c.jump(d(11), 40) // outside the window: does not count toward the five
	c.jump(d(40), 30)
	f := one(t, c.run(d(40)), RuleJumpDrop)
	wantLevel(t, f, LevelInfo, StatusForming)
	if !strings.Contains(f.Reason, "4 of 5 test days") {
		t.Errorf("reason %q", f.Reason)
	}
	// No test today: nothing to judge, no flag.
	none(t, c.run(d(39)), RuleJumpDrop)
}

func TestJumpDropInvalidAttemptsAndFlightTimes(t *testing.T) {
	c := &camp{}
	jumpBaseline(c)
	// Flight times: 550 ms → 37.09 cm; 150 ms is an entry error and is dropped.
	c.add(kindJump, d(40), map[string]any{"test": "cmj", "flight_ms": []float64{550, 550, 150}, "method": "mat"})
	f := one(t, c.run(d(40)), RuleJumpDrop)
	approx(t, "today from flight", f.Value, HeightFromFlight(550), 1e-9)
	approxV(t, "attempts", f.Details["attempts"], 2, 0)
	// Another test type does not count.
	c = &camp{}
	jumpBaseline(c)
	c.add(kindJump, d(40), map[string]any{"test": "squat_jump", "heights_cm": []float64{20}})
	none(t, c.run(d(40)), RuleJumpDrop)
}

func TestJumpDropDoesNotMixMethods(t *testing.T) {
	// A force-plate baseline does not judge a mat jump (heights differ by
	// method; Asian J Sports Med methods comparison, REFERENCES §1.1).
	c := &camp{}
	for _, o := range []int{20, 22, 24, 26, 28} {
		c.add(kindJump, d(o), map[string]any{"test": "cmj", "heights_cm": []float64{45}, "method": "force_plate"})
	}
	c.jump(d(30), 38)
	f := one(t, c.run(d(30)), RuleJumpDrop)
	wantLevel(t, f, LevelInfo, StatusForming)
}
