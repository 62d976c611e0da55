package flags

import (
	"encoding/json"
	"math"
	"strconv"
	"strings"
	"testing"

	"cornerbook/server/flags/day"
	"cornerbook/server/flags/stats"
)

// Path arithmetic, REFERENCES §6.1 [D].
func TestPathFormulas(t *testing.T) {
	// Linear plan 70.0 → 65.0 kg over 56 days: day 21 = 68.1250 kg
	// (common practice).
	d0 := day.MustParse("2026-03-02")
	linear := []Knot{{d0, 70}, {d0 + 56, 65}}
	approxV(t, "linear day 21", PathAt(linear, d0+21), 68.1250, 0.0005)
	approxV(t, "before first knot", PathAt(linear, d0-3), 70, 0)
	approxV(t, "after last knot", PathAt(linear, d0+60), 65, 0)
	if !math.IsNaN(PathAt(nil, d0)) {
		t.Error("empty path must be NaN")
	}
	// Constant-% path at 0.7 %/week (Garthe et al. 2011 rate).
	want := []float64{69.5100, 69.0234, 68.5403, 68.0605, 67.5841, 67.1110, 66.6412, 66.1747}
	for i, w := range want {
		approxV(t, "geometric week", GeometricMass(70, 0.7, float64(i+1)), w, 0.0005)
	}
	approxV(t, "weeks to 135 lb at 0.7 %", WeeksNeeded(70, 61.23497, 0.7), 19.0440, 0.01)
	approxV(t, "weeks to 135 lb at 1.0 %", WeeksNeeded(70, 61.23497, 1.0), 13.3107, 0.01)
	// 70.0 → 68.6 kg in a week = 2.0000 %/week (Garthe et al. 2011 context).
	approxV(t, "weekly loss", WeeklyLossPct(70, 68.6, 7), 2.0, 0.001)
	// Default path: knee at limit × 1.05 seven days before a day-before
	// weigh-in (× 1.03 for same-day), then the limit at weigh-in.
	p := DefaultPath(d0, d0+56, 70, 63.5, 1.05, 7)
	approxV(t, "knee", PathAt(p, d0+49), 66.675, 1e-9)
	approxV(t, "day 21", PathAt(p, d0+21), 70-(70-66.675)*21.0/49, 1e-9)
	approxV(t, "weigh-in", PathAt(p, d0+56), 63.5, 1e-9)
	approxV(t, "final week midpoint", PathAt(DefaultPath(d0, d0+56, 70, 63.5, 1.03, 7), d0+52), 63.5*1.03-(63.5*0.03)*3/7, 1e-9)
	// Already under the knee: the plan never rises.
	approxV(t, "no gain", PathAt(DefaultPath(d0, d0+56, 65, 63.5, 1.05, 7), d0+21), 65, 1e-9)
	// A camp shorter than the final phase goes straight to the limit.
	approxV(t, "short camp", PathAt(DefaultPath(d0, d0+5, 66, 63.5, 1.05, 7), d0+5), 63.5, 1e-9)
}

// Stand-down minimums, Neidecker et al. 2019 (ARP consensus): stoppage 30,
// knockout 60, knockout with loss of consciousness 90 days; head knock and
// knockdown until clearance with no date.
func TestStandDownEnd(t *testing.T) {
	for kind, want := range map[string]string{"stoppage": "2026-03-31", "knockout": "2026-04-30", "knockout_loc": "2026-05-30"} {
		got, ok := StandDownEnd(kind, "2026-03-01")
		if !ok || got != want {
			t.Errorf("%s: %s %v, want %s", kind, got, ok, want)
		}
	}
	for _, kind := range []string{"head_knock", "knockdown", "injury"} {
		if got, ok := StandDownEnd(kind, "2026-03-01"); ok {
			t.Errorf("%s has no date, got %s", kind, got)
		}
	}
	if s := StandDownFor("head_knock", 30, 60, 90); !s.Applies || s.Dated {
		t.Error("head knock: stand-down until clearance")
	}
	if s := StandDownFor("injury", 30, 60, 90); s.Applies {
		t.Error("injury: no sparring stand-down")
	}
}

// Taper band, Bosquet et al. 2007: 2500 AU cut by 41–60 % = 1000–1475 AU.
func TestTaperBand(t *testing.T) {
	lo, hi := TaperBand(2500, 41, 60)
	approxV(t, "low", lo, 1000, 1e-9)
	approxV(t, "high", hi, 1475, 1e-9)
}

// massAt logs a constant morning mass on days from..to except skip.
func massAt(c *camp, from, to int, kg float64, skip ...int) {
	for o := from; o <= to; o++ {
		skipped := false
		for _, s := range skip {
			skipped = skipped || s == o
		}
		if !skipped {
			c.mass(d(o), kg)
		}
	}
}

