package flags

import (
	"strings"
	"testing"
)

// Sparring caps are product defaults (common practice, no source; REFERENCES §12).
func TestSparDensity(t *testing.T) {
	cases := []struct {
		name        string
		total, hard int
		want        map[string]string // threshold name → level
	}{
		{"at the cap", 30, 0, nil},
		{"watch", 31, 0, map[string]string{"spar_density.cap_rounds": LevelWatch}},
		{"inside alert", 37, 0, map[string]string{"spar_density.cap_rounds": LevelWatch}},
		{"alert", 38, 0, map[string]string{"spar_density.alert_factor": LevelAlert}},
		{"hard at cap", 20, 15, nil},
		{"hard watch", 20, 16, map[string]string{"spar_density.hard_cap_rounds": LevelWatch}},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			c := &camp{}
			c.mass(d(0), 70) // history starts well before the window
			// Spread over days 24..30 with rest days 25 and 28.
			days := []int{24, 26, 27, 29, 30}
			for i := 0; i < tc.total; i++ {
				in := 2
				if i < tc.hard {
					in = 3
				}
				c.rounds(d(days[i%len(days)]), 1, in)
			}
			c.rounds(d(23), 20, 3) // 8 days before: outside the window
			c.add(kindRound, d(30), map[string]any{"activity": "pads", "seconds": 180, "intensity": 3})
			fs := rule(c.run(d(30)), RuleSparDensity)
			if len(fs) != len(tc.want) {
				t.Fatalf("want %d flags, got %s", len(tc.want), describe(fs))
			}
			for _, f := range fs {
				if lvl, ok := tc.want[f.ThresholdName]; !ok || f.Level != lvl {
					t.Errorf("unexpected %s %s: %s", f.ThresholdName, f.Level, f.Reason)
				}
			}
		})
	}
}

func TestSparDensityWeekCapAndForming(t *testing.T) {
	c := &camp{}
	c.standardBout(map[string]any{"weeks": []map[string]any{{"week": 2, "level": "heavy", "spar_cap_rounds": 12}}})
	c.rounds(d(10), 13, 2)
	f := one(t, c.run(d(10)), RuleSparDensity)
	wantLevel(t, f, LevelWatch, StatusFlag)
	if f.ThresholdName != "bout.weeks[0].spar_cap_rounds" { // the JSON path: the first entry of weeks, week 2
		t.Errorf("threshold %q", f.ThresholdName)
	}
	approx(t, "cap", f.Reference, 12, 0)
	// Only three days of records and under the cap: forming, not clean.
	c = &camp{}
	c.rounds(d(8), 6, 2)
	c.rounds(d(10), 6, 2)
	f = one(t, c.run(d(10)), RuleSparDensity)
	wantLevel(t, f, LevelInfo, StatusForming)
}

// A week's planned sparring rounds stand over the older flat cap, and its
// planned hard rounds over the hard-round default (the coach's plan is the
// reference; common practice, no source).
func TestSparDensityPlannedRounds(t *testing.T) {
	c := &camp{}
	c.standardBout(map[string]any{"weeks": []map[string]any{
		{"week": 1, "level": "medium"},
		{"week": 2, "level": "heavy", "spar_cap_rounds": 30, "spar_rounds": 12, "hard_rounds": 4}}})
	c.rounds(d(9), 8, 2)
	c.rounds(d(10), 5, 3) // 13 rounds, 5 of them hard
	fs := rule(c.run(d(10)), RuleSparDensity)
	got := map[string]float64{}
	for _, f := range fs {
		got[f.ThresholdName] = *f.Threshold
	}
	if got["bout.weeks[1].spar_rounds"] != 12 || got["bout.weeks[1].hard_rounds"] != 4 || len(fs) != 2 {
		t.Fatalf("want the planned 12 rounds and 4 hard rounds as caps, got %s", describe(fs))
	}
	// Under both: nothing.
	c = &camp{}
	c.standardBout(map[string]any{"weeks": []map[string]any{
		{"week": 1, "level": "medium"},
		{"week": 2, "level": "heavy", "spar_rounds": 14, "hard_rounds": 6}}})
	c.mass(d(0), 70)
	c.rounds(d(9), 8, 2)
	c.rounds(d(10), 5, 3)
	if fs := rule(c.run(d(10)), RuleSparDensity); len(fs) != 0 {
		t.Fatalf("13 rounds (5 hard) inside a plan of 14 (6 hard): %s", describe(fs))
	}
}

func TestSparSpacing(t *testing.T) {
	hardOn := func(days ...int) *camp {
		c := &camp{}
		c.mass(d(0), 70)
		for _, o := range days {
			c.rounds(d(o), 2, 3)
		}
		c.rounds(d(29), 4, 2) // moderate sparring is not hard
		return c
	}
	// Consecutive hard days → watch.
	f := one(t, hardOn(29, 30).run(d(30)), RuleSparSpacing)
	wantLevel(t, f, LevelWatch, StatusFlag)
	if f.ThresholdName != "spar_spacing.min_gap_days" {
		t.Errorf("threshold %q", f.ThresholdName)
	}
	// 48 h apart, two hard days: clean.
	none(t, hardOn(28, 30).run(d(30)), RuleSparSpacing)
	// Three of the last seven days (with rest days between) → watch.
	f = one(t, hardOn(24, 27, 30).run(d(30)), RuleSparSpacing)
	if f.ThresholdName != "spar_spacing.max_hard_days" || !strings.Contains(f.Reason, "3 of the last 7 days") {
		t.Errorf("flag %s: %s", f.ThresholdName, f.Reason)
	}
	// The third hard day eight days back is outside the window.
	none(t, hardOn(23, 27, 30).run(d(30)), RuleSparSpacing)
	// Too little history: forming.
	c := &camp{}
	c.rounds(d(30), 3, 2)
	wantLevel(t, one(t, c.run(d(30)), RuleSparSpacing), LevelInfo, StatusForming)
}

