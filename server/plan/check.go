package plan

import (
	"fmt"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	"cornerbook/server/records"
)

// Camp lengths PRODUCT.md names as usual: 6–12 weeks.
const (
	UsualMinWeeks = 6
	UsualMaxWeeks = 12
)

// MaxBuildWeeks is the most loading weeks in a row before a lighter one
// (low, rest or taper) that the plan accepts without a note: the default
// cycle has three.
const MaxBuildWeeks = 3

// GartheSlowPctWeek is the weekly loss that preserved lean mass better in
// trained athletes than 1.4 %/week (Garthe et al. 2011).
const GartheSlowPctWeek = 0.7

// Check lists what a coach should look at in a bout's plan before the camp
// starts: camp length, weeks that do not cover the camp, no lighter week
// for a long stretch, a taper outside the band of the off_plan rule, a
// missing reference load, and, for the planned mass path, segments that
// need a loss faster than the mass_loss_fast levels, a final phase above
// the cut_at_risk levels, a path that ends above the limit, and a start
// mass that leaves the default path flat. th are the merged thresholds in
// force (nil for the defaults). Issues are prompts for the coach's
// judgement; body-mass issues carry flags.CautionMass.
func Check(b records.Bout, th map[string]map[string]float64) []Issue {
	return CheckWith(b, th, Context{})
}

func check(b records.Bout, th map[string]map[string]float64) []Issue {
	var out []Issue
	add := func(check, field, level, threshold, format string, args ...any) {
		out = append(out, Issue{Check: check, Field: field, Level: level, Threshold: threshold, Message: fmt.Sprintf(format, args...)})
	}
	start, bout, err := campDays(b.CampStart, b.BoutDay)
	if err != nil {
		field := "body.bout_day"
		if _, perr := day.Parse(b.CampStart); perr != nil {
			field = "body.camp_start"
		}
		add(CheckCampDates, field, LevelWatch, "", "The camp dates cannot be read (%s); the plan cannot be checked until they are fixed.", err.Error())
		return out
	}
	need := WeeksFor(start, bout)
	trainingDays := int(bout - start)
	if need < UsualMinWeeks || need > UsualMaxWeeks {
		add(CheckCampLength, "body.bout_day", LevelInfo, "", "The camp has %d training days (%d weeks, %s to %s); a fight camp is usually %d–%d weeks.",
			trainingDays, need, start.Words(), (bout - 1).Words(), UsualMinWeeks, UsualMaxWeeks)
	}
	out = append(out, checkWeeks(b, start, bout, need, th)...)
	out = append(out, checkMass(b, start, th)...)
	return out
}

func checkWeeks(b records.Bout, start, bout day.Number, need int, th map[string]map[string]float64) []Issue {
	var out []Issue
	add := func(check, field, level, threshold, format string, args ...any) {
		out = append(out, Issue{Check: check, Field: field, Level: level, Threshold: threshold, Message: fmt.Sprintf(format, args...)})
	}
	ws := b.Weeks
	if len(ws) == 0 {
		if def, err := DefaultWeeksFor(b.CampStart, b.BoutDay, th); err == nil {
			add(CheckWeeksCover, "body.weeks", LevelInfo, "", "No week plan yet: the load of each week cannot be compared with a plan, and sparring is capped at the default %d rounds a week. The default plan for this camp is %s.",
				SparCap("heavy", th), levelNames(def))
		}
		return out
	}
	maxWeeks := int(bout-start)/7 + 1 // the week holding the bout day may be planned too
	switch {
	case len(ws) < need:
		var missing []int
		for k := len(ws) + 1; k <= need; k++ {
			missing = append(missing, k)
		}
		add(CheckWeeksCover, "body.weeks", LevelWatch, "", "The plan has %d weeks but the camp has %d (%s to %s): %s, from %s, %s no planned level or sparring cap.",
			len(ws), need, start.Words(), (bout - 1).Words(), weekList(missing), (start + day.Number(7*len(ws))).Words(), hasHave(len(missing)))
	case len(ws) > maxWeeks:
		add(CheckWeeksCover, "body.weeks", LevelWatch, "", "The plan has %d weeks but the camp has %d; week %d would start on %s, after the bout on %s.",
			len(ws), need, maxWeeks+1, (start + day.Number(7*maxWeeks)).Words(), bout.Words())
	}
	// Long stretches of loading without a lighter week.
	run, from := 0, 0
	flush := func(upto int) {
		intoTaper := upto < len(ws) && ws[upto].Level == "taper"
		if run > MaxBuildWeeks && !(intoTaper && run == MaxBuildWeeks+1) {
			add(CheckBuildRun, fmt.Sprintf("body.weeks[%d].level", from-1), LevelInfo, "", "Weeks %d to %d build load for %d weeks in a row without a lighter week; the default plan puts a low week every fourth week.",
				from, upto, run)
		}
		run = 0
	}
	for i, w := range ws {
		switch w.Level {
		case "rest", "low", "taper":
			flush(i)
		default:
			if run == 0 {
				from = i + 1
			}
			run++
		}
	}
	flush(len(ws))
	out = append(out, checkTaper(b, bout, th)...)
	for i, w := range ws {
		if w.Level != "rest" {
			continue
		}
		if r, field := plannedRounds(w); r > 0 {
			add(CheckRestSpar, fmt.Sprintf("body.weeks[%d].%s", i, field), LevelInfo, "", "Week %d is a rest week but plans %d sparring rounds.", i+1, r)
		}
	}
	if b.ReferenceLoadAU <= 0 {
		add(CheckReferenceLoad, "body.reference_load_au", LevelInfo, "", "No reference weekly load: each week's load cannot be compared with its planned level. Enter the fighter's habitual weekly load (AU, session RPE × minutes summed over a normal week).")
	}
	return out
}

