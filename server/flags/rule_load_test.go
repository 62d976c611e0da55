package flags

import (
	"math"
	"strings"
	"testing"

	"cornerbook/server/flags/stats"
)

// stepLoads logs 300 AU a day on days 0..34 and then l2 a day on days
// 35..41 (today d(41)).
func stepLoads(c *camp, l2 float64) {
	for o := 0; o <= 41; o++ {
		l := 300.0
		if o >= 35 {
			l = l2
		}
		c.load(d(o), l)
	}
}

// After a long run at L1 and 7 days at L2, the EWMAs seeded with the first
// day are L2 − (L2 − L1)(1 − λ)^7 (Williams et al. 2017 recursion, solved
// by hand).
func stepRatio(l1, l2 float64) float64 {
	a := l2 - (l2-l1)*math.Pow(0.75, 7)
	c := l2 - (l2-l1)*math.Pow(27.0/29, 7)
	return a / c
}

func TestLoadSpike(t *testing.T) {
	for _, tc := range []struct {
		name  string
		l2    float64
		level string
		thr   string
	}{
		{"watch", 900, LevelWatch, "load_spike.watch_ratio"},
		{"inside", 800, "", ""},
		{"low", 100, LevelInfo, "load_spike.low_ratio"},
		{"inside low", 200, "", ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			c := &camp{}
			stepLoads(c, tc.l2)
			want := stepRatio(300, tc.l2)
			fs := c.run(d(41))
			if tc.level == "" {
				if want > 1.5 || want < 0.8 {
					t.Fatalf("set-up: ratio %.3f", want)
				}
				none(t, fs, RuleLoadSpike)
				return
			}
			f := one(t, fs, RuleLoadSpike)
			wantLevel(t, f, tc.level, StatusFlag)
			approx(t, "ratio", f.Value, want, 1e-9)
			if f.ThresholdName != tc.thr || f.Caution != CautionLoad {
				t.Errorf("flag %+v", f)
			}
			if _, ok := f.Details["coupled_rolling"]; !ok {
				t.Error("rolling ratios missing")
			}
		})
	}
}

func TestLoadSpikeRestDaysAndSeed(t *testing.T) {
	// The first record is a check-in with no session: the series starts
	// there with 0 AU, and rest days are 0.
	c := &camp{}
	c.mass(d(0), 70)
	series := []float64{0}
	for o := 1; o <= 40; o++ {
		l := 0.0
		switch {
		case o >= 34 && o%2 == 0:
			l = 1100
		case o < 34 && o%3 == 0:
			l = 500
		}
		if l > 0 {
			c.load(d(o), l)
		}
		series = append(series, l)
	}
	want := stats.EWMARatio(series, 7, 28)
	f := one(t, c.run(d(40)), RuleLoadSpike)
	approx(t, "ratio with rest days", f.Value, want.Ratio, 1e-9)
	approxV(t, "acute", f.Details["acute_au"], want.Acute, 1e-9)
	wantLevel(t, f, LevelWatch, StatusFlag)
}

func TestLoadSpikeFormingAndTaper(t *testing.T) {
	c := &camp{}
	for o := 0; o < 20; o++ {
		c.load(d(o), 400)
	}
	f := one(t, c.run(d(19)), RuleLoadSpike)
	wantLevel(t, f, LevelInfo, StatusForming)
	if !strings.Contains(f.Reason, "20 of 28 days") || f.Caution != CautionLoad {
		t.Errorf("flag %+v", f)
	}
	// No session load at all: forming, never a ratio from zero.
	c = &camp{}
	for o := 0; o < 30; o++ {
		c.mass(d(o), 70)
	}
	wantLevel(t, one(t, c.run(d(29)), RuleLoadSpike), LevelInfo, StatusForming)
	// A low ratio inside a planned taper week is expected.
	c = &camp{}
	stepLoads(c, 100)
	c.standardBout(map[string]any{"weeks": []map[string]any{{"week": 6, "level": "taper"}}})
	none(t, c.run(d(41)), RuleLoadSpike)
}

