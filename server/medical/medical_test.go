package medical

import (
	"math"
	"strings"
	"testing"
	"time"

	"cornerbook/server/records"
)

// REFERENCES §14.6 [D]: a knockout without loss of consciousness on
// 2025-03-01: ARP 2025-04-30 (Neidecker et al. 2019, 60 days), the national
// board's 45 days 2025-04-15; the stand-down ends no earlier than 2025-04-30.
func TestStandDown_KO_ARPAndBoard(t *testing.T) {
	inc := Incident{ID: "i1", Type: Knockout, Day: "2025-03-01"}
	sd := Compute(inc, nil, []string{"pro_board_28_45"})
	if !sd.Applies || !sd.Dated || !sd.NeedsClearance {
		t.Fatalf("stand-down: %+v", sd)
	}
	if sd.EarliestEnd != "2025-04-30" {
		t.Errorf("earliest end %s, want 2025-04-30", sd.EarliestEnd)
	}
	ends := map[string]string{}
	for _, e := range sd.Ends {
		ends[e.Set] = e.End
	}
	if ends[ARP] != "2025-04-30" || ends["pro_board_28_45"] != "2025-04-15" {
		t.Errorf("per set: %v", ends)
	}
	if sd.Ends[0].Set != ARP || !strings.Contains(sd.Rule, "no sparring before 2025-04-30") ||
		!strings.Contains(sd.Rule, "cleared in writing by a doctor") || !strings.Contains(sd.Rule, "2025-04-15") {
		t.Errorf("rule words: %q", sd.Rule)
	}
}

// Neidecker et al. 2019 (ARP): TKO 30, KO without LOC 60, KO with LOC 90
// days; applied whatever sets are picked.
func TestStandDown_ARPAlways(t *testing.T) {
	for _, tc := range []struct {
		inc  Incident
		want string
	}{
		{Incident{ID: "a", Type: Stoppage, Day: "2025-03-01"}, "2025-03-31"},
		{Incident{ID: "b", Type: Knockout, Day: "2025-03-01"}, "2025-04-30"},
		{Incident{ID: "c", Type: KnockoutLOC, Day: "2025-03-01"}, "2025-05-30"},
		{Incident{ID: "d", Type: Knockout, Day: "2025-03-01", LOC: true}, "2025-05-30"},
		// Loss of consciousness in a sparring head knock counts as a knockout
		// with loss of consciousness (this product's choice; see SeverityOf).
		{Incident{ID: "e", Type: HeadKnock, Day: "2025-03-01", LOC: true}, "2025-05-30"},
	} {
		sd := Compute(tc.inc, nil, nil)
		if sd.EarliestEnd != tc.want {
			t.Errorf("%s (loc %v): end %s, want %s", tc.inc.Type, tc.inc.LOC, sd.EarliestEnd, tc.want)
		}
	}
}

// A head knock or knockdown is a suspected concussion: no date, only a
// written clearance ends it (REFERENCES §11.2 tool rule; Patricios 2023).
// An injury has no head stand-down.
func TestStandDown_SuspectedAndInjury(t *testing.T) {
	sd := Compute(Incident{ID: "a", Type: HeadKnock, Day: "2025-03-01"}, nil, []string{"pro_board_28_45", "amateur_4w_3m_12m"})
	if !sd.Applies || sd.Dated || sd.EarliestEnd != "" || !sd.NeedsClearance || !strings.Contains(sd.Rule, "until cleared in writing") {
		t.Errorf("head knock: %+v", sd)
	}
	if sd := Compute(Incident{ID: "b", Type: Injury, Day: "2025-03-01"}, nil, []string{"pro_board_28_45"}); sd.Applies {
		t.Errorf("injury: %+v", sd)
	}
}

// The clinician's date counts when it is the latest, and a head knock
// with a clinician's date becomes dated, still gated on the clearance.
func TestStandDown_ClinicianDate(t *testing.T) {
	sd := Compute(Incident{ID: "a", Type: Knockout, Day: "2025-03-01", ClinicianDay: "2025-05-10"}, nil, []string{"pro_board_28_45"})
	if sd.EarliestEnd != "2025-05-10" || sd.Ends[0].Set != "clinician" || !sd.NeedsClearance {
		t.Errorf("clinician later: %+v", sd)
	}
	sd = Compute(Incident{ID: "a", Type: Knockout, Day: "2025-03-01", ClinicianDay: "2025-03-20"}, nil, nil)
	if sd.EarliestEnd != "2025-04-30" {
		t.Errorf("clinician earlier than ARP cannot shorten it: %+v", sd)
	}
	sd = Compute(Incident{ID: "a", Type: HeadKnock, Day: "2025-03-01", ClinicianDay: "2025-03-08"}, nil, nil)
	if !sd.Dated || sd.EarliestEnd != "2025-03-08" || !sd.NeedsClearance {
		t.Errorf("head knock with a clinician's date: %+v", sd)
	}
}

