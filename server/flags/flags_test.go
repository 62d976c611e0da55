package flags

import (
	"encoding/json"
	"fmt"
	"testing"
	"time"

	devsync "cornerbook/sync"
)

func TestComputeSortsMostSeriousFirst(t *testing.T) {
	c := &camp{}
	wellnessBaseline(c)
	c.wellness(d(30), 3, 2, 3, 4, 3) // wellness alert
	c.add(kindCheckin, d(30), map[string]any{"usg": 1.022})
	inc := c.add(kindIncident, d(29), map[string]any{"type": "head_knock"})
	_ = inc
	fs := c.run(d(30))
	if len(fs) < 4 {
		t.Fatalf("too few flags: %s", describe(fs))
	}
	last := -3
	for i := range fs {
		r := Rank(&fs[i])
		if r < last {
			t.Fatalf("not sorted: %s", describe(fs))
		}
		if i > 0 && r == last && fs[i-1].Rule > fs[i].Rule {
			t.Fatalf("rule order: %s", describe(fs))
		}
		last = r
		if fs[i].Athlete != athleteID || fs[i].Day != d(30) || fs[i].Inputs == nil {
			t.Fatalf("flag identity: %+v", fs[i])
		}
	}
	// A stand-down in force is a restriction: it comes before every
	// prompt, alerts included, while its JSON level stays info.
	if fs[0].Rule != RuleSparOnHold || fs[0].Level != LevelInfo || fs[0].Restriction == nil {
		t.Errorf("first flag %s %s", fs[0].Rule, fs[0].Level)
	}
	if fs[1].Rule != RuleWellnessDrop || fs[1].Level != LevelAlert {
		t.Errorf("second flag %s %s", fs[1].Rule, fs[1].Level)
	}
	// Forming flags come last.
	if fs[len(fs)-1].Status != StatusForming {
		t.Errorf("last flag should be forming: %s", describe(fs))
	}
}

func TestDecisionAcknowledgesSameDayAndRule(t *testing.T) {
	c := &camp{}
	c.add(kindCheckin, d(5), map[string]any{"usg": 1.025})
	c.add(kindDecision, d(4), map[string]any{"rule": RuleHydration, "note": "yesterday's"})
	c.add(kindDecision, d(5), map[string]any{"rule": RuleHydration, "note": "fluids with breakfast, recheck at noon", "by": "coach"})
	id := c.last().ID
	c.add(kindDecision, d(5), map[string]any{"rule": RuleJumpDrop, "note": "other rule"})
	f := one(t, c.run(d(5)), RuleHydration)
	if f.Decision == nil || f.Decision.ID != id || f.Decision.By != "coach" || f.Decision.Note != "fluids with breakfast, recheck at noon" {
		t.Fatalf("decision %+v", f.Decision)
	}
	// A later version of a decision (higher stamp) wins over an earlier one.
	c.add(kindDecision, d(5), map[string]any{"rule": RuleHydration, "note": "revised"})
	if f := one(t, c.run(d(5)), RuleHydration); f.Decision.Note != "revised" {
		t.Errorf("latest decision not used: %+v", f.Decision)
	}
	// The next day the flag stands unacknowledged.
	c.add(kindCheckin, d(6), map[string]any{"usg": 1.025})
	if f := one(t, c.run(d(6)), RuleHydration); f.Decision != nil {
		t.Errorf("decision leaked to the next day: %+v", f.Decision)
	}
}

func TestComputeIgnoresOtherRecords(t *testing.T) {
	c := &camp{}
	c.add(kindCheckin, d(5), map[string]any{"usg": 1.035})
	c.last().Deleted = true
	c.add(kindCheckin, d(5), map[string]any{"usg": 1.035})
	c.last().Athlete = "someone-else"
	c.add(kindCheckin, d(6), map[string]any{"usg": 1.035}) // after the day
	c.add(kindCheckin, d(5), map[string]any{"usg": 1.035})
	c.last().Day = "5 March"
	c.add(kindCheckin, d(5), nil)
	c.last().Body = json.RawMessage(`{"usg": "high"}`)
	none(t, c.run(d(5)), RuleHydration)
	if fs := Compute(Input{Day: "2026-13-01"}); fs != nil {
		t.Errorf("a bad day gives no flags, got %d", len(fs))
	}
}