func hasHave(n int) string {
	if n == 1 {
		return "has"
	}
	return "have"
}

// Segment is one straight piece of a planned mass path and the weekly
// loss it asks for.
type Segment struct {
	From, To     day.Number
	FromKg, ToKg float64
	// PctWeek is the loss per week as a share of the starting mass
	// (flags.WeeklyLossPct); negative for a gain.
	PctWeek float64
	// Final is true for a segment that starts in the final days before the
	// weigh-in (mass_loss_fast.final_days), left to the acute plan.
	Final bool
}

// Segments splits a path into its straight pieces up to the weigh-in day.
func Segments(path []flags.Knot, weighIn day.Number, finalDays int) []Segment {
	var out []Segment
	finalStart := weighIn - day.Number(finalDays)
	for i := 1; i < len(path); i++ {
		a, b := path[i-1], path[i]
		if b.Day <= a.Day || a.Day >= weighIn {
			continue
		}
		out = append(out, Segment{From: a.Day, To: b.Day, FromKg: a.MassKg, ToKg: b.MassKg,
			PctWeek: flags.WeeklyLossPct(a.MassKg, b.MassKg, float64(b.Day-a.Day)), Final: a.Day >= finalStart})
	}
	return out
}

func checkMass(b records.Bout, start day.Number, th map[string]map[string]float64) []Issue {
	var out []Issue
	add := func(check, field, level, threshold, format string, args ...any) {
		out = append(out, Issue{Check: check, Field: field, Level: level, Threshold: threshold, Caution: flags.CautionMass, Message: fmt.Sprintf(format, args...)})
	}
	if b.LimitKg <= 0 {
		add(CheckPathNone, "body.limit_kg", LevelInfo, "", "No upper mass limit for this class: the planned path and the mass rules do not apply.")
		return out
	}
	wi, ok := weighInDay(b)
	if !ok || wi < start {
		add(CheckPathNone, "body.weigh_in", LevelWatch, "", "The weigh-in date cannot be read or is before the camp start; the mass plan cannot be checked.")
		return out
	}
	if b.StartMassKg <= 0 {
		add(CheckPathNone, "body.start_mass_kg", LevelWatch, "", "No start mass: the planned path cannot be drawn.")
		return out
	}
	if b.StartMassKg <= b.LimitKg {
		add(CheckPathFlat, "body.start_mass_kg", LevelInfo, "", "The start mass of %.1f kg is at or below the %.2f kg limit: no loss is planned; the path holds the start mass.",
			b.StartMassKg, b.LimitKg)
	} else if f := factor(b, th); len(b.Path) == 0 && b.LimitKg*f > b.StartMassKg {
		name := "factor_day_before"
		if b.WeighInType == "same_day" {
			name = "factor_same_day"
		}
		finalDays := param(th, records.RuleMassAbovePath, "final_days")
		add(CheckPathFlat, "body.start_mass_kg", LevelInfo, records.RuleMassAbovePath+"."+name,
			"The limit × %.2f (%.1f kg), where the default path starts its final %.0f days, is above the start mass of %.1f kg: the path holds %.1f kg until %s and then goes to the limit.",
			f, b.LimitKg*f, finalDays, b.StartMassKg, b.StartMassKg, (wi - day.Number(finalDays)).Words())
	}
	path := PathFor(b, th)
	if len(path) == 0 {
		return out
	}
	finalDays := int(param(th, records.RuleMassLossFast, "final_days"))
	watch := param(th, records.RuleMassLossFast, "watch_pct_week")
	alert := param(th, records.RuleMassLossFast, "alert_pct_week")
	field := "body.path"
	if len(b.Path) == 0 {
		field = "body.start_mass_kg" // the default path follows from the start mass and the limit
	}
	for _, s := range Segments(path, wi, finalDays) {
		if s.Final || s.PctWeek <= watch {
			continue
		}
		level, name, thr := LevelInfo, "watch_pct_week", watch
		if s.PctWeek > alert {
			level, name, thr = LevelWatch, "alert_pct_week", alert
		}
		weeks := float64(s.To-s.From) / 7
		slow := flags.WeeksNeeded(s.FromKg, s.ToKg, GartheSlowPctWeek)
		add(CheckPathRate, field, level, records.RuleMassLossFast+"."+name,
			"The planned path falls from %.1f kg on %s to %.1f kg on %s: %.2f %% of body mass a week (%.2f kg a week over %.1f weeks), %.2f %%/week above the %.1f %%/week level of the fast-loss rule. "+
				"At %.1f %%/week, which preserved lean mass better than 1.4 %%/week (Garthe et al. 2011), this loss takes %.1f weeks. Review the timeline, the weight class and the plan with the dietitian.",
			s.FromKg, s.From.Words(), s.ToKg, s.To.Words(), s.PctWeek, (s.FromKg-s.ToKg)/weeks, weeks, s.PctWeek-thr, thr, GartheSlowPctWeek, slow)
	}
	// The final phase: the drop from the path's mass when the final days
	// start to the weigh-in, against the cut_at_risk levels.
	suffix, kind := "day_before", "day-before"
	if b.WeighInType == "same_day" {
		suffix, kind = "same_day", "same-day"
	}
	cutFinal := int(param(th, records.RuleCutAtRisk, "final_days"))
	finalStart := wi - day.Number(cutFinal)
	if finalStart < start {
		finalStart = start
	}
	kneeKg, endKg := flags.PathAt(path, finalStart), flags.PathAt(path, wi)
	if drop := (kneeKg - endKg) / kneeKg * 100; drop > 0 {
		cw, ca := param(th, records.RuleCutAtRisk, "watch_pct_"+suffix), param(th, records.RuleCutAtRisk, "alert_pct_"+suffix)
		if drop > cw {
			name, thr := "watch_pct_"+suffix, cw
			if drop > ca {
				name, thr = "alert_pct_"+suffix, ca
			}
			add(CheckPathFinalWeek, field, LevelWatch, records.RuleCutAtRisk+"."+name,
				"The path plans %.1f kg (%.1f %% of body mass) of loss in the final %d days, from %.1f kg on %s to %.1f kg at the weigh-in on %s, above %.0f %% for a %s weigh-in. Any acute loss must be planned and supervised by a sports dietitian or physician.",
				kneeKg-endKg, drop, int(wi-finalStart), kneeKg, finalStart.Words(), endKg, wi.Words(), thr, kind)
		}
	}
	if endKg > b.LimitKg+0.005 {
		add(CheckPathEnd, field, LevelWatch, "", "The planned path ends at %.1f kg on the weigh-in day, %s, %.1f kg above the %.2f kg limit.", endKg, wi.Words(), endKg-b.LimitKg, b.LimitKg)
	}
	// Gradual loss at the cut_at_risk rate from the start mass to the final
	// phase: what would be left for the final days (the rule's view on day 1).
	rate := param(th, records.RuleCutAtRisk, "rate_pct_week")
	if ahead := float64(finalStart - start); b.StartMassKg > b.LimitKg && ahead >= 0 {
		projected := flags.GeometricMass(b.StartMassKg, rate, ahead/7)
		still := projected - b.LimitKg
		pct := still / projected * 100
		if w := param(th, records.RuleCutAtRisk, "watch_pct_"+suffix); pct > w {
			add(CheckPathFinalWeek, "body.start_mass_kg", LevelWatch, records.RuleCutAtRisk+".watch_pct_"+suffix,
				"Losing a gradual %.1f %%/week from the %.1f kg start mass reaches %.1f kg by %s, leaving %.1f kg (%.1f %% of body mass) for the final %d days, above %.0f %% for a %s weigh-in. "+
					"Review the weight class and the timeline with the dietitian and physician; the sanctioning body's rules apply.",
				rate, b.StartMassKg, projected, finalStart.Words(), still, pct, int(wi-finalStart), w, kind)
		}
	}
	return out
}

// plannedRounds is a week's planned sparring rounds (spar_rounds, else the
// older spar_cap_rounds) and the field it came from; 0 and "" for none.
func plannedRounds(w records.Week) (int, string) {
	switch {
	case w.SparRounds != nil:
		return *w.SparRounds, "spar_rounds"
	case w.SparCapRounds != nil:
		return *w.SparCapRounds, "spar_cap_rounds"
	}
	return 0, ""
}
