package fightweek

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"cornerbook/server/records"
)

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.7f, want %.7f ± %g", what, got, want, tol)
	}
}

func f(v float64) *float64 { return &v }

// REFERENCES §14.1 [D]: acute loss % = (M7 − official) / M7.
func TestAcuteLossPct_Worked(t *testing.T) {
	near(t, "70.0 → 66.6 kg", AcuteLossPct(70.0, 66.6), 4.8571, 0.00005) // REFERENCES §14.1 [D]
	near(t, "66.0 → 63.5 kg", AcuteLossPct(66.0, 63.5), 3.7879, 0.001)   // REFERENCES §6.2 [D] (Reale et al. 2017 context)
}

// REFERENCES §14.1 [D]: regain % = (bout mass − official) / official.
func TestRegainPct_Worked(t *testing.T) {
	near(t, "66.6 → 71.5 kg", RegainPct(66.6, 71.5), 7.3574, 0.00005) // REFERENCES §14.1 [D]
	near(t, "61.2 → 65.6 kg", RegainPct(61.2, 65.6), 7.1895, 0.001)   // REFERENCES §6.3 [D]
}

// REFERENCES §14.1 [D]: hours from weigh-in to bout in zoned times.
func TestHoursBetween_Zoned(t *testing.T) {
	h, err := HoursBetween("2025-06-13T13:00:00-07:00", "2025-06-14T20:30:00-07:00")
	if err != nil {
		t.Fatal(err)
	}
	near(t, "2025-06-13T13:00−07:00 → 2025-06-14T20:30−07:00", h, 31.5, 1e-9)
	// The same instants written in other offsets are the same hours
	// (RFC 3339 instants; Go time zone arithmetic).
	h2, _ := HoursBetween("2025-06-13T20:00:00Z", "2025-06-15T05:30:00+02:00")
	near(t, "same instants, other offsets", h2, 31.5, 1e-9)
	// Across Europe's change to summer time (2025-03-30 01:00 UTC) the
	// clock says 32 h but 31 h pass (common practice, no source: the hour
	// skipped at the change).
	h3, _ := HoursBetween("2025-03-29T12:00:00+01:00", "2025-03-30T20:00:00+02:00")
	near(t, "across a change to summer time", h3, 31, 1e-9)
	if _, err := HoursBetween("2025-06-13 13:00", "2025-06-14T20:30:00-07:00"); err == nil {
		t.Error("a time without offset was accepted")
	}
}

// REFERENCES §14.1 [V2 rule, D value]: a fight-day cap of the limit + 10 lb
// for 147 lb is 157 lb = 71.214002 kg; 71.5 kg is 157.631 lb, 0.631 lb over.
func TestFightDayCap_LimitPlus10lb(t *testing.T) {
	limit := records.LbToKg(147)
	p, _ := PresetByID("fight_day_10lb")
	capKg, ok := FightDayCapKg(*p.Rules.FightDay, limit, nil)
	if !ok {
		t.Fatal("no cap")
	}
	near(t, "cap for 147 lb + 10 lb", capKg, 71.214002, 1e-6)
	near(t, "71.5 kg in lb", records.KgToLb(71.5), 157.631, 0.0005)
	s := Compute(Input{LimitKg: limit, Units: "lb", Rules: &p.Rules,
		BoutAt: "2025-06-14T20:30:00-07:00", BoutDay: "2025-06-14",
		WeighIns: []WeighIn{
			{ID: "o", Type: TypeOfficial, At: "2025-06-13T13:00:00-07:00", MassKg: 66.6},
			{ID: "fd", Type: TypeFightDay, At: "2025-06-14T09:00:00-07:00", MassKg: 71.5},
		}})
	if len(s.Checks) != 1 {
		t.Fatalf("checks = %+v", s.Checks)
	}
	c := s.Checks[0]
	if c.Pass == nil || *c.Pass {
		t.Fatalf("71.5 kg against a 71.214 kg cap passed: %+v", c)
	}
	near(t, "over by, lb", records.KgToLb(c.OverKg), 0.631, 0.0005)
	if !strings.Contains(c.Reason, "157.6 lb") || !strings.Contains(c.Reason, "0.6 lb over the cap of 157.0 lb") {
		t.Errorf("reason in the athlete's units: %q", c.Reason)
	}
}