func TestMassAbovePath(t *testing.T) {
	planned := 70 - (70-66.675)*21.0/49 // default path on day 21
	cases := []struct {
		name      string
		pctLimit  float64
		level     string
		threshold string
	}{
		{"watch", 1.5, LevelWatch, "mass_above_path.watch_pct"},
		{"inside", 0.9, "", ""},
		{"alert", 2.5, LevelAlert, "mass_above_path.alert_pct"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := &camp{}
			c.standardBout(nil)
			// Missing days 15 and 16 (and the days before 10): the trend runs
			// over the masses logged.
			massAt(c, 10, 21, planned+tc.pctLimit/100*63.5, 15, 16)
			fs := c.run(d(21))
			if tc.level == "" {
				none(t, fs, RuleMassAbovePath)
				return
			}
			f := one(t, fs, RuleMassAbovePath)
			wantLevel(t, f, tc.level, StatusFlag)
			approx(t, "path", f.Reference, planned, 1e-9)
			approxV(t, "excess % of limit", f.Details["excess_pct_of_limit"], tc.pctLimit, 1e-9)
			if f.ThresholdName != tc.threshold || f.Caution != CautionMass || f.Unit != "kg" {
				t.Errorf("flag %+v", f)
			}
		})
	}
}

func TestMassTrendIsEWMASeededWithFirst(t *testing.T) {
	// 70, 69, 68 with λ = 0.25: 70 → 69.75 → 69.3125 (Williams et al. 2017
	// recursion; arithmetic by hand).
	c := &camp{}
	c.standardBout(map[string]any{"path": []map[string]any{{"day": d(0), "mass_kg": 66}, {"day": d(56), "mass_kg": 60}}})
	c.mass(d(1), 70)
	c.mass(d(2), 69)
	c.add(kindCheckin, d(2), map[string]any{"mass_kg": 80.0}) // a later weighing the same day is not the morning mass
	c.last().At = d(2) + "T18:00:00+01:00"
	c.mass(d(4), 68)
	f := one(t, c.run(d(4)), RuleMassAbovePath)
	approx(t, "trend", f.Value, 69.3125, 1e-9)
	// The coach's knots override the default path: 66 → 60 over 56 days.
	approx(t, "explicit path", f.Reference, 66-6*4.0/56, 1e-9)
	wantLevel(t, f, LevelAlert, StatusFlag)
}

func TestMassAbovePathSameDayAndForming(t *testing.T) {
	c := &camp{}
	c.standardBout(map[string]any{"weigh_in_type": "same_day"})
	f := one(t, c.run(d(21)), RuleMassAbovePath)
	wantLevel(t, f, LevelInfo, StatusForming)
	if f.Caution != CautionMass {
		t.Error("forming mass flags carry the caution too")
	}
	// Same-day knee at limit × 1.03 = 65.405 kg on day 49.
	massAt(c, 45, 49, 65.405+0.015*63.5)
	f = one(t, c.run(d(49)), RuleMassAbovePath)
	approx(t, "same-day knee", f.Reference, 65.405, 1e-9)
	wantLevel(t, f, LevelWatch, StatusFlag)
	// After the weigh-in the rule no longer applies.
	massAt(c, 57, 58, 75)
	none(t, c.run(d(58)), RuleMassAbovePath)
	// No bout: no path, no flag.
	c.bout = nil
	none(t, c.run(d(49)), RuleMassAbovePath)
}

// linearMasses logs masses falling kgPerDay on the given days (offsets
// from d(20)), ending today = d(33).
func linearMasses(c *camp, kgPerDay float64, offsets []int) (kg []float64) {
	for _, o := range offsets {
		m := 70 - kgPerDay*float64(o)
		c.mass(d(20+o), m)
		kg = append(kg, m)
	}
	return kg
}

func TestMassLossFast(t *testing.T) {
	every := []int{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13}
	cases := []struct {
		name    string
		perDay  float64
		offsets []int
		level   string
	}{
		{"watch", 0.13, every, LevelWatch},
		{"inside", 0.09, every, ""},
		{"alert", 0.2, every, LevelAlert},
		// Every other day: 7 check-ins over 14 days, slope unchanged.
		{"alert with missing days", 0.2, []int{1, 3, 5, 7, 9, 11, 13}, LevelAlert},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := &camp{}
			kg := linearMasses(c, tc.perDay, tc.offsets)
			c.mass(d(5), 90) // 29 days earlier: outside the 14-day slope window
			fs := c.run(d(33))
			trend := stats.EWMA(append([]float64{90}, kg...), 0.25)
			wantLoss := tc.perDay * 7 / trend * 100
			if tc.level == "" {
				if wantLoss > 1.0 {
					t.Fatalf("case set-up: loss %.2f", wantLoss)
				}
				none(t, fs, RuleMassLossFast)
				return
			}
			f := one(t, fs, RuleMassLossFast)
			wantLevel(t, f, tc.level, StatusFlag)
			approx(t, "loss %/week", f.Value, wantLoss, 1e-9)
			approxV(t, "kg/week", f.Details["slope_kg_week"], -tc.perDay*7, 1e-9)
			if f.Caution != CautionMass {
				t.Error("caution missing")
			}
		})
	}
}