func TestDefaultThresholdsCoverEveryRuleAndAreCopies(t *testing.T) {
	th := DefaultThresholds()
	for _, r := range Rules {
		if len(th[r]) == 0 {
			t.Errorf("%s has no parameters", r)
		}
	}
	if len(th) != len(Rules) {
		t.Errorf("%d rules in defaults, %d rule ids", len(th), len(Rules))
	}
	th[RuleHydration]["watch_usg"] = 2
	if DefaultThresholds()[RuleHydration]["watch_usg"] != 1.020 {
		t.Error("DefaultThresholds must return a copy")
	}
	// Product defaults, PRODUCT.md "Flag rules".
	for _, c := range []struct {
		rule, param string
		want        float64
	}{
		{RuleJumpDrop, "min_days", 5}, {RuleJumpDrop, "cv_floor_pct", 2}, {RuleMassAbovePath, "factor_same_day", 1.03},
		{RuleMassLossFast, "alert_pct_week", 1.5}, {RuleCutAtRisk, "alert_pct_day_before", 8}, {RuleSparDensity, "cap_rounds", 30},
		{RuleSparDensity, "hard_cap_rounds", 15}, {RuleLoadSpike, "chronic_n", 28}, {RuleWellnessDrop, "alert_z", -2},
		{RuleHydration, "alert_usg", 1.030}, {RuleMissingCheckin, "hour", 10}, {RuleResidualGap, "max_strength_days", 35},
	} {
		if got := DefaultThresholds()[c.rule][c.param]; got != c.want {
			t.Errorf("%s.%s = %v, want %v", c.rule, c.param, got, c.want)
		}
	}
}

// benchCamp is one athlete with days of records, about 8 a day: a
// check-in, a jump test, three rounds, two sessions and an intervals
// record, plus a bout.
func benchCamp(days int) Input {
	c := &camp{}
	start := -days + 1
	for o := start; o <= 0; o++ {
		ds := d(o)
		c.add(kindCheckin, ds, map[string]any{"mass_kg": 70 - 0.01*float64(o-start), "fatigue": 3, "sleep": 4, "soreness": 3, "stress": 4, "mood": 4, "usg": 1.012})
		c.jump(ds, 38+float64(o%3), 39, 40)
		c.rounds(ds, 3, 1+(o+days)%3)
		c.session(ds, 60, 6, "technical")
		c.session(ds, 45, 5+float64((o+days)%3), "max_strength")
		c.add("intervals", ds, map[string]any{"modality": "bike", "work_s": 30, "rest_s": 30, "reps": 10, "sets": 2})
	}
	c.setBout(map[string]any{"camp_start": d(-20), "weigh_in": d(30) + "T10:00:00+01:00", "weigh_in_type": "day_before",
		"bout_day": d(31), "limit_kg": 66.7, "start_mass_kg": 70, "reference_load_au": 4500,
		"weeks": []map[string]any{{"week": 3, "level": "heavy", "spar_cap_rounds": 25}, {"week": 4, "level": "heavy"}}})
	in := c.input(d(0))
	in.Records = append([]devsync.Record(nil), c.recs...)
	return in
}

func BenchmarkCompute(b *testing.B) {
	for _, days := range []int{365, 730} {
		in := benchCamp(days)
		b.Run(fmt.Sprintf("days=%d", days), func(b *testing.B) {
			b.ReportAllocs()
			b.ReportMetric(float64(len(in.Records)), "records")
			for i := 0; i < b.N; i++ {
				if fs := Compute(in); len(fs) == 0 {
					b.Fatal("no flags")
				}
			}
		})
	}
}

// BenchmarkComputeRatio interleaves Compute with the decode-all baseline
// in one loop and reports their time ratio, which holds up on a noisy
// machine better than two separate figures; the ratio of 730 to 365 days
// checks the cost is linear in records.
func BenchmarkComputeRatio(b *testing.B) {
	in365, in730 := benchCamp(365), benchCamp(730)
	var tc365, tc730, td365 time.Duration
	for i := 0; i < b.N; i++ {
		t0 := time.Now()
		Compute(in365)
		t1 := time.Now()
		decodeAll(b, in365.Records)
		t2 := time.Now()
		Compute(in730)
		t3 := time.Now()
		tc365 += t1.Sub(t0)
		td365 += t2.Sub(t1)
		tc730 += t3.Sub(t2)
	}
	b.ReportMetric(float64(tc365.Nanoseconds())/float64(b.N)/1e6, "ms/compute365")
	b.ReportMetric(float64(tc365)/float64(td365), "compute/decode-all")
	b.ReportMetric(float64(tc730)/float64(tc365), "t730/t365")
}

func decodeAll(b *testing.B, recs []devsync.Record) {
	for j := range recs {
		r := &recs[j]
		var err error
		switch r.Kind {
		case kindCheckin:
			var v CheckinBody
			err = json.Unmarshal(r.Body, &v)
		case kindJump:
			var v JumpBody
			err = json.Unmarshal(r.Body, &v)
		case kindRound:
			var v RoundBody
			err = json.Unmarshal(r.Body, &v)
		case kindSession:
			var v SessionBody
			err = json.Unmarshal(r.Body, &v)
		default:
			var v map[string]json.RawMessage
			err = json.Unmarshal(r.Body, &v)
		}
		if err != nil {
			b.Fatal(err)
		}
	}
}

// BenchmarkDecodeAll is the baseline for BenchmarkCompute: decoding every
// body of the same records once with encoding/json, which any engine that
// reads all the records would pay.
func BenchmarkDecodeAll(b *testing.B) {
	for _, days := range []int{365, 730} {
		in := benchCamp(days)
		b.Run(fmt.Sprintf("days=%d", days), func(b *testing.B) {
			b.ReportAllocs()
			for i := 0; i < b.N; i++ {
				decodeAll(b, in.Records)
			}
		})
	}
}