// AIBA-derived amateur rules (Amateur Boxing Scotland 2013): one 4 weeks,
// two within 3 months 3 months, three within 12 months 12 months.
func TestStandDown_AmateurRepeats(t *testing.T) {
	set := []string{"amateur_4w_3m_12m"}
	first := Incident{ID: "1", Type: Stoppage, Day: "2025-01-10"}
	// ARP's 30 days for a stoppage outlasts 4 weeks (28 days).
	sd := Compute(first, nil, set)
	if got := endOf(sd, "amateur_4w_3m_12m"); got != "2025-02-07" {
		t.Errorf("one stoppage: %s, want 2025-02-07 (28 days)", got)
	}
	second := Incident{ID: "2", Type: Knockout, Day: "2025-03-01"}
	sd = Compute(second, []Incident{first}, set)
	if got := endOf(sd, "amateur_4w_3m_12m"); got != "2025-06-01" {
		t.Errorf("second within 3 months: %s, want 2025-06-01", got)
	}
	if sd.EarliestEnd != "2025-06-01" {
		t.Errorf("3 months outlasts ARP's 60 days: %s", sd.EarliestEnd)
	}
	third := Incident{ID: "3", Type: Stoppage, Day: "2025-09-01"}
	sd = Compute(third, []Incident{first, second}, set)
	if got := endOf(sd, "amateur_4w_3m_12m"); got != "2026-09-01" {
		t.Errorf("third within 12 months: %s, want 2026-09-01", got)
	}
	// A head knock in sparring (suspected, not a KO or stoppage) is not counted.
	knock := Incident{ID: "k", Type: HeadKnock, Day: "2025-02-20"}
	sd = Compute(Incident{ID: "x", Type: Stoppage, Day: "2025-03-01"}, []Incident{knock}, set)
	if got := endOf(sd, "amateur_4w_3m_12m"); got != "2025-03-29" {
		t.Errorf("head knock counted as a repeat: %s", got)
	}
	// Outside 3 months, the second is a first again.
	sd = Compute(Incident{ID: "y", Type: Stoppage, Day: "2025-05-01"}, []Incident{first}, set)
	if got := endOf(sd, "amateur_4w_3m_12m"); got != "2025-05-29" {
		t.Errorf("second after 3 months: %s", got)
	}
}

// Wisconsin Admin. Code SPS 192.31: 2 knockouts in 3 months → 6 months.
func TestStandDown_StateTwoKOs(t *testing.T) {
	a := Incident{ID: "a", Type: Knockout, Day: "2025-01-15"}
	sd := Compute(Incident{ID: "b", Type: Knockout, Day: "2025-03-01"}, []Incident{a}, []string{"state_pro_30_60_6m"})
	if sd.EarliestEnd != "2025-09-01" {
		t.Errorf("two knockouts in 3 months: %s, want 2025-09-01", sd.EarliestEnd)
	}
}

func endOf(sd StandDown, set string) string {
	for _, e := range sd.Ends {
		if e.Set == set {
			return e.End
		}
	}
	return ""
}

func TestSets_HaveSources(t *testing.T) {
	if len(Sets) != len(records.StandDownSetIDs) {
		t.Errorf("bouts may name %v; the sets are %d", records.StandDownSetIDs, len(Sets))
	}
	for i, s := range Sets {
		if i < len(records.StandDownSetIDs) && records.StandDownSetIDs[i] != s.ID {
			t.Errorf("set %d is %s; bouts know it as %s", i, s.ID, records.StandDownSetIDs[i])
		}
		if s.Name == "" || s.Source == "" || s.Caution == "" || (s.Sure != "verified" && s.Sure != "secondary") || len(s.Rules) == 0 {
			t.Errorf("set %s incomplete: %+v", s.ID, s)
		}
		if strings.Contains(s.Source, "REFERENCES") {
			t.Errorf("set %s: the source a coach reads names the project's notes: %q", s.ID, s.Source)
		}
	}
}

