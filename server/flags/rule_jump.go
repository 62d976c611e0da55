package flags

import (
	"fmt"
	"math"

	"cornerbook/server/flags/day"
	"cornerbook/server/flags/stats"
)

// jumpDay is one day's CMJ value: the mean of its valid attempts.
type jumpDay struct {
	mean, best float64
	n          int
	ids        []string
}

// jumpOn returns day d's CMJ attempts from jumps compatible with method
// (an empty method on either side matches; methods are not mixed in one
// baseline: flight-time and force-plate heights differ by about 1.7 cm).
func (e *engine) jumpOn(d day.Number, method string) (jumpDay, bool) {
	r := e.at(d)
	if r == nil {
		return jumpDay{}, false
	}
	var j jumpDay
	sum := 0.0
	for _, jr := range r.jumps {
		if method != "" && jr.method != "" && jr.method != method {
			continue
		}
		for _, h := range jr.heights {
			sum += h
			j.n++
			j.best = math.Max(j.best, h)
		}
		j.ids = append(j.ids, jr.id)
	}
	if j.n == 0 {
		return jumpDay{}, false
	}
	j.mean = sum / float64(j.n)
	return j, true
}

// jumpDrop: today's CMJ (mean of valid attempts) against the mean of the
// daily values over the window before today; noise is the CV of those
// daily values with a floor.
func (e *engine) jumpDrop() {
	const rule = RuleJumpDrop
	method := ""
	if r := e.at(e.today); r != nil {
		for _, j := range r.jumps {
			if j.method != "" {
				method = j.method
				break
			}
		}
	}
	today, ok := e.jumpOn(e.today, method)
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
	if len(daily) < minDays || len(daily) < 2 {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: "Jump baseline forming",
			Value: f64(today.mean), Unit: "cm", Inputs: inputs, Details: details,
			Reason: fmt.Sprintf("CMJ %.1f cm (best %.1f cm); baseline forming: %d of %d test days in the last %d days.",
				today.mean, today.best, len(daily), minDays, window)})
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
		Reason: fmt.Sprintf("CMJ %.1f cm, %.1f %% below the %d-day baseline of %.1f cm (%.1f typical errors); usual day-to-day noise %.1f %%; best today %.1f cm.",
			today.mean, drop, window, base, details["drop_te"], noise, today.best)})
}

// pick returns the larger of two thresholds with the name of the setting
// it came from.
func pick(a float64, aName string, b float64, bName string) (float64, string) {
	if b > a {
		return b, bName
	}
	return a, aName
}
