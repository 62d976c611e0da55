package flags

import (
	"encoding/json"
	"strings"
	"testing"

	"cornerbook/server/records"
)

func (c *camp) weighIn(dayStr, at, typ string, kg float64) string {
	id := c.add(kindWeighIn, dayStr, map[string]any{"type": typ, "mass_kg": kg})
	c.last().At = at
	return id
}

// A welterweight (147 lb) under the 2019 check-weight programme and the
// fight-day cap: REFERENCES §14.1 gives 73.3459 / 70.0120 / 68.6784 kg at
// 30 / 14 / 7 days and 73.26 kg on fight day after a 66.6 kg official
// weigh-in; 66.6 → 71.5 kg is a 7.3574 % regain (under 10 %: no watch).
func TestWeighInFlags(t *testing.T) {
	c := &camp{}
	limit := records.LbToKg(147)
	c.standardBout(map[string]any{"limit_kg": limit, "weigh_in": d(56) + "T13:00:00-07:00", "bout_at": d(57) + "T20:30:00-07:00",
		"rules": map[string]any{"check_weights": []any{map[string]any{"days_before": 30, "over_limit_pct": 10},
			map[string]any{"days_before": 14, "over_limit_pct": 5}, map[string]any{"days_before": 7, "over_limit_pct": 3}},
			"fight_day": map[string]any{"over_official_pct": 10}}})
	c.weighIn(d(26), d(26)+"T09:00:00-07:00", "check", 73.0)
	over14 := c.weighIn(d(42), d(42)+"T09:00:00-07:00", "check", 70.2)
	c.weighIn(d(56), d(56)+"T13:00:00-07:00", "official", 66.6)
	fd := c.weighIn(d(57), d(57)+"T09:00:00-07:00", "fight_day", 71.5)

	none(t, c.run(d(26)), RuleWeighIn)
	f := one(t, c.run(d(42)), RuleWeighIn)
	wantLevel(t, f, LevelAlert, StatusFlag)
	if f.Title != "Check weight over its cap" || f.Inputs[0] != over14 || !strings.Contains(f.Reason, "0.2 kg over the cap of 70.0 kg") ||
		f.Caution != CautionWeighIn || !strings.Contains(f.Caution, "never a reason to cut faster") {
		t.Fatalf("14-day check over its cap: %+v", f)
	}
	approx(t, "cap", f.Threshold, 70.0120, 0.00005) // REFERENCES §14.1 [D]
	none(t, c.run(d(43)), RuleWeighIn)
	none(t, c.run(d(57)), RuleWeighIn) // 71.5 ≤ 73.26 and 7.36 % ≤ 10 %

	// 74.0 kg on fight day: 11.1 % regain (watch) and over the 73.26 kg cap (alert).
	for i := range c.recs {
		if c.recs[i].ID == fd {
			c.recs[i].Body = json.RawMessage(`{"type":"fight_day","mass_kg":74.0}`)
		}
	}
	fs := rule(c.run(d(57)), RuleWeighIn)
	if len(fs) != 2 || fs[0].Level != LevelAlert || fs[1].Level != LevelWatch {
		t.Fatalf("fight day 74.0 kg: %s", describe(fs))
	}
	if fs[0].Title != "Fight-day weigh-in over its cap" || !strings.Contains(fs[0].Reason, "0.7 kg over the cap of 73.3 kg") {
		t.Errorf("cap: %q", fs[0].Reason)
	}
	approx(t, "regain", fs[1].Value, (74.0-66.6)/66.6*100, 1e-9) // REFERENCES §14.1 [D] formula
	if fs[1].Title != "Large regain after the weigh-in" || !strings.Contains(fs[1].Reason, "Regained 11.1 %") ||
		!strings.Contains(fs[1].Caution, "never as a reason to cut faster") {
		t.Errorf("regain: %+v", fs[1])
	}
	for _, f := range fs {
		for _, bad := range []string{"lose faster", "cut more", "sauna", "sweat suit to"} {
			if strings.Contains(f.Reason, bad) {
				t.Errorf("flag suggests a cut: %q", f.Reason)
			}
		}
	}
	// The coach's own regain threshold.
	in := c.input(d(57))
	in.Settings = map[string]map[string]float64{RuleWeighIn: {"regain_watch_pct": 12}}
	if fs := rule(Compute(in), RuleWeighIn); len(fs) != 1 {
		t.Errorf("regain threshold 12 %%: %s", describe(fs))
	}
}

// A bout from before rule sets: weigh-ins are judged against nothing and
// raise no cap flag; the regain watch still applies.
func TestWeighInFlagsWithoutRules(t *testing.T) {
	c := &camp{}
	c.standardBout(nil)
	c.weighIn(d(56), d(56)+"T10:00:00+01:00", "official", 63.4)
	c.weighIn(d(57), d(57)+"T10:00:00+01:00", "fight_day", 70.0)
	fs := rule(c.run(d(57)), RuleWeighIn)
	if len(fs) != 1 || fs[0].Level != LevelWatch {
		t.Fatalf("%s", describe(fs))
	}
}