// REFERENCES §14.1 [V rule, D values]: check weights for 147 lb at +10, +5,
// +3 % are 161.7 / 154.35 / 151.41 lb (73.3459 / 70.0120 / 68.6784 kg);
// the fight-day cap after a 66.6 kg official weigh-in is 73.26 kg.
func TestCheckWeights_30_14_7(t *testing.T) {
	limit := records.LbToKg(147)
	p, ok := PresetByID("check_weights_30_14_7")
	if !ok {
		t.Fatal("preset missing")
	}
	want := []float64{73.3459, 70.0120, 68.6784}
	for i, cw := range p.Rules.CheckWeights {
		near(t, "check cap", CheckCapKg(limit, cw.OverLimitPct), want[i], 0.00005)
	}
	near(t, "161.7 lb", records.KgToLb(CheckCapKg(limit, 10)), 161.7, 1e-9)
	capKg, _ := FightDayCapKg(*p.Rules.FightDay, limit, f(66.6))
	near(t, "fight-day cap after 66.6 kg", capKg, 73.26, 1e-9)

	s := Compute(Input{LimitKg: limit, Units: "kg", Rules: &p.Rules,
		WeighInPlanned: "2025-06-13T13:00:00-07:00", BoutAt: "2025-06-14T20:30:00-07:00", BoutDay: "2025-06-14",
		WeighIns: []WeighIn{
			{ID: "c30", Type: TypeCheck, At: "2025-05-14T09:00:00-07:00", MassKg: 73.0},   // 30 days out, under 73.3459
			{ID: "c14", Type: TypeCheck, At: "2025-05-30T09:00:00-07:00", MassKg: 70.2},   // 14 days out, over 70.0120
			{ID: "c7", Type: TypeCheck, At: "2025-06-05T09:00:00-07:00", MassKg: 68.6784}, // 8 days out: matched to 7, equal to its cap
			{ID: "cx", Type: TypeCheck, At: "2025-05-24T09:00:00-07:00", MassKg: 72.0},    // 20 days out: no rule near
		}})
	got := map[string]Check{}
	for _, c := range s.Checks {
		got[c.ID] = c
	}
	if c := got["c30"]; c.Pass == nil || !*c.Pass || *c.DaysBefore != 30 {
		t.Errorf("30-day check: %+v", c)
	}
	if c := got["c14"]; c.Pass == nil || *c.Pass {
		t.Errorf("14-day check over its cap passed: %+v", c)
	} else {
		near(t, "14-day over by", c.OverKg, 70.2-70.0120, 0.0001)
		if !strings.Contains(c.Reason, "0.2 kg over the cap of 70.0 kg") {
			t.Errorf("reason: %q", c.Reason)
		}
	}
	if c := got["c7"]; c.Pass == nil || !*c.Pass || *c.DaysBefore != 8 {
		t.Errorf("a mass equal to its cap (to 0.1 mg) passes: %+v", c)
	}
	if c := got["cx"]; c.CapKg != nil || c.Pass != nil || !strings.Contains(c.Reason, "no cap") {
		t.Errorf("a check weight far from any rule day was judged: %+v", c)
	}
	if s.Official != nil || !s.HoursPlanned {
		t.Errorf("without an official weigh-in the hours count from the planned one: %+v", s)
	}
	near(t, "planned hours", *s.HoursWeighInToBout, 31.5, 1e-9)
}

