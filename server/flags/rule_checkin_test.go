package flags

import (
	"strings"
	"testing"
	"time"
)

// wellnessBaseline logs the REFERENCES §5.3 baseline (19, 20, 18, 21, 19,
// 17, 19; mean 19, sample SD 1.290994) on seven days before d(30), with
// missing days between.
func wellnessBaseline(c *camp) {
	for i, total := range []int{19, 20, 18, 21, 19, 17, 19} {
		c.wellnessTotal(d(2+4*i), total) // days 2, 6, …, 26
	}
	c.wellnessTotal(d(1), 5) // 29 days before: outside the window
}

func TestWellnessDrop(t *testing.T) {
	// z = (15 − 19) / 1.290994 = −3.098387 (REFERENCES §5.3 [D]; z-score
	// practice, common practice); items 3, 2, 3, 4, 3 total 15 (McLean et al. 2010).
	c := &camp{}
	wellnessBaseline(c)
	c.wellness(d(30), 3, 2, 3, 4, 3)
	f := one(t, c.run(d(30)), RuleWellnessDrop)
	wantLevel(t, f, LevelAlert, StatusFlag)
	approx(t, "total", f.Value, 15, 0)
	approx(t, "baseline", f.Reference, 19, 1e-9)
	approxV(t, "z", f.Details["z"], -3.098387, 0.001)
	for _, tc := range []struct {
		total int
		level string
	}{{17, LevelWatch}, {18, ""}, {16, LevelAlert}} { // z −1.549, −0.775, −2.324
		c := &camp{}
		wellnessBaseline(c)
		c.wellnessTotal(d(30), tc.total)
		fs := c.run(d(30))
		if tc.level == "" {
			none(t, fs, RuleWellnessDrop)
			continue
		}
		wantLevel(t, one(t, fs, RuleWellnessDrop), tc.level, StatusFlag)
	}
}

func TestWellnessSingleItemAndForming(t *testing.T) {
	c := &camp{}
	wellnessBaseline(c)
	c.wellness(d(30), 5, 5, 5, 4, 1) // total 20 is fine, mood is at its worst
	f := one(t, c.run(d(30)), RuleWellnessDrop)
	wantLevel(t, f, LevelWatch, StatusFlag)
	if !strings.Contains(f.Reason, "mood") {
		t.Errorf("reason %q", f.Reason)
	}
	c = &camp{}
	for i := 0; i < 6; i++ {
		c.wellnessTotal(d(20+i), 20)
	}
	c.wellnessTotal(d(30), 12)
	f = one(t, c.run(d(30)), RuleWellnessDrop)
	wantLevel(t, f, LevelInfo, StatusForming)
	if !strings.Contains(f.Reason, "6 of 7") {
		t.Errorf("reason %q", f.Reason)
	}
	// A check-in without all five items gives no total and no flag.
	c = &camp{}
	wellnessBaseline(c)
	c.mass(d(30), 70)
	none(t, c.run(d(30)), RuleWellnessDrop)
}

func TestWellnessConstantBaselineUsesFloor(t *testing.T) {
	c := &camp{}
	for i := 0; i < 7; i++ {
		c.wellnessTotal(d(20+i), 20)
	}
	c.wellnessTotal(d(30), 18) // SD 0 floored at 1.0 point: z = −2
	f := one(t, c.run(d(30)), RuleWellnessDrop)
	wantLevel(t, f, LevelAlert, StatusFlag)
	approxV(t, "z", f.Details["z"], -2, 1e-9)
}

// USG ≥ 1.020 is the usual hypohydration cut-off (Hew-Butler et al. 2018);
// > 1.030 is "serious" in the NATA categories (Casa et al. 2000).
func TestHydration(t *testing.T) {
	for _, tc := range []struct {
		usg   float64
		level string
	}{{1.019, ""}, {1.020, LevelWatch}, {1.021, LevelWatch}, {1.030, LevelWatch}, {1.031, LevelAlert}} {
		c := &camp{}
		c.add(kindCheckin, d(5), map[string]any{"usg": 1.005})
		c.add(kindCheckin, d(5), map[string]any{"usg": tc.usg}) // the day's highest reading counts
		fs := c.run(d(5))
		if tc.level == "" {
			none(t, fs, RuleHydration)
			continue
		}
		f := one(t, fs, RuleHydration)
		wantLevel(t, f, tc.level, StatusFlag)
		if f.Caution != CautionHydration {
			t.Error("caution missing")
		}
		approx(t, "usg", f.Value, tc.usg, 0)
	}
	// Yesterday's reading does not flag today.
	c := &camp{}
	c.add(kindCheckin, d(4), map[string]any{"usg": 1.035})
	none(t, c.run(d(5)), RuleHydration)
}

func TestMissingCheckin(t *testing.T) {
	camp5 := time.FixedZone("camp", -5*3600)
	at := func(s string) time.Time {
		tm, err := time.Parse(time.RFC3339, s)
		if err != nil {
			t.Fatal(err)
		}
		return tm
	}
	c := &camp{}
	c.mass(d(4), 70) // yesterday's check-in does not count for today
	in := c.input(d(5))
	in.Location = camp5
	for _, tc := range []struct {
		now  string
		want bool
	}{
		{"2026-03-07T14:59:00Z", false}, // 09:59 camp time
		{"2026-03-07T15:00:00Z", true},  // 10:00 camp time
		{"2026-03-08T03:00:00Z", true},  // 22:00 camp time, same day
		{"2026-03-08T06:00:00Z", true},  // the next camp day: still missing
		{"2026-03-06T20:00:00Z", false}, // the day before in camp time
	} {
		in.Now = at(tc.now)
		fs := Compute(in)
		if got := len(rule(fs, RuleMissingCheckin)) == 1; got != tc.want {
			t.Errorf("now %s: missing=%v, want %v", tc.now, got, tc.want)
		}
	}
	// A configured hour of 9:30.
	in.Now = at("2026-03-07T14:45:00Z")
	in.Settings = map[string]map[string]float64{RuleMissingCheckin: {"hour": 9.5}}
	if f := one(t, Compute(in), RuleMissingCheckin); !strings.Contains(f.Reason, "09:30") {
		t.Errorf("reason %q", f.Reason)
	}
	// A check-in recorded at 06:30 on a phone in a zone nine hours ahead
	// (its UTC instant falls on the previous calendar day) counts for the
	// camp day it names.
	c.add(kindCheckin, d(5), map[string]any{"mass_kg": 69.8})
	c.last().At = "2026-03-07T06:30:00+09:00"
	in = c.input(d(5))
	in.Location, in.Now = camp5, at("2026-03-07T16:00:00Z")
	none(t, Compute(in), RuleMissingCheckin)
}
