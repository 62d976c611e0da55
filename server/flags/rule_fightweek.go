package flags

import (
	"encoding/json"
	"fmt"
	"strconv"
	"strings"

	"cornerbook/server/fightweek"
	"cornerbook/server/flags/day"
	devsync "cornerbook/sync"
)

// weighIn is a weigh-in record as the fight-week rules read it.
type weighIn struct {
	w   fightweek.WeighIn
	day day.Number // the record's day
}

type weighInBody struct {
	Type   string  `json:"type"`
	MassKg float64 `json:"mass_kg"`
	Made   *bool   `json:"made"`
}

func (e *engine) addWeighIn(r *devsync.Record, d day.Number) {
	var b weighInBody
	if json.Unmarshal(r.Body, &b) != nil || b.MassKg <= 0 {
		return
	}
	e.weighIns = append(e.weighIns, weighIn{fightweek.WeighIn{ID: r.ID, Type: b.Type, At: r.At, MassKg: b.MassKg, Made: b.Made}, d})
}

// CautionWeighIn goes with every weigh-in flag (REFERENCES §6.6).
var CautionWeighIn = strings.Join(fightweek.Cautions, " ")

// weighInRules: each check weight or fight-day weigh-in over the cap the
// bout's rules set is an alert on the day it was taken; a regain from the
// official weigh-in to the fight-day weigh-in above weigh_in.regain_watch_pct of the
// official mass is a watch on that day. Both are prompts for the coach's
// and the medical team's judgement, never a reason to cut faster.
func (e *engine) weighInRules() {
	p := e.bout
	if p == nil || len(e.weighIns) == 0 {
		return
	}
	// The weigh-ins of this bout: from 60 days before its day to its day.
	var ws []fightweek.WeighIn
	dayOf := map[string]day.Number{}
	for _, w := range e.weighIns {
		if p.hasBoutDay && (w.day > p.boutDay || w.day < p.boutDay-60) {
			continue
		}
		ws = append(ws, w.w)
		dayOf[w.w.ID] = w.day
	}
	if len(ws) == 0 {
		return
	}
	s := fightweek.Compute(fightweek.Input{LimitKg: p.body.LimitKg, WeighInPlanned: p.body.WeighIn, BoutAt: p.body.BoutAt,
		BoutDay: p.body.BoutDay, Rules: p.body.Rules, Units: e.units, WeighIns: ws})
	for _, c := range s.Checks {
		if c.Pass == nil || *c.Pass || dayOf[c.ID] != e.today {
			continue
		}
		title := "Check weight over its cap"
		if c.Type == fightweek.TypeFightDay {
			title = "Fight-day weigh-in over its cap"
		}
		e.add(Flag{Rule: RuleWeighIn, Level: LevelAlert, Title: title, Value: f64(c.MassKg), Threshold: c.CapKg, Unit: "kg",
			Inputs: []string{c.ID}, Caution: CautionWeighIn, Details: map[string]float64{"over_kg": c.OverKg},
			Reason: c.Reason + " " + c.Rule + "."})
	}
	if s.RegainPct == nil || s.Official == nil || dayOf[s.FightDayID] != e.today {
		return
	}
	watch := e.param(RuleWeighIn, "regain_watch_pct")
	if *s.RegainPct > watch {
		e.add(Flag{Rule: RuleWeighIn, Level: LevelWatch, Title: "Large regain after the weigh-in",
			Value: f64(*s.RegainPct), Reference: f64(s.Official.MassKg), Threshold: f64(watch), ThresholdName: RuleWeighIn + ".regain_watch_pct",
			Unit: "%", Inputs: []string{s.Official.ID, s.FightDayID}, Caution: CautionRegain,
			Details: map[string]float64{"official_kg": s.Official.MassKg, "fight_day_kg": *s.FightDayKg},
			Reason: fmt.Sprintf("Regained %.1f %% from the official weigh-in (%s) to the fight-day weigh-in (%s), over %s %%.",
				*s.RegainPct, fightweek.Mass(s.Official.MassKg, e.units), fightweek.Mass(*s.FightDayKg, e.units), strconv.FormatFloat(watch, 'f', -1, 64))})
	}
}

// CautionRegain goes with a large regain: it says how big the cut was,
// and what follows is the medical team's call, never a faster cut.
var CautionRegain = "A large regain shows how much was cut before the weigh-in; talk it through with the sports dietitian " +
	"and physician for the next camp, never as a reason to cut faster. Some commissions check it on fight night and may " +
	"recommend a heavier class. " + fightweek.Cautions[2]
