package flags

import (
	"fmt"
	"math"
	"time"

	"cornerbook/server/flags/day"
	"cornerbook/server/flags/stats"
)

// wellnessItems are the five items (1–5, 5 = best; McLean et al. 2010).
var wellnessItems = []string{"fatigue", "sleep", "soreness", "stress", "mood"}

func items(c *CheckinBody) [5]*int {
	return [5]*int{c.Fatigue, c.Sleep, c.Soreness, c.Stress, c.Mood}
}

// dayItems returns day d's five wellness items, each from the earliest
// check-in of the day (by at) that has it, and the check-ins used in
// time order.
func (e *engine) dayItems(d day.Number) (vals [5]*int, ids []string) {
	r := e.at(d)
	if r == nil {
		return
	}
	for i := range r.checkins { // in time order (newEngine)
		c := &r.checkins[i]
		used := false
		for k, v := range items(&c.body) {
			if v != nil && vals[k] == nil {
				vals[k], used = v, true
			}
		}
		if used {
			ids = append(ids, c.id)
		}
	}
	return
}

// dayWellness returns day d's wellness total (its five items as dayItems
// reads them), false unless all five are logged.
func (e *engine) dayWellness(d day.Number) (total float64, ids []string, ok bool) {
	vals, ids := e.dayItems(d)
	for _, v := range vals {
		if v == nil {
			return 0, nil, false
		}
		total += float64(*v)
	}
	return total, ids, true
}

// wellnessDrop: today's wellness total as a z-score against the previous
// window's totals; and any single item at its worst.
func (e *engine) wellnessDrop() {
	const rule = RuleWellnessDrop
	// Any single item of the day at the worst level.
	itemMin := int(e.param(rule, "item_min"))
	{
		vals, ids := e.dayItems(e.today)
		var worst []string
		for k, v := range vals {
			if v != nil && *v <= itemMin {
				worst = append(worst, wellnessItems[k])
			}
		}
		if len(worst) > 0 {
			e.add(Flag{Rule: rule, Level: LevelWatch, Title: "Wellness item at its worst", Value: f64(float64(itemMin)), Threshold: f64(float64(itemMin)),
				ThresholdName: rule + ".item_min", Unit: "points", Inputs: ids,
				Reason: fmt.Sprintf("Wellness item at its worst (%d of 5) today: %s.", itemMin, joinWords(worst))})
		}
	}
	total, ids, ok := e.dayWellness(e.today)
	if !ok {
		return
	}
	window := int(e.param(rule, "window_days"))
	minN := int(e.param(rule, "min_checkins"))
	var base []float64
	inputs := append([]string(nil), ids...)
	for d := e.today - day.Number(window); d < e.today; d++ {
		if t, bids, ok := e.dayWellness(d); ok {
			base = append(base, t)
			inputs = append(inputs, bids...)
		}
	}
	if len(base) < minN || len(base) < 2 {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: "Wellness baseline forming", Value: f64(total), Unit: "points", Inputs: inputs,
			Reason: fmt.Sprintf("Wellness %.0f of 25 today; baseline forming: %d of %d check-ins in the last %d days.", total, len(base), minN, window)})
		return
	}
	mean, sd := stats.Mean(base), stats.SD(base)
	sdUsed := math.Max(sd, e.param(rule, "sd_floor"))
	z := stats.Z(total, mean, sdUsed)
	level, name := "", ""
	switch {
	case z <= e.param(rule, "alert_z"):
		level, name = LevelAlert, "alert_z"
	case z <= e.param(rule, "watch_z"):
		level, name = LevelWatch, "watch_z"
	default:
		return
	}
	thrZ := e.param(rule, name)
	e.add(Flag{Rule: rule, Level: level, Title: "Wellness down", Value: f64(total), Reference: f64(mean), Threshold: f64(mean + thrZ*sdUsed),
		ThresholdName: rule + "." + name, Unit: "points", Inputs: inputs,
		Details: map[string]float64{"z": z, "sd": sd, "sd_used": sdUsed, "threshold_z": thrZ, "baseline_checkins": float64(len(base))},
		Reason: fmt.Sprintf("Wellness %.0f of 25, %.1f SD below the %d-day mean of %.1f (SD %.1f, %d check-ins).",
			total, -z, window, mean, sdUsed, len(base))})
}

// hydration: the day's highest urine specific gravity reading.
func (e *engine) hydration() {
	const rule = RuleHydration
	r := e.at(e.today)
	if r == nil {
		return
	}
	usg, id := 0.0, ""
	for _, c := range r.checkins {
		if c.body.USG != nil && *c.body.USG > usg {
			usg, id = *c.body.USG, c.id
		}
	}
	if id == "" {
		return
	}
	watch, alert := e.param(rule, "watch_usg"), e.param(rule, "alert_usg")
	f := Flag{Rule: rule, Title: "Concentrated urine", Value: f64(usg), Unit: "USG", Inputs: []string{id}, Caution: CautionHydration}
	switch {
	case usg > alert:
		f.Level, f.Threshold, f.ThresholdName = LevelAlert, f64(alert), rule+".alert_usg"
		f.Reason = fmt.Sprintf("Urine specific gravity %.3f, above %.3f.", usg, alert)
	case usg >= watch:
		f.Level, f.Threshold, f.ThresholdName = LevelWatch, f64(watch), rule+".watch_usg"
		f.Reason = fmt.Sprintf("Urine specific gravity %.3f, at or above %.3f.", usg, watch)
	default:
		return
	}
	e.add(f)
}

// missingCheckin: no check-in for the day by the configured local hour,
// from the athlete's first record through the bout day, then again from
// the next camp start. A check-in at any time of the day clears it; the
// hour only delays today's flag.
func (e *engine) missingCheckin() {
	const rule = RuleMissingCheckin
	if e.in.Now.IsZero() || !e.active || e.betweenCamps(e.today) {
		return // no record yet, or between a bout and the next camp
	}
	if r := e.at(e.today); r != nil && len(r.checkins) > 0 {
		return
	}
	loc := e.in.Location
	if loc == nil {
		loc = time.UTC
	}
	now := e.in.Now.In(loc)
	nowDay := day.Of(now)
	hour := e.param(rule, "hour")
	clock := float64(now.Hour()) + float64(now.Minute())/60
	if nowDay < e.today || (nowDay == e.today && clock < hour) {
		return // the day's check-in is not due yet
	}
	h := int(hour)
	m := int(math.Round((hour - float64(h)) * 60))
	e.add(Flag{Rule: rule, Level: LevelInfo, Title: "No morning check-in", Threshold: f64(hour), ThresholdName: rule + ".hour", Unit: "h",
		Reason: fmt.Sprintf("No morning check-in on %s by %02d:%02d camp time.", e.today.Words(), h, m)})
}
