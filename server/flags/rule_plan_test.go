package flags

import (
	"strings"
	"testing"
)

func planCamp() *camp {
	c := &camp{}
	c.standardBout(map[string]any{"reference_load_au": 2500, "weeks": []map[string]any{
		{"week": 1, "level": "heavy"}, {"week": 2, "level": "medium"}, {"week": 8, "level": "taper"},
	}})
	return c
}

func TestOffPlan(t *testing.T) {
	// Week 1 heavy = 1.0 × 2500 AU. Four days in.
	for _, tc := range []struct {
		name  string
		loads []float64
		want  bool
	}{
		{"above", []float64{450, 450, 450, 450}, true},                  // projects 3150: +26 %
		{"inside", []float64{400, 400, 400, 400}, false},                // 2800: +12 %
		{"rest day inside the week", []float64{600, 600, 0, 600}, true}, // 3150
		{"below", []float64{250, 0, 250, 250}, true},                    // 1312.5: −47.5 %
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := planCamp()
			for i, l := range tc.loads {
				if l > 0 {
					c.load(d(i), l)
				}
			}
			fs := c.run(d(3))
			if !tc.want {
				none(t, fs, RuleOffPlan)
				return
			}
			f := one(t, fs, RuleOffPlan)
			wantLevel(t, f, LevelInfo, StatusFlag)
			approx(t, "planned", f.Reference, 2500, 1e-9)
			sum := 0.0
			for _, l := range tc.loads {
				sum += l
			}
			approx(t, "projected", f.Value, sum*7/4, 1e-9)
		})
	}
	// Week 2 medium = 0.7 × 2500 = 1750 AU: exactly −20 % is inside, −24 % is not.
	c := planCamp()
	for o := 7; o <= 10; o++ {
		c.load(d(o), 200)
	}
	none(t, c.run(d(10)), RuleOffPlan)
	c = planCamp()
	for o := 7; o <= 10; o++ {
		c.load(d(o), 190)
	}
	if f := one(t, c.run(d(10)), RuleOffPlan); !strings.Contains(f.Reason, "below the planned medium week") {
		t.Errorf("reason %q", f.Reason)
	}
	// Two days into the week: forming.
	c = planCamp()
	c.load(d(0), 2000)
	wantLevel(t, one(t, c.run(d(1)), RuleOffPlan), LevelInfo, StatusForming)
}

// Taper cut of 41–60 % of the reference week (Bosquet et al. 2007): with
// the reference of 2500 AU the taper week should be 1000–1475 AU.
func TestOffPlanTaper(t *testing.T) {
	c := planCamp()
	none(t, c.run(d(30)), RuleOffPlan) // default taper level 0.5: a 50 % cut
	for _, tc := range []struct {
		frac float64
		want bool
	}{{0.7, true}, {0.59, false}, {0.40, false}, {0.35, true}} {
		in := planCamp().input(d(30))
		in.Settings = map[string]map[string]float64{RuleOffPlan: {"level_taper": tc.frac}}
		fs := rule(Compute(in), RuleOffPlan)
		if !tc.want {
			if len(fs) != 0 {
				t.Errorf("taper %.2f: %s", tc.frac, describe(fs))
			}
			continue
		}
		if len(fs) != 1 || !strings.Contains(fs[0].Reason, "1000–1475 AU") {
			t.Errorf("taper %.2f: %s", tc.frac, describe(fs))
		}
	}
	// After the taper week has passed, nothing more to say about it.
	in := planCamp().input(d(56))
	in.Settings = map[string]map[string]float64{RuleOffPlan: {"level_taper": 0.7}}
	none(t, Compute(in), RuleOffPlan)
}

// Residual training effects, Issurin 2008: maximal strength 30 ± 5 days,
// maximal speed 5 ± 3 days; flags at > 35 and > 8 days.
func TestResidualGap(t *testing.T) {
	run := func(strength, speed int, speedFocus string) []Flag {
		c := &camp{}
		c.standardBout(nil)
		c.mass(d(0), 70)
		c.session(d(strength), 60, 7, "max_strength")
		c.session(d(speed), 30, 6, speedFocus)
		c.session(d(39), 60, 4, "aerobic")
		return rule(c.run(d(40)), RuleResidualGap)
	}
	if fs := run(5, 32, "speed"); len(fs) != 0 { // 35 and 8 days
		t.Errorf("inside: %s", describe(fs))
	}
	fs := run(4, 31, "plyometric") // 36 and 9 days
	if len(fs) != 2 {
		t.Fatalf("want two: %s", describe(fs))
	}
	for _, f := range fs {
		wantLevel(t, f, LevelInfo, StatusFlag)
	}
	// No speed session in 40 days of records.
	c := &camp{}
	c.standardBout(nil)
	c.mass(d(0), 70)
	c.session(d(30), 60, 7, "max_strength")
	f := one(t, c.run(d(40)), RuleResidualGap)
	if !strings.Contains(f.Reason, "No speed or plyometric session in the 40 days on record") {
		t.Errorf("reason %q", f.Reason)
	}
	// A speed session 131 days back, in the camp before this one: beyond
	// the 120 days the rule looks back, so reported as the lower bound,
	// the same with the whole history as with the hub's window.
	c = &camp{}
	c.session(d(-131), 30, 6, "speed")
	c.standardBout(nil)
	c.mass(d(0), 70)
	c.session(d(-1), 60, 7, "max_strength")
	for _, from := range []string{"", d(-120)} {
		in := c.input(d(0))
		in.From = from
		var f Flag
		for _, x := range Compute(in) {
			if x.Rule == RuleResidualGap && strings.Contains(x.Title, "Speed") {
				f = x
			}
		}
		if f.Value == nil || *f.Value != LookbackDays || f.Details["lower_bound"] != 1 ||
			!strings.Contains(f.Reason, "No speed or plyometric session in the last 120 days") {
			t.Errorf("from %q: %+v", from, f)
		}
	}
	// A new athlete: forming for both qualities.
	c = &camp{}
	c.standardBout(nil)
	c.mass(d(36), 70)
	fs = rule(c.run(d(40)), RuleResidualGap)
	if len(fs) != 2 {
		t.Fatalf("want two forming: %s", describe(fs))
	}
	for _, f := range fs {
		wantLevel(t, f, LevelInfo, StatusForming)
	}
	// After the bout: nothing.
	c.session(d(1), 60, 7, "max_strength")
	none(t, c.run(d(57)), RuleResidualGap)
}