// The morning mass 7 days before the official weigh-in's day: that day's
// check-in, else the nearest earlier within 2 days (a convention of this
// product, common practice, no source; REFERENCES §14.1 defines the loss
// from "M at 7 days out").
func TestMass7DaysBefore(t *testing.T) {
	official := WeighIn{ID: "o", Type: TypeOfficial, At: "2025-06-13T13:00:00-07:00", MassKg: 66.6}
	cases := []struct {
		name     string
		mornings []Morning
		wantDay  string
		wantLoss float64
	}{
		{"that day", []Morning{{"a", "2025-06-05", 71.0}, {"b", "2025-06-06", 70.0}, {"c", "2025-06-07", 69.5}}, "2025-06-06", 4.8571},
		{"a day earlier", []Morning{{"a", "2025-06-05", 70.0}, {"c", "2025-06-07", 69.5}}, "2025-06-05", 4.8571},
		{"two days earlier", []Morning{{"a", "2025-06-04", 70.0}}, "2025-06-04", 4.8571},
		{"three days earlier is too far", []Morning{{"a", "2025-06-03", 70.0}, {"c", "2025-06-07", 69.5}}, "", 0},
	}
	for _, tc := range cases {
		s := Compute(Input{LimitKg: 66.68, WeighIns: []WeighIn{official}, Mornings: tc.mornings})
		if tc.wantDay == "" {
			if s.Mass7dBeforeKg != nil || s.AcuteLossPct != nil {
				t.Errorf("%s: got %v on %s", tc.name, *s.Mass7dBeforeKg, s.Mass7dBeforeDay)
			}
			continue
		}
		if s.Mass7dBeforeDay != tc.wantDay || s.AcuteLossPct == nil {
			t.Errorf("%s: day %q, want %q", tc.name, s.Mass7dBeforeDay, tc.wantDay)
			continue
		}
		near(t, tc.name, *s.AcuteLossPct, tc.wantLoss, 0.00005) // REFERENCES §14.1 [D]
	}
}

// The whole week: official, regain to the latest fight-day weigh-in, hours,
// days from 7 out to the bout, and the JSON shape of the command line.
func TestCompute_FightWeek(t *testing.T) {
	p, _ := PresetByID("check_weights_30_14_7")
	s := Compute(Input{LimitKg: records.LbToKg(147), Units: "kg", Rules: &p.Rules,
		WeighInPlanned: "2025-06-13T13:00:00-07:00", BoutAt: "2025-06-14T20:30:00-07:00", BoutDay: "2025-06-14",
		Mornings: []Morning{{"m7", "2025-06-06", 70.0}, {"m6", "2025-06-07", 69.6}},
		PathKg:   func(d string) (float64, bool) { return 69.0, d == "2025-06-07" },
		WeighIns: []WeighIn{
			{ID: "fd2", Type: TypeFightDay, At: "2025-06-14T15:00:00-07:00", MassKg: 71.5},
			{ID: "o1", Type: TypeOfficial, At: "2025-06-13T12:00:00-07:00", MassKg: 66.8},
			{ID: "o2", Type: TypeOfficial, At: "2025-06-13T13:00:00-07:00", MassKg: 66.6},
			{ID: "fd1", Type: TypeFightDay, At: "2025-06-14T09:00:00-07:00", MassKg: 70.9},
			{ID: "late", Type: TypeFightDay, At: "2025-06-14T23:00:00-07:00", MassKg: 72.4},
		}})
	if s.Official == nil || s.Official.ID != "o2" || !s.Official.Made {
		t.Fatalf("the latest official weigh-in stands, made: %+v", s.Official)
	}
	near(t, "acute loss", *s.AcuteLossPct, 4.8571, 0.00005) // REFERENCES §14.1 [D]
	if s.FightDayID != "fd2" {
		t.Errorf("regain from the latest fight-day weigh-in before the bout, got %q", s.FightDayID)
	}
	near(t, "regain", *s.RegainPct, 7.3574, 0.00005)    // REFERENCES §14.1 [D]
	near(t, "hours", *s.HoursWeighInToBout, 31.5, 1e-9) // REFERENCES §14.1 [D]
	if s.HoursPlanned {
		t.Error("hours marked planned with an official weigh-in")
	}
	if len(s.Days) != 9 || s.Days[0].Day != "2025-06-06" || s.Days[0].DaysToWeighIn != 7 ||
		!s.Days[7].IsWeighInDay || !s.Days[8].IsBoutDay {
		t.Fatalf("days: %+v", s.Days)
	}
	if s.Days[1].PathKg == nil || *s.Days[1].PathKg != 69.0 || s.Days[1].MorningKg == nil || *s.Days[1].MorningKg != 69.6 {
		t.Errorf("day 6 out: %+v", s.Days[1])
	}
	if len(s.Days[8].WeighIns) != 3 {
		t.Errorf("bout day weigh-ins: %v", s.Days[8].WeighIns)
	}
	b, _ := json.Marshal(s)
	var m map[string]any
	_ = json.Unmarshal(b, &m)
	for _, k := range []string{"official", "mass_7d_before_kg", "acute_loss_pct", "regain_pct", "hours_weigh_in_to_bout", "checks"} {
		if _, ok := m[k]; !ok {
			t.Errorf("JSON lacks %q: %s", k, b)
		}
	}
	off := m["official"].(map[string]any)
	if off["mass_kg"] != 66.6 || off["at"] != "2025-06-13T13:00:00-07:00" {
		t.Errorf("official: %v", off)
	}
	c0 := m["checks"].([]any)[0].(map[string]any)
	for _, k := range []string{"type", "at", "mass_kg", "cap_kg", "pass"} {
		if _, ok := c0[k]; !ok {
			t.Errorf("check lacks %q: %v", k, c0)
		}
	}
}

