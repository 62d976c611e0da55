package flags

import (
	"fmt"
	"math"

	"cornerbook/server/flags/day"
	"cornerbook/server/flags/stats"
)

// loadSpike: acute:chronic ratio of daily session load, exponentially
// weighted, both averages seeded with the first day's load.
func (e *engine) loadSpike() {
	const rule = RuleLoadSpike
	minDays := int(e.param(rule, "min_days"))
	n := e.historyDays()
	inputs := e.sessionIDs(e.today - 27)
	if n < minDays {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: "Load ratio forming", Caution: CautionLoad, Inputs: inputs,
			Reason: fmt.Sprintf("Load ratio forming: %d of %d days on record.", n, minDays)})
		return
	}
	r := stats.EWMARatio(e.loads, e.param(rule, "acute_n"), e.param(rule, "chronic_n"))
	if math.IsNaN(r.Ratio) {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: "Load ratio forming", Caution: CautionLoad, Inputs: inputs,
			Reason: "Load ratio forming: no session load recorded yet."})
		return
	}
	details := map[string]float64{"acute_au": r.Acute, "chronic_au": r.Chronic, "days": float64(n)}
	if c, u, ok := stats.RollingRatios(e.loads); ok {
		if !math.IsNaN(c) {
			details["coupled_rolling"] = c
		}
		if !math.IsNaN(u) {
			details["uncoupled_rolling"] = u
		}
	}
	f := Flag{Rule: rule, Value: f64(r.Ratio), Unit: "ratio", Inputs: inputs, Caution: CautionLoad, Details: details}
	switch watch, low := e.param(rule, "watch_ratio"), e.param(rule, "low_ratio"); {
	case r.Ratio > watch:
		f.Level, f.Threshold, f.ThresholdName = LevelWatch, f64(watch), rule+".watch_ratio"
		f.Title = "Load rising quickly"
		f.Reason = fmt.Sprintf("Acute:chronic load ratio %.2f (7-day weighted %.0f AU a day against 28-day %.0f AU), above %.2f: load has risen quickly.",
			r.Ratio, r.Acute, r.Chronic, watch)
	case r.Ratio < low && e.bout.weekLevel(e.today) != "taper":
		f.Level, f.Threshold, f.ThresholdName = LevelInfo, f64(low), rule+".low_ratio"
		f.Title = "Load dropped"
		f.Reason = fmt.Sprintf("Acute:chronic load ratio %.2f (7-day weighted %.0f AU a day against 28-day %.0f AU), below %.2f outside a taper: load has dropped.",
			r.Ratio, r.Acute, r.Chronic, low)
	default:
		return
	}
	e.add(f)
}

// monotony: Foster's mean/SD of the daily loads over the window ending
// today, rest days as 0, with strain alongside.
func (e *engine) monotony() {
	const rule = RuleMonotony
	window := int(e.param(rule, "window_days"))
	inputs := e.sessionIDs(e.today - day.Number(window) + 1)
	if e.historyDays() < window {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: "Monotony forming", Caution: CautionMonotony, Inputs: inputs,
			Reason: fmt.Sprintf("Monotony forming: %d of %d days on record.", e.historyDays(), window)})
		return
	}
	loads := e.dailyLoads(window)
	week := stats.Sum(loads)
	if week == 0 {
		return // no training load this week: nothing monotonous
	}
	mean := week / float64(window)
	watch := e.param(rule, "watch")
	m, ok := stats.Monotony(loads)
	if !ok {
		e.add(Flag{Rule: rule, Level: LevelWatch, Title: "Same load every day", Reference: f64(mean), Threshold: f64(watch), ThresholdName: rule + ".watch",
			Unit: "ratio", Inputs: inputs, Caution: CautionMonotony,
			Details: map[string]float64{"weekly_load_au": week, "mean_au": mean, "sd_au": 0},
			Reason:  fmt.Sprintf("No variation: the same load of %.0f AU on each of the last %d days (monotony cannot be computed; treat as very high).", mean, window)})
		return
	}
	if m <= watch {
		return
	}
	strain, _ := stats.Strain(loads)
	e.add(Flag{Rule: rule, Level: LevelWatch, Title: "Training load monotonous", Value: f64(m), Threshold: f64(watch), ThresholdName: rule + ".watch",
		Unit: "ratio", Inputs: inputs, Caution: CautionMonotony,
		Details: map[string]float64{"strain": strain, "weekly_load_au": week, "mean_au": mean, "sd_au": stats.SD(loads)},
		Reason: fmt.Sprintf("Training monotony %.2f over the last %d days (mean %.0f AU a day, SD %.0f AU), above %.1f; weekly load %.0f AU, strain %.0f.",
			m, window, mean, stats.SD(loads), watch, week, strain)})
}
