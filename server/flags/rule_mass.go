package flags

import (
	"cornerbook/server/records"
	"fmt"
	"math"
	"strconv"

	"cornerbook/server/flags/day"
	"cornerbook/server/flags/stats"
)

// massWindowStart is the first day of the mass trend: the 42 days ending
// today, masses before camp start included (the trend is seeded with the
// first morning mass in them).
func (e *engine) massWindowStart() day.Number {
	return e.today - recentDays + 1
}

// trend is the exponentially weighted mean of the morning masses, seeded
// with the first (λ = 2/(n+1)).
func (e *engine) trend() (trend, latest float64, latestDay day.Number, ids []string, ok bool) {
	days, kg, ids := e.massSeries(e.massWindowStart())
	if len(kg) == 0 {
		return 0, 0, 0, nil, false
	}
	t := stats.EWMA(kg, stats.Lambda(e.param(RuleMassAbovePath, "ewma_n")))
	return t, kg[len(kg)-1], days[len(days)-1], ids, true
}

// campTrend is the mass trend for a rule that applies from camp start to
// weigh-in: ok false outside that span, and also when no morning mass is
// logged yet, in which case it reports the rule as forming.
func (e *engine) campTrend(rule, what, title string) (trend, latest float64, latestDay day.Number, ids []string, ok bool) {
	p := e.bout
	if !p.massReady() || e.today < p.campStart || e.today > p.weighIn {
		return 0, 0, 0, nil, false
	}
	trend, latest, latestDay, ids, ok = e.trend()
	if !ok {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: title, Caution: CautionMass, Inputs: []string{p.id},
			Reason: fmt.Sprintf("%s forming: no morning mass logged in the last %d days.", what, recentDays)})
	}
	return trend, latest, latestDay, ids, ok
}

// massAbovePath: the mass trend against the planned path for the day.
func (e *engine) massAbovePath() {
	const rule = RuleMassAbovePath
	p := e.bout
	trend, latest, latestDay, ids, ok := e.campTrend(rule, "Mass trend", "Mass trend forming")
	if !ok {
		return
	}
	planned := PathAt(e.path(), e.today)
	limit := p.body.LimitKg
	excess := trend - planned
	pct := excess / limit * 100
	level, name := "", ""
	switch {
	case pct > e.param(rule, "alert_pct"):
		level, name = LevelAlert, "alert_pct"
	case pct > e.param(rule, "watch_pct"):
		level, name = LevelWatch, "watch_pct"
	default:
		return
	}
	thr := planned + e.param(rule, name)/100*limit
	e.add(Flag{Rule: rule, Level: level, Title: "Mass above the planned path", Value: f64(trend), Reference: f64(planned), Threshold: f64(thr),
		ThresholdName: rule + "." + name, Unit: "kg", Inputs: append(ids, p.id), Caution: CautionMass,
		Details: map[string]float64{"excess_kg": excess, "excess_pct_of_limit": pct, "latest_kg": latest, "limit_kg": limit},
		Reason: fmt.Sprintf("Mass trend %s is %s (%.1f %% of the %s limit) above the planned %s for today; latest morning mass %s on %s.",
			e.mass(trend, 1), e.mass(excess, 1), pct, e.mass(limit, 1), e.mass(planned, 1), e.mass(latest, 1), latestDay.Words())})
}

// inFinalDays reports whether today is in a bout's final phase: from n
// days before the weigh-in's calendar day through the bout day.
func (e *engine) inFinalDays(n float64) bool {
	for _, p := range e.bouts {
		if !p.hasWeighIn {
			continue
		}
		end := p.weighIn
		if p.hasBoutDay && p.boutDay > end {
			end = p.boutDay
		}
		if e.today >= p.weighIn-day.Number(n) && e.today <= end {
			return true
		}
	}
	return false
}

