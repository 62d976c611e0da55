package flags

import (
	"fmt"
	"sort"
	"strings"
	"time"

	"cornerbook/server/flags/day"
	"cornerbook/server/medical"
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
	capWords := "the cap"
	hardCap, hardName := e.param(rule, "hard_cap_rounds"), rule+".hard_cap_rounds"
	hardWords := "the hard-round cap"
	if p := e.bout; p != nil {
		if k, _, ok := p.week(e.today); ok {
			if w, ok := p.weekByIndex[k]; ok {
				// The week's planned rounds stand over the older flat cap.
				switch {
				case w.SparRounds != nil:
					capRounds, capName = float64(*w.SparRounds), fmt.Sprintf("bout.weeks[%d].spar_rounds", w.pos)
					capWords = fmt.Sprintf("week %d's planned rounds", k)
				case w.SparCapRounds != nil:
					capRounds, capName = float64(*w.SparCapRounds), fmt.Sprintf("bout.weeks[%d].spar_cap_rounds", w.pos)
					capWords = fmt.Sprintf("week %d's planned cap", k)
				}
				if w.HardRounds != nil {
					hardCap, hardName = float64(*w.HardRounds), fmt.Sprintf("bout.weeks[%d].hard_rounds", w.pos)
					hardWords = fmt.Sprintf("week %d's planned hard rounds", k)
				}
			}
		}
	}
	const title = "Sparring rounds over the cap"
	raised := false
	alertAt := e.param(rule, "alert_factor") * capRounds
	switch {
	case float64(all) > alertAt:
		raised = true
		e.add(Flag{Rule: rule, Level: LevelAlert, Title: title, Value: f64(float64(all)), Reference: f64(capRounds), Threshold: f64(alertAt),
			ThresholdName: rule + ".alert_factor", Unit: "rounds", Inputs: ids,
			Details: map[string]float64{"hard_rounds": float64(hard)},
			Reason: fmt.Sprintf("%s in the %d days ending today, over %s (%s × %s of %s).",
				count(all, "sparring round", "sparring rounds"), window, num(alertAt, 0), num(e.param(rule, "alert_factor"), 2), capWords, num(capRounds, 0))})
	case float64(all) > capRounds:
		raised = true
		e.add(Flag{Rule: rule, Level: LevelWatch, Title: title, Value: f64(float64(all)), Reference: f64(capRounds), Threshold: f64(capRounds),
			ThresholdName: capName, Unit: "rounds", Inputs: ids,
			Details: map[string]float64{"hard_rounds": float64(hard)},
			Reason:  fmt.Sprintf("%s in the %d days ending today, over %s of %s.", count(all, "sparring round", "sparring rounds"), window, capWords, num(capRounds, 0))})
	}
	if float64(hard) > hardCap {
		raised = true
		e.add(Flag{Rule: rule, Level: LevelWatch, Title: "Hard sparring rounds over the cap", Value: f64(float64(hard)), Threshold: f64(hardCap),
			ThresholdName: hardName, Unit: "hard rounds", Inputs: ids,
			Reason: fmt.Sprintf("%s in the %d days ending today, over %s of %s.", count(hard, "hard sparring round", "hard sparring rounds"), window, hardWords, num(hardCap, 0))})
	}
	if !raised && e.historyDays() < window {
		e.forming(rule, "Sparring count forming", fmt.Sprintf("Sparring count forming: %s so far, with %s of %d on record.",
			count(all, "sparring round", "sparring rounds"), count(e.historyDays(), "day", "days"), window), ids)
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
			apart := int(e.today - prev)
			title := "Hard sparring on back-to-back days"
			if apart > 1 {
				title = fmt.Sprintf("Hard sparring %d days apart", apart)
			}
			e.add(Flag{Rule: rule, Level: LevelWatch, Title: title, Value: f64(float64(apart)), Threshold: f64(float64(gap)),
				ThresholdName: rule + ".min_gap_days", Unit: "days", Inputs: ids,
				Reason: fmt.Sprintf("Hard sparring on %s and again today, under %s apart.", prev.Words(), count(gap, "day", "days"))})
		}
	}
	if maxDays := e.param(rule, "max_hard_days"); float64(len(hardDays)) > maxDays {
		raised = true
		names := make([]string, len(hardDays))
		for i, d := range hardDays {
			names[i] = d.Words()
		}
		e.add(Flag{Rule: rule, Level: LevelWatch, Title: fmt.Sprintf("Hard sparring on %d of the last %d days", len(hardDays), window),
			Value: f64(float64(len(hardDays))), Threshold: f64(maxDays),
			ThresholdName: rule + ".max_hard_days", Unit: "days", Inputs: ids,
			Reason: fmt.Sprintf("Hard sparring on %d of the last %d days (%s), more than %s.", len(hardDays), window, joinWords(names), count(int(maxDays), "day", "days"))})
	}
	if hardToday {
		jump, well := e.has(RuleJumpDrop, LevelAlert), e.has(RuleWellnessDrop, LevelAlert)
		which := ""
		switch {
		case jump && well:
			which = "jump height and wellness alerts"
		case jump:
			which = "a jump height alert"
		case well:
			which = "a wellness alert"
		}
		if which != "" {
			raised = true
			_, _, todayIDs := e.sparRounds(e.today, hi)
			e.add(Flag{Rule: rule, Level: LevelWatch, Title: "Hard sparring despite " + which, Unit: "", Inputs: todayIDs,
				Reason: fmt.Sprintf("Hard sparring today, a day with %s.", which)})
		}
	}
	if !raised && e.historyDays() < window {
		e.forming(rule, "Sparring spacing forming", fmt.Sprintf("Sparring spacing forming: %s with hard sparring, %s of %d on record.",
			count(len(hardDays), "day", "days"), count(e.historyDays(), "day", "days"), window), ids)
	}
}

