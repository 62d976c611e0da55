package flags

import (
	"fmt"
	"sort"
	"strings"
	"time"

	"cornerbook/server/flags/day"
)

// sparRounds counts the sparring rounds on day d, all and hard ones.
func (e *engine) sparRounds(d day.Number, hardIntensity int) (all, hard int, ids []string) {
	r := e.at(d)
	if r == nil {
		return 0, 0, nil
	}
	for _, rd := range r.rounds {
		if rd.body.Activity != "spar" {
			continue
		}
		all++
		if rd.body.Intensity >= hardIntensity {
			hard++
		}
		ids = append(ids, rd.id)
	}
	return
}

// sparDensity: sparring rounds in the window ending today against the
// week's cap, and hard rounds against the hard cap.
func (e *engine) sparDensity() {
	const rule = RuleSparDensity
	window := int(e.param(rule, "window_days"))
	hi := int(e.param(rule, "hard_intensity"))
	var all, hard int
	var ids []string
	for d := e.today - day.Number(window) + 1; d <= e.today; d++ {
		a, h, i := e.sparRounds(d, hi)
		all, hard, ids = all+a, hard+h, append(ids, i...)
	}
	capRounds, capName := e.param(rule, "cap_rounds"), rule+".cap_rounds"
	if p := e.bout; p != nil {
		if k, _, ok := p.week(e.today); ok {
			if w, ok := p.weekByIndex[k]; ok && w.SparCapRounds != nil {
				capRounds, capName = float64(*w.SparCapRounds), fmt.Sprintf("bout.weeks[%d].spar_cap_rounds", k)
			}
		}
	}
	raised := false
	alertAt := e.param(rule, "alert_factor") * capRounds
	switch {
	case float64(all) > alertAt:
		raised = true
		e.add(Flag{Rule: rule, Level: LevelAlert, Value: f64(float64(all)), Reference: f64(capRounds), Threshold: f64(alertAt),
			ThresholdName: rule + ".alert_factor", Unit: "rounds", Inputs: ids,
			Details: map[string]float64{"hard_rounds": float64(hard)},
			Reason: fmt.Sprintf("%d sparring rounds in the %d days ending today, over %.0f (%.2f × the cap of %.0f).",
				all, window, alertAt, e.param(rule, "alert_factor"), capRounds)})
	case float64(all) > capRounds:
		raised = true
		e.add(Flag{Rule: rule, Level: LevelWatch, Value: f64(float64(all)), Reference: f64(capRounds), Threshold: f64(capRounds),
			ThresholdName: capName, Unit: "rounds", Inputs: ids,
			Details: map[string]float64{"hard_rounds": float64(hard)},
			Reason:  fmt.Sprintf("%d sparring rounds in the %d days ending today, over the cap of %.0f.", all, window, capRounds)})
	}
	if hardCap := e.param(rule, "hard_cap_rounds"); float64(hard) > hardCap {
		raised = true
		e.add(Flag{Rule: rule, Level: LevelWatch, Value: f64(float64(hard)), Threshold: f64(hardCap),
			ThresholdName: rule + ".hard_cap_rounds", Unit: "hard rounds", Inputs: ids,
			Reason: fmt.Sprintf("%d hard sparring rounds in the %d days ending today, over the hard cap of %.0f.", hard, window, hardCap)})
	}
	if !raised && e.historyDays() < window {
		e.forming(rule, fmt.Sprintf("Sparring count forming: %d sparring rounds so far, over %d of %d days on record.", all, e.historyDays(), window), ids)
	}
}

// sparSpacing: hard sparring too close together, too often, or on a day
// with a jump or wellness alert.
func (e *engine) sparSpacing() {
	const rule = RuleSparSpacing
	window := int(e.param(rule, "window_days"))
	hi := int(e.param(rule, "hard_intensity"))
	gap := int(e.param(rule, "min_gap_days"))
	var hardDays []day.Number
	var ids []string
	for d := e.today - day.Number(window) + 1; d <= e.today; d++ {
		if _, h, i := e.sparRounds(d, hi); h > 0 {
			hardDays = append(hardDays, d)
			ids = append(ids, i...)
		}
	}
	hardToday := len(hardDays) > 0 && hardDays[len(hardDays)-1] == e.today
	raised := false
	if hardToday && len(hardDays) > 1 {
		prev := hardDays[len(hardDays)-2]
		if int(e.today-prev) < gap {
			raised = true
			e.add(Flag{Rule: rule, Level: LevelWatch, Value: f64(float64(e.today - prev)), Threshold: f64(float64(gap)),
				ThresholdName: rule + ".min_gap_days", Unit: "days", Inputs: ids,
				Reason: fmt.Sprintf("Hard sparring on %s and again today, under %d days apart.", prev, gap)})
		}
	}
	if maxDays := e.param(rule, "max_hard_days"); float64(len(hardDays)) > maxDays {
		raised = true
		names := make([]string, len(hardDays))
		for i, d := range hardDays {
			names[i] = d.String()
		}
		e.add(Flag{Rule: rule, Level: LevelWatch, Value: f64(float64(len(hardDays))), Threshold: f64(maxDays),
			ThresholdName: rule + ".max_hard_days", Unit: "days", Inputs: ids,
			Reason: fmt.Sprintf("Hard sparring on %d of the last %d days (%s).", len(hardDays), window, strings.Join(names, ", "))})
	}
	if hardToday {
		var which []string
		if e.has(RuleJumpDrop, LevelAlert) {
			which = append(which, "a jump_drop alert")
		}
		if e.has(RuleWellnessDrop, LevelAlert) {
			which = append(which, "a wellness_drop alert")
		}
		if len(which) > 0 {
			raised = true
			_, _, todayIDs := e.sparRounds(e.today, hi)
			e.add(Flag{Rule: rule, Level: LevelWatch, Unit: "", Inputs: todayIDs,
				Reason: fmt.Sprintf("Hard sparring today on a day with %s.", strings.Join(which, " and "))})
		}
	}
	if !raised && e.historyDays() < window {
		e.forming(rule, fmt.Sprintf("Sparring spacing forming: %d hard sparring days over %d of %d days on record.", len(hardDays), e.historyDays(), window), ids)
	}
}