// A missed official weigh-in is derived from the limit, and a recorded
// "made" stands over the derivation (the official's word is the record).
func TestOfficialMade(t *testing.T) {
	limit := records.LbToKg(147) // 66.678 kg
	s := Compute(Input{LimitKg: limit, WeighIns: []WeighIn{{ID: "o", Type: TypeOfficial, At: "2025-06-13T13:00:00-07:00", MassKg: 66.8}}})
	if s.Official.Made {
		t.Error("66.8 kg made a 66.678 kg limit")
	}
	no := false
	s = Compute(Input{LimitKg: limit, WeighIns: []WeighIn{{ID: "o", Type: TypeOfficial, At: "2025-06-13T13:00:00-07:00", MassKg: 66.6, Made: &no}}})
	if s.Official.Made {
		t.Error("a recorded miss was overridden")
	}
	if !Made(120, 0) {
		t.Error("no limit (heavyweight) is always made")
	}
}

// Bouts from before rule sets: no caps, no judgement, numbers still shown.
func TestNoRules(t *testing.T) {
	s := Compute(Input{LimitKg: 66.0, Units: "lb", WeighIns: []WeighIn{
		{ID: "o", Type: TypeOfficial, At: "2025-06-13T13:00:00-07:00", MassKg: 66.0},
		{ID: "c", Type: TypeCheck, At: "2025-06-01T09:00:00-07:00", MassKg: 70.0},
		{ID: "fd", Type: TypeFightDay, At: "2025-06-14T09:00:00-07:00", MassKg: 70.0}}})
	for _, c := range s.Checks {
		if c.Pass != nil || c.CapKg != nil {
			t.Errorf("judged without rules: %+v", c)
		}
	}
	if s.RegainPct == nil {
		t.Error("regain is shown without rules")
	}
}

func TestPresets(t *testing.T) {
	ids := map[string]bool{}
	for _, p := range Presets {
		if ids[p.ID] {
			t.Errorf("duplicate preset %s", p.ID)
		}
		ids[p.ID] = true
		if p.Source == "" || p.Caution == "" || p.Summary == "" || SureWords(p.Sure) == "source not checked" {
			t.Errorf("preset %s lacks its source, how sure, caution or summary: %+v", p.ID, p)
		}
		if strings.Contains(p.Source, "REFERENCES") {
			t.Errorf("preset %s: the source a coach reads names the project's notes: %q", p.ID, p.Source)
		}
		if err := records.CheckRules("body.rules", &p.Rules); err != nil {
			t.Errorf("preset %s fails the bout's check: %v", p.ID, err)
		}
		if p.Rules.Preset != p.ID {
			t.Errorf("preset %s rules name %q", p.ID, p.Rules.Preset)
		}
		if p.WeighInType != "day_before" && p.WeighInType != "same_day" {
			t.Errorf("preset %s weigh-in type %q", p.ID, p.WeighInType)
		}
	}
	if a, _ := PresetByID("amateur_same_day"); a.WeighInType != "same_day" || a.Summary != "Official weigh-in only." {
		t.Errorf("amateur preset: %+v", a)
	}
	if p, _ := PresetByID("check_weights_30_14_7"); p.Summary != "30 days out ≤ 10 % over the limit; 14 days out ≤ 5 % over the limit; "+
		"7 days out ≤ 3 % over the limit; fight day ≤ 10 % over the official weigh-in mass." {
		t.Errorf("summary: %q", p.Summary)
	}
}