func TestMassLossFastFormingAndFinalWeek(t *testing.T) {
	c := &camp{}
	linearMasses(c, 0.3, []int{0, 2, 4, 6, 8, 13})
	f := one(t, c.run(d(33)), RuleMassLossFast)
	wantLevel(t, f, LevelInfo, StatusForming)
	if !strings.Contains(f.Reason, "6 of 7") {
		t.Errorf("reason %q", f.Reason)
	}
	// A steep loss inside the final 7 days before weigh-in is not this
	// rule's to judge.
	c = &camp{}
	linearMasses(c, 0.3, []int{0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13})
	c.setBout(map[string]any{"camp_start": d(0), "weigh_in": d(36) + "T10:00:00+01:00", "weigh_in_type": "day_before",
		"bout_day": d(37), "limit_kg": 63.5, "start_mass_kg": 72.0})
	none(t, c.run(d(33)), RuleMassLossFast)
	c.setBout(map[string]any{"camp_start": d(0), "weigh_in": d(41) + "T10:00:00+01:00", "weigh_in_type": "day_before",
		"bout_day": d(42), "limit_kg": 63.5, "start_mass_kg": 72.0})
	wantLevel(t, one(t, c.run(d(33)), RuleMassLossFast), LevelAlert, StatusFlag)
}

func TestCutAtRisk(t *testing.T) {
	// Today d(35); final phase starts d(49): two weeks at 1 %/week.
	cases := []struct {
		name, weighIn string
		pct           float64 // wanted mass still to lose, % of projected mass
		level         string
	}{
		{"day-before watch", "day_before", 6, LevelWatch},
		{"day-before inside", "day_before", 4.9, ""},
		{"day-before alert", "day_before", 9, LevelAlert},
		{"same-day watch", "same_day", 4, LevelWatch},
		{"same-day inside", "same_day", 2.9, ""},
		{"same-day alert", "same_day", 5.5, LevelAlert},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			projected := 63.5 / (1 - tc.pct/100)
			m := projected / (0.99 * 0.99)
			c := &camp{}
			c.standardBout(map[string]any{"weigh_in_type": tc.weighIn})
			massAt(c, 30, 35, m, 32)
			fs := c.run(d(35))
			if tc.level == "" {
				none(t, fs, RuleCutAtRisk)
				return
			}
			f := one(t, fs, RuleCutAtRisk)
			wantLevel(t, f, tc.level, StatusFlag)
			approx(t, "still to lose %", f.Value, tc.pct, 1e-9)
			approxV(t, "projected", f.Details["projected_kg"], projected, 1e-9)
			if f.Caution != CautionMass {
				t.Error("caution missing")
			}
		})
	}
}

func TestCutAtRiskFinalDaysAndForming(t *testing.T) {
	// In the final week nothing is projected: 66.0 → 63.5 kg still to lose
	// is 3.7879 % (REFERENCES §6.2 [D]): watch for a same-day weigh-in,
	// inside the 5 % of a day-before one.
	c := &camp{}
	c.standardBout(map[string]any{"weigh_in_type": "same_day"})
	massAt(c, 50, 53, 66.0)
	f := one(t, c.run(d(53)), RuleCutAtRisk)
	approx(t, "acute loss %", f.Value, 3.7879, 0.001)
	wantLevel(t, f, LevelWatch, StatusFlag)
	c.standardBout(nil)
	none(t, c.run(d(53)), RuleCutAtRisk)
	c = &camp{}
	c.standardBout(nil)
	wantLevel(t, one(t, c.run(d(10)), RuleCutAtRisk), LevelInfo, StatusForming)
}

// TestMassReasonInAthleteUnits: a fighter who weighs in pounds reads the
// reason in pounds, converted with the exact factor 1 lb = 0.45359237 kg
// (1959 international agreement; NIST SP 811 B.8); the flag's value and
// threshold stay in kg.
func TestMassReasonInAthleteUnits(t *testing.T) {
	planned := 70 - (70-66.675)*21.0/49
	c := &camp{}
	c.standardBout(nil)
	massAt(c, 10, 21, planned+2.5/100*63.5)
	in := c.input(d(21))
	in.Athlete.Body = json.RawMessage(`{"name":"Pound Fighter","units":"lb"}`)
	f := one(t, Compute(in), RuleMassAbovePath)
	wantTrend := strconv.FormatFloat(*f.Value/0.45359237, 'f', 1, 64) + " lb"
	if !strings.Contains(f.Reason, wantTrend) || strings.Contains(f.Reason, " kg") {
		t.Errorf("reason %q should give the trend as %s and no kg", f.Reason, wantTrend)
	}
	if !strings.Contains(f.Reason, "140.0 lb limit") { // 63.5 kg = 139.99 lb
		t.Errorf("reason %q should give the 63.5 kg limit as 140.0 lb", f.Reason)
	}
	if f.Unit != "kg" {
		t.Errorf("unit %q: the flag's numbers stay in kg", f.Unit)
	}
}