func TestSparSpacingAfterAlerts(t *testing.T) {
	// A jump_drop alert today plus hard sparring today → watch.
	c := &camp{}
	jumpBaseline(c)
	c.jump(d(40), 35.0)
	c.rounds(d(40), 3, 3)
	fs := c.run(d(40))
	wantLevel(t, one(t, fs, RuleJumpDrop), LevelAlert, StatusFlag)
	f := one(t, fs, RuleSparSpacing)
	if !strings.Contains(f.Reason, "jump height alert") {
		t.Errorf("reason %q", f.Reason)
	}
	// A jump_drop watch is not enough.
	c = &camp{}
	jumpBaseline(c)
	c.jump(d(40), 37.0)
	c.rounds(d(40), 3, 3)
	none(t, c.run(d(40)), RuleSparSpacing)
	// A wellness alert too.
	c = &camp{}
	wellnessBaseline(c)
	c.wellness(d(30), 3, 2, 3, 4, 3)
	c.rounds(d(30), 2, 3)
	if f := one(t, c.run(d(30)), RuleSparSpacing); !strings.Contains(f.Reason, "wellness alert") {
		t.Errorf("reason %q", f.Reason)
	}
}

func TestSparOnHold(t *testing.T) {
	c := &camp{}
	inc := c.add(kindIncident, d(10), map[string]any{"type": "head_knock"})
	c.last().At = d(10) + "T16:30:00+01:00"
	// A round earlier that day, before the knock, is not inside the stand-down.
	c.add(kindRound, d(10), map[string]any{"activity": "spar", "seconds": 180, "intensity": 2})
	c.last().At = d(10) + "T16:00:00+01:00"
	fs := c.run(d(10))
	f := one(t, fs, RuleSparOnHold)
	wantLevel(t, f, LevelInfo, StatusFlag)
	if f.Caution != CautionHead || !strings.Contains(f.Reason, "no sparring or contact until cleared in writing by a doctor") {
		t.Errorf("flag %+v", f)
	}
	// Still on hold 100 days later with no clearance.
	wantLevel(t, one(t, c.run(d(110)), RuleSparOnHold), LevelInfo, StatusFlag)
	// Sparring inside the stand-down → alert (plus the daily info).
	c.rounds(d(12), 1, 1)
	fs = rule(c.run(d(12)), RuleSparOnHold)
	if len(fs) != 2 || fs[0].Level != LevelAlert && fs[1].Level != LevelAlert {
		t.Fatalf("want info and alert: %s", describe(fs))
	}
	// A clearance ends it from its day on.
	c.add(kindClearance, d(14), map[string]any{"incident": inc, "by": "Dr. A. Example"})
	none(t, c.run(d(14)), RuleSparOnHold)
	// The day before the clearance the round of d(12) is still an alert.
	if fs := rule(c.run(d(13)), RuleSparOnHold); len(fs) != 2 {
		t.Fatalf("want the restriction and the alert on d(13): %s", describe(fs))
	}
}

func TestSparOnHoldDatedMinimums(t *testing.T) {
	for _, tc := range []struct {
		kind string
		days int
	}{{"stoppage", 30}, {"knockout", 60}, {"knockout_loc", 90}} {
		t.Run(tc.kind, func(t *testing.T) {
			c := &camp{}
			inc := c.add(kindIncident, d(0), map[string]any{"type": tc.kind})
			c.add(kindClearance, d(2), map[string]any{"incident": inc, "by": "Dr. A. Example"})
			// Cleared early: the minimum still runs to its last day.
			f := one(t, c.run(d(tc.days-1)), RuleSparOnHold)
			approxV(t, "days left", f.Details["days_left"], 1, 0)
			none(t, c.run(d(tc.days)), RuleSparOnHold)
			// Not cleared: the hold goes on after the minimum.
			c2 := &camp{}
			c2.add(kindIncident, d(0), map[string]any{"type": tc.kind})
			wantLevel(t, one(t, c2.run(d(tc.days+5)), RuleSparOnHold), LevelInfo, StatusFlag)
		})
	}
	// The minimum is a setting (e.g. a federation's longer rule).
	c := &camp{}
	inc := c.add(kindIncident, d(0), map[string]any{"type": "stoppage"})
	c.add(kindClearance, d(2), map[string]any{"incident": inc, "by": "Dr. A. Example"})
	in := c.input(d(35))
	in.Settings = map[string]map[string]float64{RuleSparOnHold: {"stoppage_days": 42}}
	one(t, Compute(in), RuleSparOnHold)
	// …but never shortened below the published minimum.
	in = c.input(d(20))
	in.Settings = map[string]map[string]float64{RuleSparOnHold: {"stoppage_days": 10}}
	if f := one(t, Compute(in), RuleSparOnHold); *f.Threshold != 30 {
		t.Errorf("stand-down shortened to %v days", *f.Threshold)
	}
	// An injury carries no sparring stand-down.
	c = &camp{}
	c.add(kindIncident, d(0), map[string]any{"type": "injury"})
	none(t, c.run(d(1)), RuleSparOnHold)
}