// massLossFast: least-squares slope of the morning masses over the window,
// as % of the trend mass per week.
func (e *engine) massLossFast() {
	const rule = RuleMassLossFast
	if e.inFinalDays(e.param(rule, "final_days")) || e.betweenCamps(e.today) {
		return // the acute phase is the medical team's; after the bout the athlete is not cutting
	}
	window := int(e.param(rule, "window_days"))
	minN := int(e.param(rule, "min_checkins"))
	days, kg, ids := e.massSeries(e.today - day.Number(window) + 1)
	if len(kg) < minN {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: "Rate of loss forming", Caution: CautionMass, Inputs: ids,
			Reason: fmt.Sprintf("Rate of loss forming: %d of %d morning masses in the last %d days.", len(kg), minN, window)})
		return
	}
	x := make([]float64, len(days))
	for i, d := range days {
		x[i] = float64(d - days[0])
	}
	slope := stats.Slope(x, kg) // kg per day
	// The trend runs over the same morning masses (the 42 days ending
	// today hold the 14 of the slope), so it is never absent here.
	trend, _, _, _, _ := e.trend()
	loss := -slope * 7 / trend * 100
	level, name := "", ""
	switch {
	case loss > e.param(rule, "alert_pct_week"):
		level, name = LevelAlert, "alert_pct_week"
	case loss > e.param(rule, "watch_pct_week"):
		level, name = LevelWatch, "watch_pct_week"
	default:
		return
	}
	e.add(Flag{Rule: rule, Level: level, Title: "Losing mass fast", Value: f64(loss), Threshold: f64(e.param(rule, name)),
		ThresholdName: rule + "." + name, Unit: "%/week", Inputs: ids, Caution: CautionMass,
		Details: map[string]float64{"slope_kg_week": slope * 7, "trend_kg": trend, "checkins": float64(len(kg))},
		Reason: fmt.Sprintf("Morning mass falling %s a week over the last %d days (%d check-ins), %.1f %% of the %s trend per week, above %.1f %%/week; 0.7 %%/week preserved lean mass better in trained athletes (Garthe et al. 2011).",
			e.mass(-slope*7, 2), window, len(kg), loss, e.mass(trend, 1), e.param(rule, name))})
}

// cutAtRisk: the mass still to lose in the final days if the trend falls
// at the projection rate until then, as % of the projected mass.
func (e *engine) cutAtRisk() {
	const rule = RuleCutAtRisk
	p := e.bout
	trend, _, _, ids, ok := e.campTrend(rule, "Cut projection", "Cut projection forming")
	if !ok {
		return
	}
	finalStart := p.weighIn - day.Number(e.param(rule, "final_days"))
	ahead := math.Max(0, float64(finalStart-e.today))
	rate := e.param(rule, "rate_pct_week")
	projected := GeometricMass(trend, rate, ahead/7)
	still := projected - p.body.LimitKg
	pct := still / projected * 100
	suffix, kind := "day_before", "day-before"
	if p.sameDay {
		suffix, kind = "same_day", "same-day"
	}
	level, name := "", ""
	switch {
	case pct > e.param(rule, "alert_pct_"+suffix):
		level, name = LevelAlert, "alert_pct_"+suffix
	case pct > e.param(rule, "watch_pct_"+suffix):
		level, name = LevelWatch, "watch_pct_"+suffix
	default:
		return
	}
	final := count(int(e.param(rule, "final_days")), "day", "days")
	reason := fmt.Sprintf("Losing %.1f %%/week from today's %s trend reaches %s in %s, when the final %s start: %s (%.1f %%) still to lose to the %s limit, above %.1f %% for a %s weigh-in.",
		rate, e.mass(trend, 1), e.mass(projected, 1), count(int(ahead), "day", "days"), final, e.mass(still, 1), pct, e.mass(p.body.LimitKg, 1), e.param(rule, name), kind)
	if ahead == 0 {
		reason = fmt.Sprintf("In the final %s, today's %s trend is %s (%.1f %%) above the %s limit, above %.1f %% for a %s weigh-in.",
			final, e.mass(trend, 1), e.mass(still, 1), pct, e.mass(p.body.LimitKg, 1), e.param(rule, name), kind)
	}
	e.add(Flag{Rule: rule, Level: level, Title: "Weight cut at risk", Value: f64(pct), Threshold: f64(e.param(rule, name)),
		ThresholdName: rule + "." + name, Unit: "%", Inputs: append(ids, p.id), Caution: CautionMass, Reason: reason,
		Details: map[string]float64{"projected_kg": projected, "still_kg": still, "limit_kg": p.body.LimitKg, "trend_kg": trend, "days_to_final": ahead},
	})
}

// mass writes a mass for a reason in the athlete's own units: kg, or lb
// converted with the exact factor (1 lb = 0.45359237 kg). Values, units and
// thresholds of the flag itself stay in kg.
func (e *engine) mass(kg float64, decimals int) string {
	if e.units == "lb" {
		return strconv.FormatFloat(records.KgToLb(kg), 'f', decimals, 64) + " lb"
	}
	return strconv.FormatFloat(kg, 'f', decimals, 64) + " kg"
}