// Patricios et al. 2023 (Amsterdam table): age 25, 220 − age = 195 bpm;
// step 2 light ≤ 107.25 bpm, moderate ≤ 136.5 bpm (REFERENCES summary
// rts_hr_caps, ±0.01).
func TestRTS_HeartRateCaps(t *testing.T) {
	c := CapsBpm(2, 25)
	if len(c) != 2 || math.Abs(c[0]-107.25) > 0.01 || math.Abs(c[1]-136.5) > 0.01 {
		t.Errorf("caps at 25: %v", c)
	}
	if CapsBpm(4, 25) != nil || CapsBpm(7, 25) != nil {
		t.Error("caps outside step 2")
	}
	if AgeOn(2025, 2000) != 25 {
		t.Error("age")
	}
}

const incAt = "2025-03-01T20:00:00+01:00"

func steps(pairs ...any) []LoggedStep {
	var out []LoggedStep
	for i := 0; i < len(pairs); i += 3 {
		out = append(out, LoggedStep{ID: pairs[i].(string), Step: pairs[i+1].(int), At: pairs[i+2].(string)})
	}
	return out
}

// Patricios et al. 2023: steps in order, each ≥ 24 h after the last.
func TestCheckStep(t *testing.T) {
	have := steps("s1", 1, "2025-03-02T09:00:00+01:00", "s2", 2, "2025-03-03T09:00:00+01:00", "s3", 3, "2025-03-04T09:00:00+01:00")
	cases := []struct {
		name  string
		s     LoggedStep
		field string
		in    string
	}{
		{"step 4 a day after step 3", LoggedStep{"n", 4, "2025-03-05T09:00:00+01:00"}, "", ""},
		{"exactly 24 h", LoggedStep{"n", 4, "2025-03-05T08:00:00Z"}, "", ""},
		{"under 24 h", LoggedStep{"n", 4, "2025-03-05T08:30:00+01:00"}, "at", "23.5 h after step 3"},
		{"step 5 with no step 4", LoggedStep{"n", 5, "2025-03-06T09:00:00+01:00"}, "step", "step 4 is not recorded"},
		{"step 4 before step 3", LoggedStep{"n", 4, "2025-03-02T20:00:00+01:00"}, "step", "step 3 is not recorded"},
		{"step 7", LoggedStep{"n", 7, "2025-03-06T09:00:00+01:00"}, "step", "1–6"},
		{"before the incident", LoggedStep{"n", 1, "2025-03-01T19:00:00+01:00"}, "at", "before the incident"},
		{"going back a step", LoggedStep{"n", 2, "2025-03-05T10:00:00+01:00"}, "", ""},
		{"squeezed before a later step", LoggedStep{"n", 2, "2025-03-03T20:00:00+01:00"}, "at", ""},
	}
	for _, tc := range cases {
		p := CheckStep(incAt, have, tc.s)
		switch {
		case tc.field == "" && p != nil:
			t.Errorf("%s: refused: %v", tc.name, p)
		case tc.field != "" && p == nil:
			t.Errorf("%s: accepted", tc.name)
		case p != nil && (p.Field != tc.field || !strings.Contains(p.Reason, tc.in)):
			t.Errorf("%s: %v, want field %s with %q", tc.name, p, tc.field, tc.in)
		}
	}
	// A correction replaces its own earlier version.
	if p := CheckStep(incAt, have, LoggedStep{"s3", 3, "2025-03-04T12:00:00+01:00"}); p != nil {
		t.Errorf("moving step 3 by 3 h: %v", p)
	}
}

// Each step ≥ 24 h, so step 6 comes ≥ 5 days after step 1 (REFERENCES
// §14.6 [V], Patricios 2023).
func TestLadder_FiveDaysToStep6(t *testing.T) {
	t0, _ := time.Parse(time.RFC3339, "2025-03-02T09:00:00+01:00")
	var have []LoggedStep
	for n := 1; n <= 6; n++ {
		at := t0.Add(time.Duration(n-1) * MinStepGap).Format(time.RFC3339)
		s := LoggedStep{ID: string(rune('a' + n)), Step: n, At: at}
		if p := CheckStep(incAt, have, s); p != nil {
			t.Fatalf("step %d: %v", n, p)
		}
		have = append(have, s)
	}
	last, _ := time.Parse(time.RFC3339, have[5].At)
	if got := last.Sub(t0); got != 5*24*time.Hour {
		t.Errorf("step 6 after %v", got)
	}
	// One hour earlier for step 6 is refused.
	early := LoggedStep{ID: "g", Step: 6, At: last.Add(-time.Hour).Format(time.RFC3339)}
	if p := CheckStep(incAt, have[:5], early); p == nil || p.Field != "at" {
		t.Errorf("step 6 under 5 days after step 1: %v", p)
	}
	if l := Build(have, 25); l.Current != 6 || l.Next != 0 || !strings.Contains(l.Words, "return to sport") {
		t.Errorf("ladder done: %+v", l)
	}
}

