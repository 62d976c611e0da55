package flags

import (
	"math"
	"strings"
	"testing"
)

// restrictionOf returns the running stand-down flags of a day.
func restrictionsOf(fs []Flag) []Flag {
	var out []Flag
	for _, f := range fs {
		if f.Restriction != nil {
			out = append(out, f)
		}
	}
	return out
}

// A stand-down in force is a restriction on every day it runs, with its
// start, the rule that sets its minimum and what ends it; its JSON level
// stays info. Minimums: Neidecker et al. 2019 (knockout 60 days); a head
// knock is treated as a suspected concussion until cleared (Patricios et
// al. 2023).
func TestRestrictionEveryDayOfTheStandDown(t *testing.T) {
	c := &camp{}
	ko := c.add(kindIncident, d(3), map[string]any{"type": "knockout"})
	c.last().At = d(3) + "T17:05:00+01:00"
	for off := 3; off < 63; off++ {
		fs := c.run(d(off))
		rs := restrictionsOf(fs)
		if len(rs) != 1 {
			t.Fatalf("%s: want one restriction, got %s", d(off), describe(fs))
		}
		f := rs[0]
		wantLevel(t, f, LevelInfo, StatusFlag)
		want := Restriction{Incident: ko, IncidentType: "knockout", StartedDay: d(3), StartedAt: d(3) + "T17:05:00+01:00",
			Rule: "Knockout: at least 60 days", EarliestEnd: d(63), Until: "cleared in writing by a doctor"}
		got := *f.Restriction
		if got.RTS == nil || got.RTS.Current != 0 || got.RTS.Next != 1 {
			t.Fatalf("%s: return to sport not started: %+v", d(off), got.RTS)
		}
		got.RTS = nil
		if got != want {
			t.Fatalf("%s: restriction %+v, want %+v", d(off), *f.Restriction, want)
		}
		if f.Rule != RuleSparOnHold || fs[0].Restriction == nil {
			t.Fatalf("%s: the restriction is not first: %s", d(off), describe(fs))
		}
	}
	// Not cleared: it goes on after the minimum, with the same earliest end.
	if rs := restrictionsOf(c.run(d(70))); len(rs) != 1 || rs[0].Restriction.EarliestEnd != d(63) {
		t.Fatalf("after the minimum without clearance: %+v", rs)
	}
	c.add(kindClearance, d(65), map[string]any{"incident": ko, "by": "Dr. A. Example"})
	if rs := restrictionsOf(c.run(d(65))); len(rs) != 0 {
		t.Fatalf("cleared after the minimum: %+v", rs)
	}

	// A head knock has no dated minimum: only a written clearance ends it.
	c = &camp{}
	hk := c.add(kindIncident, d(0), map[string]any{"type": "head_knock"})
	rs := restrictionsOf(c.run(d(200)))
	if len(rs) != 1 {
		t.Fatalf("head knock: %+v", rs)
	}
	if r := rs[0].Restriction; r.Incident != hk || r.Rule != "Head knock: treated as suspected concussion" || r.EarliestEnd != "" || r.Until != "cleared in writing by a doctor" {
		t.Fatalf("head knock restriction %+v", r)
	}
	if rs[0].Title != "Stand-down after a head knock" {
		t.Errorf("title %q", rs[0].Title)
	}
}

// Two stand-downs of one type running at once keep distinct titles.
func TestRestrictionTitlesDistinct(t *testing.T) {
	c := &camp{}
	c.add(kindIncident, d(0), map[string]any{"type": "head_knock"})
	c.add(kindIncident, d(4), map[string]any{"type": "head_knock"})
	rs := restrictionsOf(c.run(d(5)))
	if len(rs) != 2 || rs[0].Title == rs[1].Title {
		t.Fatalf("titles %s", describe(rs))
	}
	if rs[0].Restriction.StartedDay != d(0) || !strings.Contains(rs[0].Title, d(0)) {
		t.Errorf("older stand-down first, named by its day: %q", rs[0].Title)
	}
}