func TestMonotony(t *testing.T) {
	week := func(loads ...float64) *camp {
		c := &camp{}
		c.load(d(0), 900)  // history: well over 7 days
		c.load(d(22), 900) // 8 days before today: outside the week
		for i, l := range loads {
			if l > 0 {
				c.load(d(23+i), l)
			}
		}
		return c
	}
	// Foster 1998: 420, 225, 720, rest, 360, 120, rest → 1.016830, no flag.
	none(t, week(420, 225, 720, 0, 360, 120, 0).run(d(29)), RuleMonotony)
	// High-monotony week with a rest day: 2.236753, strain 5166.8988 (REFERENCES §3.3 [D]).
	f := one(t, week(400, 350, 420, 380, 400, 360, 0).run(d(29)), RuleMonotony)
	wantLevel(t, f, LevelWatch, StatusFlag)
	approx(t, "monotony", f.Value, 2.236753, 0.0005)
	approxV(t, "strain", f.Details["strain"], 5166.8988, 0.05)
	approxV(t, "weekly load", f.Details["weekly_load_au"], 2310, 1e-9)
	// Just inside a threshold set to 2.25.
	in := week(400, 350, 420, 380, 400, 360, 0).input(d(29))
	in.Settings = map[string]map[string]float64{RuleMonotony: {"watch": 2.25}}
	none(t, Compute(in), RuleMonotony)
	// Identical non-zero loads: "no variation", no division.
	f = one(t, week(300, 300, 300, 300, 300, 300, 300).run(d(29)), RuleMonotony)
	wantLevel(t, f, LevelWatch, StatusFlag)
	if f.Value != nil || !strings.Contains(f.Reason, "No variation") {
		t.Errorf("flag %+v", f)
	}
	// A week of rest: nothing monotonous.
	none(t, week(0, 0, 0, 0, 0, 0, 0).run(d(29)), RuleMonotony)
	// Five days on record: forming.
	c := &camp{}
	for o := 0; o < 5; o++ {
		c.load(d(o), 300)
	}
	wantLevel(t, one(t, c.run(d(4)), RuleMonotony), LevelInfo, StatusForming)
}

// The stored load_au (derived by the hub, Foster et al. 2001: rpe ×
// minutes) is used as is; without it the load is rpe × minutes; a session
// with neither adds nothing.
func TestSessionLoadSources(t *testing.T) {
	c := &camp{}
	c.load(d(0), 900)
	week := []float64{400, 350, 420, 380, 400, 360, 0}
	for i, l := range week {
		switch {
		case i%2 == 0 && l > 0:
			c.add(kindSession, d(23+i), map[string]any{"type": "boxing", "load_au": l})
		case l > 0:
			c.session(d(23+i), l/4, 4, "")
		}
	}
	c.add(kindSession, d(29), map[string]any{"type": "other", "minutes": 30}) // no RPE yet: no load
	f := one(t, c.run(d(29)), RuleMonotony)
	approx(t, "monotony", f.Value, 2.236753, 0.0005)
}

// A fighter who flies east mid-camp: check-ins carry different offsets,
// and one recorded just after midnight in the new zone is still the camp
// day the device chose. Windows count those day strings, so the wellness
// baseline keeps its seven days.
func TestDaysComeFromDayStringsAcrossZones(t *testing.T) {
	c := &camp{}
	for i, total := range []int{19, 20, 18, 21, 19, 17, 19} {
		c.wellnessTotal(d(20+i), total)
		if i >= 4 {
			// In the new zone (+09:00) the instant is the previous UTC day.
			c.last().At = d(20+i) + "T06:30:00+09:00"
		}
	}
	c.wellness(d(27), 3, 2, 3, 4, 3)
	c.last().At = d(27) + "T00:10:00+09:00"
	f := one(t, c.run(d(27)), RuleWellnessDrop)
	approxV(t, "baseline check-ins", f.Details["baseline_checkins"], 7, 0)
	approxV(t, "z", f.Details["z"], -3.098387, 0.001)
}