func TestLadder_Words(t *testing.T) {
	l := Build(steps("s1", 1, "2025-03-02T09:00:00+01:00"), 25)
	if l.Next != 2 || l.NextFrom != "2025-03-03T09:00:00+01:00" || len(l.NextCapsBpm) != 2 {
		t.Fatalf("ladder: %+v", l)
	}
	if !strings.Contains(l.Words, "up to 107 bpm (light), then up to 136 bpm (moderate)") {
		t.Errorf("words: %q", l.Words)
	}
	l = Build(steps("s1", 1, "2025-03-02T09:00:00+01:00", "s2", 2, "2025-03-03T09:00:00+01:00",
		"s3", 3, "2025-03-04T09:00:00+01:00", "s4", 4, "2025-03-05T09:00:00+01:00"), 25)
	if !l.NextNeedsClearance || !strings.Contains(l.Words, "written clearance") {
		t.Errorf("step 5 needs a clearance: %+v", l)
	}
	if l := Build(nil, 0); l.Current != 0 || l.Next != 1 || !strings.Contains(l.Words, "not started") {
		t.Errorf("empty ladder: %+v", l)
	}
}

// The progress every stand-down strip shows: the last step and when, the
// next step and its earliest time (Patricios et al. 2023: each step at
// least 24 h), and the early steps' heart-rate caps at 55 % and 70 % of
// 220 − age (Patricios et al. 2023, REFERENCES §14.6 [V]; the arithmetic
// [D]: age 32 → 188 bpm → 103.4 and 131.6 bpm). Whatever the step, only a
// written clearance ends the stand-down (REFERENCES §11.2 tool rule).
func TestLadder_ProgressForTheStrip(t *testing.T) {
	l := Build(steps("s1", 1, "2026-11-29T10:00:00+01:00", "s2", 2, "2026-11-30T10:30:00+01:00",
		"s3", 3, "2026-12-02T10:30:00+01:00"), AgeOn(2026, 1994))
	if l.Current != 3 || l.CurrentName != "Individual sport-specific exercise" || l.CurrentAt != "2026-12-02T10:30:00+01:00" {
		t.Errorf("last step: %+v", l)
	}
	if l.Next != 4 || l.NextName != "Non-contact training drills at high intensity" || l.NextFrom != "2026-12-03T10:30:00+01:00" {
		t.Errorf("next step: %+v", l)
	}
	if l.Age != 32 || l.HRMaxBpm != 188 || len(l.EarlyCapsBpm) != 2 ||
		math.Abs(l.EarlyCapsBpm[0]-103.4) > 1e-9 || math.Abs(l.EarlyCapsBpm[1]-131.6) > 1e-9 {
		t.Errorf("early caps: age %d, HRmax %v, caps %v", l.Age, l.HRMaxBpm, l.EarlyCapsBpm)
	}
	if l.Until != "cleared in writing by a doctor" {
		t.Errorf("until %q", l.Until)
	}
	// Rounded down in words, so the number read is never above the cap.
	if !strings.Contains(l.Words, "up to 103 bpm (light), 131 bpm (moderate), from 220 − age 32") {
		t.Errorf("words: %q", l.Words)
	}
	// Not started: step 1 next, no earliest time, caps still known.
	l = Build(nil, 25)
	if l.Next != 1 || l.NextName != "Symptom-limited daily activity" || l.NextFrom != "" || len(l.EarlyCapsBpm) != 2 || l.Until == "" {
		t.Errorf("not started: %+v", l)
	}
	// Without a birth year: no caps, no age.
	if l := Build(nil, 0); l.Age != 0 || l.EarlyCapsBpm != nil || l.HRMaxBpm != 0 {
		t.Errorf("no age: %+v", l)
	}
}