func TestOverWords(t *testing.T) {
	if got := Over(0.02, "kg"); got != "less than 0.1 kg" {
		t.Errorf("a tiny excess is still over: %q", got)
	}
	if got := Mass(records.LbToKg(157), "lb"); got != "157.0 lb" {
		t.Errorf("Mass = %q", got)
	}
}

// Order of weigh-ins (a fact of the trade, common practice, no source:
// check weights lead to the official weigh-in, a fight-day weigh-in
// follows it, both before the bout).
func TestCheckWeighIn_Order(t *testing.T) {
	bouts := []BoutTimes{{ID: "b", BoutDay: "2025-06-14", BoutAt: "2025-06-14T20:30:00-07:00"}}
	have := []WeighIn{
		{ID: "c7", Type: TypeCheck, At: "2025-06-06T09:00:00-07:00", MassKg: 68},
		{ID: "o", Type: TypeOfficial, At: "2025-06-13T13:00:00-07:00", MassKg: 66.6},
	}
	cases := []struct {
		name string
		w    WeighIn
		in   string // "" = accepted
	}{
		{"fight day after the official", WeighIn{ID: "n", Type: TypeFightDay, At: "2025-06-14T09:00:00-07:00"}, ""},
		{"fight day before the official", WeighIn{ID: "n", Type: TypeFightDay, At: "2025-06-13T09:00:00-07:00"}, "before the official weigh-in recorded at 2025-06-13 13:00"},
		{"fight day after the bout started", WeighIn{ID: "n", Type: TypeFightDay, At: "2025-06-14T21:00:00-07:00"}, "after the bout started"},
		{"check weight after the bout", WeighIn{ID: "n", Type: TypeCheck, At: "2025-06-14T22:00:00-07:00"}, "after the bout on 2025-06-14 20:30"},
		{"check weight the day after the bout", WeighIn{ID: "n", Type: TypeCheck, At: "2025-06-15T09:00:00-07:00"}, "after the bout"},
		{"check weight after the official", WeighIn{ID: "n", Type: TypeCheck, At: "2025-06-13T15:00:00-07:00"}, "after the official weigh-in"},
		{"check weight 14 days out", WeighIn{ID: "n", Type: TypeCheck, At: "2025-05-30T09:00:00-07:00"}, ""},
		{"official before a check weight", WeighIn{ID: "n", Type: TypeOfficial, At: "2025-06-05T13:00:00-07:00"}, "before the check weight"},
		{"a re-weigh after the official", WeighIn{ID: "n", Type: TypeOfficial, At: "2025-06-13T14:30:00-07:00"}, ""},
		{"check weight for a bout months later", WeighIn{ID: "n", Type: TypeCheck, At: "2025-08-01T09:00:00-07:00"}, ""},
		{"no offset", WeighIn{ID: "n", Type: TypeCheck, At: "2025-06-01 09:00"}, "offset"},
	}
	for _, tc := range cases {
		p := CheckWeighIn(tc.w, have, bouts)
		switch {
		case tc.in == "" && p != nil:
			t.Errorf("%s: refused: %+v", tc.name, p)
		case tc.in != "" && p == nil:
			t.Errorf("%s: accepted", tc.name)
		case p != nil && (p.Field != "at" || !strings.Contains(p.Reason, tc.in)):
			t.Errorf("%s: %+v, want field at with %q", tc.name, p, tc.in)
		}
	}
	// An official weigh-in recorded after a fight-day one (from a phone
	// that synced later) is refused the same way.
	fd := append(have[:1:1], WeighIn{ID: "fd", Type: TypeFightDay, At: "2025-06-14T09:00:00-07:00"})
	if p := CheckWeighIn(WeighIn{ID: "o2", Type: TypeOfficial, At: "2025-06-14T10:00:00-07:00"}, fd, bouts); p == nil || !strings.Contains(p.Reason, "after the fight-day weigh-in") {
		t.Errorf("official after fight day: %+v", p)
	}
	// A correction of the official moved by an hour replaces its own version.
	if p := CheckWeighIn(WeighIn{ID: "o", Type: TypeOfficial, At: "2025-06-13T12:00:00-07:00"}, have, bouts); p != nil {
		t.Errorf("correcting the official: %+v", p)
	}
}
