package flags

import (
	"fmt"
	"math"

	"cornerbook/server/flags/day"
	"cornerbook/server/flags/stats"
)

// jumpDay is one day's CMJ value: the mean of the valid attempts of the
// day's monitoring test.
type jumpDay struct {
	mean, best float64
	n          int
	ids        []string
	method     string
	later      []jumpDay // later tests of the day: shown, not used
	at         string
}

// dayTests returns day d's tests with valid attempts, earliest (by
// at) first: the first is the day's monitoring test.
func (e *engine) dayTests(d day.Number) []jump {
	r := e.at(d)
	if r == nil || len(r.jumps) == 0 {
		return nil
	}
	return r.jumps // kept in time order (newEngine)
}

func summarize(j jump) jumpDay {
	out := jumpDay{n: len(j.heights), ids: []string{j.id}, method: j.method, at: j.at}
	for _, h := range j.heights {
		out.mean += h
		out.best = math.Max(out.best, h)
	}
	out.mean /= float64(out.n)
	return out
}

// jumpOn returns day d's CMJ value: its monitoring test (the earliest by
// at), if its method is compatible with method (an empty method on either
// side matches; methods are not mixed in one baseline: flight-time and
// force-plate heights differ by about 1.7 cm). Later tests of the day are
// listed in later and enter no value.
func (e *engine) jumpOn(d day.Number, method string) (jumpDay, bool) {
	tests := e.dayTests(d)
	if len(tests) == 0 {
		return jumpDay{}, false
	}
	j := summarize(tests[0])
	if method != "" && j.method != "" && j.method != method {
		return jumpDay{}, false
	}
	for _, t := range tests[1:] {
		j.later = append(j.later, summarize(t))
	}
	return j, true
}

// jumpDrop: today's CMJ (mean of valid attempts) against the mean of the
// daily values over the window before today; noise is the CV of those
// daily values with a floor.
func (e *engine) jumpDrop() {
	const rule = RuleJumpDrop
	today, ok := e.jumpOn(e.today, "")
	method := today.method
	if !ok {
		return // no test today: nothing to judge
	}
	window := int(e.param(rule, "window_days"))
	minDays := int(e.param(rule, "min_days"))
	var daily []float64
	inputs := append([]string(nil), today.ids...)
	for d := e.today - day.Number(window); d < e.today; d++ {
		if j, ok := e.jumpOn(d, method); ok {
			daily = append(daily, j.mean)
			inputs = append(inputs, j.ids...)
		}
	}
	details := map[string]float64{"best_cm": today.best, "attempts": float64(today.n), "baseline_days": float64(len(daily))}
	// Later tests today are shown, not used.
	laterNote := ""
	if n := len(today.later); n > 0 {
		details["later_tests"] = float64(n)
		last := today.later[n-1]
		details["later_mean_cm"] = last.mean
		if n == 1 {
			laterNote = fmt.Sprintf(" A later test today averaged %.1f cm, not used: the day's first test is its monitoring test.", last.mean)
		} else {
			laterNote = fmt.Sprintf(" %d later tests today, the last averaging %.1f cm, not used: the day's first test is its monitoring test.", n, last.mean)
		}
	}
	if len(daily) < minDays || len(daily) < 2 {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: "Jump baseline forming",
			Value: f64(today.mean), Unit: "cm", Inputs: inputs, Details: details,
			Reason: fmt.Sprintf("CMJ %.1f cm (best %.1f cm); baseline forming: %d of %d test days in the last %d days.%s",
				today.mean, today.best, len(daily), minDays, window, laterNote)})
		return
	}
	base := stats.Mean(daily)
	cv := stats.CVPercent(daily)
	floor := e.param(rule, "cv_floor_pct")
	noise := math.Max(cv, floor)
	if math.IsNaN(cv) {
		noise = floor
	}
	te := noise / 100 * base // typical error in cm
	drop := -stats.ChangePct(base, today.mean)
	watchT, watchName := pick(e.param(rule, "watch_pct"), "watch_pct", e.param(rule, "watch_cv")*noise, "watch_cv")
	alertT, alertName := pick(e.param(rule, "alert_pct"), "alert_pct", e.param(rule, "alert_cv")*noise, "alert_cv")
	details["drop_pct"] = drop
	details["drop_te"] = -stats.ChangeTE(base, today.mean, te)
	details["te_cm"] = te
	details["cv_pct"] = noise
	level, thr, name := "", 0.0, ""
	switch {
	case drop > alertT:
		level, thr, name = LevelAlert, alertT, alertName
	case drop > watchT:
		level, thr, name = LevelWatch, watchT, watchName
	default:
		return
	}
	details["threshold_pct"] = thr
	e.add(Flag{Rule: rule, Level: level, Title: "Jump height down",
		Value: f64(today.mean), Reference: f64(base), Threshold: f64(base * (1 - thr/100)),
		ThresholdName: rule + "." + name, Unit: "cm", Inputs: inputs, Details: details,
		Reason: fmt.Sprintf("CMJ %.1f cm, %.1f %% below the %d-day baseline of %.1f cm (%.1f typical errors); usual day-to-day noise %.1f %%; best today %.1f cm.%s",
			today.mean, drop, window, base, details["drop_te"], noise, today.best, laterNote)})
}

// pick returns the larger of two thresholds with the name of the setting
// it came from.
func pick(a float64, aName string, b float64, bName string) (float64, string) {
	if b > a {
		return b, bName
	}
	return a, aName
}
