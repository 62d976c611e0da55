package flags

import (
	"testing"
)

// The stand-down in force ends at the latest of the camp's minimum, every
// rule set the bout applies and the clinician's date (REFERENCES §14.6),
// and is still gated on a written clearance.
func TestStandDownFromRuleSets(t *testing.T) {
	on := func(c *camp, off int) *Restriction {
		t.Helper()
		rs := restrictionsOf(c.run(d(off)))
		if len(rs) == 0 {
			return nil
		}
		return rs[len(rs)-1].Restriction
	}
	// REFERENCES §14.6 [D]: a knockout without loss of consciousness,
	// ARP (Neidecker et al. 2019) 60 days and the national board's 45: the
	// ringside minimum decides, 60 days on.
	c := &camp{}
	c.standardBout(map[string]any{"stand_down_sets": []string{"pro_board_28_45"}})
	c.add(kindIncident, d(3), map[string]any{"type": "knockout"})
	if r := on(c, 4); r == nil || r.EarliestEnd != d(63) || r.Rule != "Knockout: at least 60 days" {
		t.Fatalf("knockout under ARP and the board: %+v", r)
	}

	// AIBA-derived amateur rules (Amateur Boxing Scotland 2013): a second
	// stoppage within 3 months, 3 months off — longer than ARP's 30 days.
	c = &camp{}
	c.standardBout(map[string]any{"stand_down_sets": []string{"amateur_4w_3m_12m"}})
	first := c.add(kindIncident, d(0), map[string]any{"type": "stoppage"})
	c.add(kindClearance, d(35), map[string]any{"incident": first, "by": "Dr. A. Example"})
	c.add(kindIncident, d(40), map[string]any{"type": "stoppage"}) // 2026-04-11
	r := on(c, 41)
	if r == nil || r.EarliestEnd != "2026-07-11" || r.Rule != "3 months after a second within 3 months (Amateur: 4 weeks, 3 months, 12 months)" {
		t.Fatalf("second stoppage under the amateur rules: %+v", r)
	}
	// The date passed without a clearance: still in force.
	if r := on(c, 200); r == nil || r.EarliestEnd != "2026-07-11" {
		t.Fatalf("after the date, not cleared: %+v", r)
	}

	// A clinician's date later than every rule decides.
	c = &camp{}
	c.add(kindIncident, d(3), map[string]any{"type": "knockout", "seen_by": "Dr. B. Example", "clinician_day": d(80)})
	if r := on(c, 4); r == nil || r.EarliestEnd != d(80) || r.Rule != "Date set by the clinician who saw the fighter" {
		t.Fatalf("clinician's date: %+v", r)
	}
	// A head knock with a clinician's date is dated, and still needs a clearance.
	c = &camp{}
	hk := c.add(kindIncident, d(3), map[string]any{"type": "head_knock", "seen_by": "Dr. B. Example", "clinician_day": d(10)})
	if r := on(c, 4); r == nil || r.EarliestEnd != d(10) {
		t.Fatalf("head knock with a clinician's date: %+v", r)
	}
	if r := on(c, 12); r == nil {
		t.Fatal("the clinician's date passed without a written clearance ended the stand-down")
	}
	c.add(kindClearance, d(12), map[string]any{"incident": hk, "by": "Dr. B. Example"})
	if r := on(c, 12); r != nil {
		t.Fatalf("cleared after the date: %+v", r)
	}

	// Loss of consciousness in a knockout: 90 days (Neidecker et al. 2019).
	c = &camp{}
	c.add(kindIncident, d(3), map[string]any{"type": "knockout", "loss_of_consciousness": true, "loc_seconds": 20})
	if r := on(c, 4); r == nil || r.EarliestEnd != d(93) || r.Rule != "Knockout with loss of consciousness: at least 90 days" {
		t.Fatalf("knockout with loss of consciousness: %+v", r)
	}
}