// sparOnHold: a stand-down after each head incident; info while it runs,
// alert for any sparring round logged inside it.
func (e *engine) sparOnHold() {
	const rule = RuleSparOnHold
	stop := int(e.atLeast(rule, "stoppage_days"))
	ko := int(e.atLeast(rule, "knockout_days"))
	koLOC := int(e.atLeast(rule, "knockout_loc_days"))
	var active []incident
	for _, inc := range e.incidents {
		sd := StandDownFor(inc.kind, stop, ko, koLOC)
		if !sd.Applies || inc.day > e.today {
			continue
		}
		_, cleared := e.clearances[inc.id]
		dateOver := sd.Dated && e.today >= inc.day+day.Number(sd.Days)
		if sd.Dated && !dateOver || !cleared {
			active = append(active, inc)
		}
	}
	if len(active) == 0 {
		return
	}
	sort.SliceStable(active, func(i, j int) bool { return active[i].day < active[j].day })
	var sparIDs []string
	var incIDs []string
	if r := e.at(e.today); r != nil {
		for _, rd := range r.rounds {
			if rd.body.Activity != "spar" {
				continue
			}
			for _, inc := range active {
				if inc.day == e.today && before(rd.at, inc.at) {
					continue // sparred earlier the same day, before the incident
				}
				sparIDs = append(sparIDs, rd.id)
				break
			}
		}
	}
	for _, inc := range active {
		incIDs = append(incIDs, inc.id)
		sd := StandDownFor(inc.kind, stop, ko, koLOC)
		since := float64(e.today - inc.day)
		f := Flag{Rule: rule, Level: LevelInfo, Value: f64(since), Unit: "days", Inputs: []string{inc.id}, Caution: CautionHead,
			Details: map[string]float64{"days_since": since}}
		_, cleared := e.clearances[inc.id]
		what := strings.ReplaceAll(inc.kind, "_", " ")
		if inc.kind == "knockout_loc" {
			what = "knockout with loss of consciousness"
		}
		if sd.Dated {
			end := inc.day + day.Number(sd.Days)
			left := float64(end - e.today)
			f.Threshold = f64(float64(sd.Days))
			f.ThresholdName = rule + "." + inc.kind + "_days"
			f.Details["days_left"] = left
			clearNote := ", and not until cleared in writing by a doctor"
			if cleared {
				clearNote = " (clearance recorded; the minimum still runs)"
			}
			f.Reason = fmt.Sprintf("Stand-down after the %s on %s, day %.0f of at least %d: no sparring or contact before %s%s.",
				what, inc.day, since, sd.Days, end, clearNote)
		} else {
			f.Reason = fmt.Sprintf("Stand-down after the %s on %s (suspected concussion), day %.0f: no sparring or contact until cleared in writing by a doctor.", what, inc.day, since)
		}
		e.add(f)
	}
	if len(sparIDs) > 0 {
		e.add(Flag{Rule: rule, Level: LevelAlert, Value: f64(float64(len(sparIDs))), Unit: "rounds",
			Inputs: append(sparIDs, incIDs...), Caution: CautionHead,
			Reason: fmt.Sprintf("%d sparring round(s) logged today during a stand-down; no sparring or contact until cleared in writing by a doctor.", len(sparIDs))})
	}
}

// before reports whether RFC 3339 instant a is before b; false if either
// does not parse (then the round counts as inside the stand-down).
func before(a, b string) bool {
	ta, err1 := time.Parse(time.RFC3339, a)
	tb, err2 := time.Parse(time.RFC3339, b)
	return err1 == nil && err2 == nil && ta.Before(tb)
}