// spar_on_hold (settled reading): a round is during the stand-down only on
// a later day than the incident, or on its day with `at` after the
// incident's `at`. Two hard rounds, then the head knock: no alert.
func TestSparOnHoldRoundsBeforeTheKnockAreNotDuring(t *testing.T) {
	c := &camp{}
	for i, at := range []string{"T15:00:00+01:00", "T15:04:00+01:00"} {
		c.add(kindRound, d(10), map[string]any{"activity": "spar", "seconds": 180, "intensity": 3})
		c.last().At = d(10) + at
		_ = i
	}
	c.add(kindIncident, d(10), map[string]any{"type": "head_knock"})
	c.last().At = d(10) + "T15:06:30+01:00"
	for off := 10; off < 14; off++ {
		fs := rule(c.run(d(off)), RuleSparOnHold)
		if len(fs) != 1 || fs[0].Level != LevelInfo {
			t.Fatalf("%s: rounds before the knock counted as during the stand-down: %s", d(off), describe(fs))
		}
	}
	// A round after the knock, the same day, is during it.
	c.add(kindRound, d(10), map[string]any{"activity": "spar", "seconds": 180, "intensity": 2})
	c.last().At = d(10) + "T15:20:00+01:00"
	after := c.last().ID
	// Sparring in a stand-down ranks right after the stand-down, before
	// every other alert (urine specific gravity above 1.030 here, an
	// alert: Casa et al. 2000).
	c.add(kindCheckin, d(10), map[string]any{"usg": 1.035})
	all := c.run(d(10))
	if all[0].Restriction == nil || all[1].Rule != RuleSparOnHold || all[1].Level != LevelAlert || all[2].Rule != RuleHydration {
		t.Fatalf("order: %s", describe(all))
	}
	fs := rule(c.run(d(10)), RuleSparOnHold)
	if len(fs) != 2 || fs[1].Level != LevelAlert || *fs[1].Value != 1 || fs[1].Inputs[0] != after {
		t.Fatalf("round after the knock: %s", describe(fs))
	}
	if !strings.Contains(fs[1].Reason, "1 sparring round logged today") {
		t.Errorf("reason %q", fs[1].Reason)
	}
}

// Sparring logged during a stand-down is an alert on every day of the
// stand-down, not only its own day, until a coach records a decision on
// it; a round sparred after that decision raises it again.
func TestSparOnHoldAlertStaysUntilDecision(t *testing.T) {
	c := &camp{}
	c.add(kindIncident, d(0), map[string]any{"type": "knockdown"})
	c.rounds(d(2), 2, 2)
	for off := 2; off <= 6; off++ {
		fs := rule(c.run(d(off)), RuleSparOnHold)
		if len(fs) != 2 || fs[1].Level != LevelAlert || *fs[1].Value != 2 || fs[1].Title != "Sparring during a stand-down" {
			t.Fatalf("%s: want the alert on every day: %s", d(off), describe(fs))
		}
		if off > 2 && !strings.Contains(fs[1].Reason, "2 sparring rounds logged on "+d(2)+" during a stand-down") {
			t.Errorf("%s: reason %q", d(off), fs[1].Reason)
		}
	}
	// A whole-day decision on d(5) acknowledges the alert that day but
	// does not answer it for later days.
	c.add(kindDecision, d(5), map[string]any{"note": "rest day, physio review", "by": "S&C coach"})
	fs := rule(c.run(d(5)), RuleSparOnHold)
	if fs[1].Decision == nil || fs[1].Decision.Scope != ScopeDay {
		t.Fatalf("whole-day decision not shown: %+v", fs[1].Decision)
	}
	if fs := rule(c.run(d(6)), RuleSparOnHold); len(fs) != 2 {
		t.Fatalf("a whole-day decision answered the alert: %s", describe(fs))
	}
	// A decision on the rule on d(6): shown that day, gone after.
	c.add(kindDecision, d(6), map[string]any{"rule": RuleSparOnHold, "note": "spoke to the boxing coach: no more sparring", "by": "S&C coach"})
	c.last().At = d(6) + "T12:30:00+01:00"
	fs = rule(c.run(d(6)), RuleSparOnHold)
	if len(fs) != 2 || fs[1].Decision == nil || fs[1].Decision.Scope != ScopeFlag || fs[1].Decision.At != d(6)+"T12:30:00+01:00" {
		t.Fatalf("decision on the day: %s %+v", describe(fs), fs[1].Decision)
	}
	for off := 7; off <= 9; off++ {
		if fs := rule(c.run(d(off)), RuleSparOnHold); len(fs) != 1 || fs[0].Restriction == nil {
			t.Fatalf("%s: answered alert still shown: %s", d(off), describe(fs))
		}
	}
	// Sparring again after the decision: a new alert, not acknowledged.
	c.add(kindRound, d(6), map[string]any{"activity": "spar", "seconds": 180, "intensity": 1})
	c.last().At = d(6) + "T16:00:00+01:00"
	fs = rule(c.run(d(6)), RuleSparOnHold)
	if len(fs) != 2 || *fs[1].Value != 3 || fs[1].Decision != nil {
		t.Fatalf("round after the decision: %s %+v", describe(fs), fs[1].Decision)
	}
	fs = rule(c.run(d(8)), RuleSparOnHold)
	if len(fs) != 2 || *fs[1].Value != 1 {
		t.Fatalf("round after the decision, later day: %s", describe(fs))
	}
}