// incidentWords names an incident type in the coach's words.
func incidentWords(kind string) string {
	switch kind {
	case "head_knock":
		return "head knock"
	case "knockout_loc":
		return "knockout with loss of consciousness"
	}
	return strings.ReplaceAll(kind, "_", " ")
}

func capitalize(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// UntilCleared is what ends every stand-down.
const UntilCleared = medical.UntilCleared

// duringStandDown reports whether a sparring round falls inside the
// stand-down that inc started: on a later day, or on the incident's day
// after the incident's time.
func duringStandDown(r *sparRound, inc *incident) bool {
	if r.day != inc.day {
		return r.day > inc.day
	}
	return before(inc.at, r.at)
}

// answers reports whether decision dc, recorded on or after the round,
// answers it: on a later day, or the same day at or after the round's time.
func answers(dc *decision, r *sparRound) bool {
	if dc.day != r.day {
		return dc.day > r.day
	}
	return !before(dc.at, r.at)
}

// sparOnHold: a stand-down after each head incident. While it runs, a
// restriction (level info) every day; and any sparring round logged inside
// it is an alert on every day of the stand-down until a coach records a
// decision on this rule after it.
func (e *engine) sparOnHold() {
	const rule = RuleSparOnHold
	stop := int(e.atLeast(rule, "stoppage_days"))
	ko := int(e.atLeast(rule, "knockout_days"))
	koLOC := int(e.atLeast(rule, "knockout_loc_days"))
	var active []incident
	for i := range e.incidents {
		inc := e.incidents[i]
		sd := e.standDownOf(&inc, stop, ko, koLOC)
		if !sd.applies || inc.day > e.today {
			continue
		}
		_, cleared := e.clearances[inc.id]
		dateOver := sd.dated && e.today >= sd.end
		if sd.dated && !dateOver || !cleared {
			active = append(active, inc)
		}
	}
	if len(active) == 0 {
		return
	}
	sort.SliceStable(active, func(i, j int) bool {
		if active[i].day != active[j].day {
			return active[i].day < active[j].day
		}
		return before(active[i].at, active[j].at)
	})
	var incIDs []string
	for _, inc := range active {
		incIDs = append(incIDs, inc.id)
		sd := e.standDownOf(&inc, stop, ko, koLOC)
		since := float64(e.today - inc.day)
		what := incidentWords(inc.kind)
		f := Flag{Rule: rule, Level: LevelInfo, Value: f64(since), Unit: "days", Inputs: []string{inc.id}, Caution: CautionHead,
			Title:   "Stand-down after a " + what,
			Details: map[string]float64{"days_since": since}}
		res := &Restriction{Incident: inc.id, IncidentType: inc.kind, StartedDay: inc.day.String(), StartedAt: inc.at, Until: UntilCleared}
		_, cleared := e.clearances[inc.id]
		if sd.dated {
			end := sd.end
			left := float64(end - e.today)
			f.Threshold = f64(float64(sd.days))
			f.ThresholdName = sd.thresholdName
			f.Details["days_left"] = left
			res.Rule = sd.rule
			res.EarliestEnd = end.String()
			clearNote := ", and not until " + UntilCleared
			if cleared {
				clearNote = " (clearance recorded; the minimum still runs)"
			}
			f.Reason = fmt.Sprintf("Stand-down after the %s on %s, day %.0f of at least %d: no sparring or contact before %s%s.",
				what, inc.day.Words(), since, sd.days, end.Words(), clearNote)
		} else {
			res.Rule = capitalize(what) + ": treated as suspected concussion"
			f.Reason = fmt.Sprintf("Stand-down after the %s on %s (treated as suspected concussion), day %.0f: no sparring or contact until %s.", what, inc.day.Words(), since, UntilCleared)
		}
		res.RTS = e.ladder(&inc)
		f.Restriction = res
		e.add(f)
	}
	// Sparring rounds inside a running stand-down, not yet answered by a
	// decision on this rule recorded before today.
	byRule, whole := e.todaysDecisions()
	var spar []sparRound
	for i := range e.sparLog {
		r := &e.sparLog[i]
		if r.day > e.today {
			continue
		}
		inside := false
		for k := range active {
			if duringStandDown(r, &active[k]) {
				inside = true
				break
			}
		}
		if !inside {
			continue
		}
		answered := false
		for k := range e.decisions {
			dc := &e.decisions[k]
			if dc.body.Rule == rule && dc.day < e.today && answers(dc, r) {
				answered = true
				break
			}
		}
		if !answered {
			spar = append(spar, *r)
		}
	}
	if len(spar) == 0 {
		return
	}
	var ids []string
	var days []string
	today := 0
	for _, r := range spar {
		ids = append(ids, r.id)
		if r.day == e.today {
			today++
		} else if len(days) == 0 || days[len(days)-1] != r.day.String() {
			days = append(days, r.day.String())
		}
	}
	when := ""
	switch {
	case len(days) == 0:
		when = "today"
	case today == 0:
		when = "on " + joinWords(days)
	default:
		when = "on " + joinWords(days) + " and today"
	}
	f := Flag{Rule: rule, Level: LevelAlert, Value: f64(float64(len(spar))), Unit: "rounds",
		Title:  "Sparring during a stand-down",
		Inputs: append(ids, incIDs...), Caution: CautionHead, ownDecision: true,
		Reason: fmt.Sprintf("%s logged %s during a stand-down; no sparring or contact until %s.",
			count(len(spar), "sparring round", "sparring rounds"), when, UntilCleared)}
	// Today's decision acknowledges the alert only if it came after every
	// round it lists.
	for _, dc := range []*decision{byRule[rule], whole} {
		if dc == nil {
			continue
		}
		all := true
		for k := range spar {
			if !answers(dc, &spar[k]) {
				all = false
				break
			}
		}
		if all {
			scope := ScopeFlag
			if dc.body.Rule == "" {
				scope = ScopeDay
			}
			f.Decision = dc.ref(scope)
			break
		}
	}
	e.add(f)
}

// count writes n with the singular or plural noun: "1 day", "2 days".
func count(n int, one, many string) string {
	if n == 1 {
		return "1 " + one
	}
	return fmt.Sprintf("%d %s", n, many)
}

// joinWords joins items as "a", "a and b", "a, b and c".
func joinWords(items []string) string {
	switch len(items) {
	case 0:
		return ""
	case 1:
		return items[0]
	}
	return strings.Join(items[:len(items)-1], ", ") + " and " + items[len(items)-1]
}

// before reports whether RFC 3339 instant a is before b; false if either
// does not parse (then the round counts as inside the stand-down).
func before(a, b string) bool {
	ta, err1 := time.Parse(time.RFC3339, a)
	tb, err2 := time.Parse(time.RFC3339, b)
	return err1 == nil && err2 == nil && ta.Before(tb)
}

// standDown is an incident's stand-down as the flags show it.
type standDown struct {
	applies, dated bool
	end            day.Number // first day the minimum no longer holds
	days           int        // end − the incident's day
	rule           string     // what sets the end, in words
	thresholdName  string     // the camp setting behind it, "" for a rule set or a clinician's date
}

// ladder is an incident's return to sport up to today, with the caps of
// the fighter's age in the evaluated day's year (medical.Build).
func (e *engine) ladder(inc *incident) *medical.Ladder {
	age := 0
	if e.birthYear > 0 {
		y, _, _ := e.today.Civil()
		age = medical.AgeOn(y, e.birthYear)
	}
	l := medical.Build(e.rtsSteps[inc.id], age)
	return &l
}

// standDownOf is an incident's stand-down: the camp's minimum days per
// incident type (never below the published ones) and every rule set the
// bout applies (server/medical; the ringside physicians' minimums always
// among them) with the clinician's date — the latest decides. Loss of
// consciousness in any head incident counts as a knockout with loss of
// consciousness. Whatever the dates, a written clearance is still needed.
func (e *engine) standDownOf(inc *incident, stop, ko, koLOC int) standDown {
	kind := inc.kind
	if inc.loc && medical.SeverityOf(medical.Incident{Type: kind, LOC: true}) == medical.KOLOC {
		kind = "knockout_loc"
	}
	sd := StandDownFor(kind, stop, ko, koLOC)
	if !sd.Applies {
		return standDown{}
	}
	out := standDown{applies: true}
	if sd.Dated {
		out.dated, out.end = true, inc.day+day.Number(sd.Days)
		out.rule = fmt.Sprintf("%s: at least %d days", capitalize(incidentWords(kind)), sd.Days)
		out.thresholdName = RuleSparOnHold + "." + kind + "_days"
	}
	var sets []string
	if e.bout != nil {
		sets = e.bout.body.StandDownSets
	}
	hist := make([]medical.Incident, 0, len(e.incidents))
	for _, h := range e.incidents {
		hist = append(hist, medical.Incident{ID: h.id, Type: h.kind, Day: h.day.String(), LOC: h.loc})
	}
	mc := medical.Compute(medical.Incident{ID: inc.id, Type: inc.kind, Day: inc.day.String(), LOC: inc.loc, ClinicianDay: inc.clinicianDay}, hist, sets)
	if end, err := day.Parse(mc.EarliestEnd); err == nil && mc.Dated && (!out.dated || end > out.end) {
		top := mc.Ends[0]
		out.dated, out.end, out.thresholdName = true, end, ""
		if top.Set == "clinician" {
			out.rule = "Date set by the clinician who saw the fighter"
		} else {
			out.rule = fmt.Sprintf("%s (%s)", capitalize(top.Words), top.Name)
		}
	}
	out.days = int(out.end - inc.day)
	return out
}