// A decision without a rule acknowledges every flag of that athlete-day
// (scope "day"); one naming a rule wins for that rule's flags (scope
// "flag"). Each carries the decision's id, note, by and at.
func TestWholeDayDecision(t *testing.T) {
	c := &camp{}
	wellnessBaseline(c)
	c.wellness(d(30), 3, 2, 3, 4, 3) // wellness alert
	c.add(kindCheckin, d(30), map[string]any{"usg": 1.025})
	c.add(kindDecision, d(30), map[string]any{"note": "easy technical session only", "by": "S&C coach"})
	day := c.last()
	c.add(kindDecision, d(30), map[string]any{"rule": RuleHydration, "note": "fluids, recheck at noon", "by": "physio"})
	hyd := c.last()
	c.add(kindDecision, d(29), map[string]any{"note": "yesterday"})
	for _, f := range c.run(d(30)) {
		if f.Decision == nil {
			t.Fatalf("%s not acknowledged", f.Title)
		}
		want := DecisionRef{ID: day.ID, Note: "easy technical session only", By: "S&C coach", At: day.At, Scope: ScopeDay}
		if f.Rule == RuleHydration {
			want = DecisionRef{ID: hyd.ID, Note: "fluids, recheck at noon", By: "physio", At: hyd.At, Scope: ScopeFlag}
		}
		if *f.Decision != want {
			t.Errorf("%s: decision %+v, want %+v", f.Title, *f.Decision, want)
		}
	}
	for _, f := range c.run(d(31)) {
		if f.Decision != nil {
			t.Errorf("decision leaked to the next day: %s %+v", f.Title, f.Decision)
		}
	}
}

// The stand-down carries the incident's return to sport, so every screen
// that shows one shows the other: the last step and when, the next and its
// earliest time (each step at least 24 h, Patricios et al. 2023), the
// early steps' heart-rate caps at 55 % and 70 % of 220 − age (Patricios et
// al. 2023; born 1994, in 2026 age 32: 188 bpm → 103.4 and 131.6 bpm,
// arithmetic), and still "cleared in writing by a doctor".
func TestRestrictionCarriesTheReturnToSport(t *testing.T) {
	c := &camp{}
	hk := c.add(kindIncident, d(0), map[string]any{"type": "head_knock"})
	other := c.add(kindIncident, d(1), map[string]any{"type": "knockdown"})
	c.add(kindRTSStep, d(1), map[string]any{"incident": hk, "step": 1, "supervised_by": "Dr. A. Example"})
	c.last().At = d(1) + "T10:00:00+01:00"
	c.add(kindRTSStep, d(2), map[string]any{"incident": hk, "step": 2, "supervised_by": "Dr. A. Example"})
	c.last().At = d(2) + "T10:30:00+01:00"
	in := c.input(d(2))
	in.Athlete.Body = []byte(`{"name":"Test Fighter","units":"kg","birth_year":1994}`)
	rs := restrictionsOf(Compute(in))
	if len(rs) != 2 {
		t.Fatalf("two stand-downs: %s", describe(rs))
	}
	l := rs[0].Restriction.RTS
	if rs[0].Restriction.Incident != hk || l == nil {
		t.Fatalf("first stand-down %+v", rs[0].Restriction)
	}
	if l.Current != 2 || l.CurrentAt != d(2)+"T10:30:00+01:00" || l.Next != 3 || l.NextFrom != d(3)+"T10:30:00+01:00" {
		t.Errorf("ladder %+v", *l)
	}
	if l.Age != 32 || len(l.EarlyCapsBpm) != 2 || math.Abs(l.EarlyCapsBpm[0]-103.4) > 1e-9 || math.Abs(l.EarlyCapsBpm[1]-131.6) > 1e-9 {
		t.Errorf("caps: age %d, %v", l.Age, l.EarlyCapsBpm)
	}
	if l.Until != UntilCleared {
		t.Errorf("until %q", l.Until)
	}
	// The other incident's ladder is its own: not started.
	if o := rs[1].Restriction; o.Incident != other || o.RTS == nil || o.RTS.Current != 0 || o.RTS.Next != 1 {
		t.Errorf("second stand-down %+v", o)
	}
	// Steps after the evaluated day are not yet done on it.
	in = c.input(d(1))
	in.Athlete.Body = []byte(`{"name":"Test Fighter","birth_year":1994}`)
	if rs := restrictionsOf(Compute(in)); len(rs) != 2 || rs[0].Restriction.RTS.Current != 1 {
		t.Errorf("on %s: %s", d(1), describe(rs))
	}
	// No birth year: no caps.
	if rs := restrictionsOf(c.run(d(2))); len(rs) != 2 || rs[0].Restriction.RTS.EarlyCapsBpm != nil {
		t.Errorf("without a birth year: %+v", rs[0].Restriction.RTS)
	}
}
