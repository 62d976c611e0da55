package flags

import (
	"fmt"
	"math"
	"sort"
	"strconv"

	"cornerbook/server/flags/day"
)

// offPlan: the week's load so far, projected to the week's end, against
// the planned level; and a planned taper outside the 41–60 % cut.
func (e *engine) offPlan() {
	const rule = RuleOffPlan
	p := e.bout
	if p == nil || p.body.ReferenceLoadAU <= 0 {
		return
	}
	ref := p.body.ReferenceLoadAU
	// The plan's taper (weeks whose level is taper): one info on the plan
	// from camp start to the end of the last taper week when its cut is
	// outside the band.
	minCut, maxCut := e.param(rule, "taper_min_pct"), e.param(rule, "taper_max_pct")
	taperFrac := e.param(rule, "level_taper")
	cut := (1 - taperFrac) * 100
	var tapers []int
	for k, w := range p.weekByIndex {
		if w.Level == "taper" {
			tapers = append(tapers, k)
		}
	}
	sort.Ints(tapers)
	if n := len(tapers); n > 0 && p.hasCamp && (cut < minCut || cut > maxCut) {
		end := p.campStart + day.Number(7*tapers[n-1]-1)
		if e.today >= p.campStart && e.today <= end {
			lo, hi := TaperBand(ref, minCut, maxCut)
			thr, name, more := minCut, "taper_min_pct", "too little"
			if cut > maxCut {
				thr, name, more = maxCut, "taper_max_pct", "too much"
			}
			names := make([]string, n)
			for i, k := range tapers {
				names[i] = strconv.Itoa(k)
			}
			which := "week " + names[0]
			if n > 1 {
				which = "weeks " + joinWords(names)
			}
			e.add(Flag{Rule: rule, Level: LevelInfo, Title: "Taper cuts load " + more, Value: f64(cut), Threshold: f64(thr), ThresholdName: rule + "." + name,
				Unit: "%", Inputs: []string{p.id},
				Details: map[string]float64{"week": float64(tapers[0]), "taper_weeks": float64(n), "planned_au": taperFrac * ref, "band_low_au": lo, "band_high_au": hi},
				Reason: fmt.Sprintf("The planned taper (%s) cuts load by %.0f %% of the %.0f AU reference week (%.0f AU a week); a cut of %.0f–%.0f %% (%.0f–%.0f AU) worked best (Bosquet et al. 2007).",
					which, cut, ref, taperFrac*ref, minCut, maxCut, lo, hi)})
		}
	}
	// This week's load against its planned level, once the athlete has a
	// record.
	if !e.active {
		return
	}
	k, start, ok := p.week(e.today)
	if !ok {
		return
	}
	w, ok := p.weekByIndex[k]
	if !ok || w.Level == "" {
		return
	}
	planned := e.param(rule, "level_"+w.Level) * ref
	if planned <= 0 {
		return // a level with no fraction (or a zero one): nothing to compare
	}
	elapsed := int(e.today-start) + 1
	inputs := e.sessionIDs(start)
	if elapsed < int(e.param(rule, "min_days")) {
		e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: "Week load forming", Reference: f64(planned), Unit: "AU", Inputs: inputs,
			Reason: fmt.Sprintf("Week %d load forming: day %d of 7, planned %s week of %.0f AU.", k, elapsed, levelWords(w.Level), planned)})
		return
	}
	soFar := 0.0
	for _, l := range e.dailyLoads(elapsed) {
		soFar += l
	}
	projected := soFar * 7 / float64(elapsed)
	dev := (projected - planned) / planned * 100
	tol := e.param(rule, "tolerance_pct")
	if math.Abs(dev) <= tol {
		return
	}
	dir, thr := "above", planned*(1+tol/100)
	if dev < 0 {
		dir, thr = "below", planned*(1-tol/100)
	}
	e.add(Flag{Rule: rule, Level: LevelInfo, Title: "Week load " + dir + " the plan", Value: f64(projected), Reference: f64(planned), Threshold: f64(thr),
		ThresholdName: rule + ".tolerance_pct", Unit: "AU", Inputs: inputs,
		Details: map[string]float64{"so_far_au": soFar, "days": float64(elapsed), "deviation_pct": dev, "week": float64(k)},
		Reason: fmt.Sprintf("Week %d: %.0f AU in %s projects to %.0f AU, %.0f %% %s the planned %s week of %.0f AU (tolerance %.0f %%).",
			k, soFar, count(elapsed, "day", "days"), projected, math.Abs(dev), dir, levelWords(w.Level), planned, tol)})
}

// residualGap: days since the last session of a quality whose training
// effect fades (Issurin 2008), while the bout is ahead.
func (e *engine) residualGap() {
	const rule = RuleResidualGap
	p := e.bout
	if p == nil || !p.hasBoutDay || e.today >= p.boutDay {
		return
	}
	type quality struct {
		name   string
		title  string
		foci   []string
		param  string
		effect string
	}
	for _, q := range []quality{
		{"max strength", "Max strength", []string{"max_strength"}, "max_strength_days", "30 ± 5"},
		{"speed or plyometric", "Speed and plyometrics", []string{"speed", "plyometric"}, "speed_days", "5 ± 3"},
	} {
		limit := e.param(rule, q.param)
		var last session
		found := false
		for _, f := range q.foci {
			if s, ok := e.lastFocus[f]; ok && (!found || s.day > last.day) {
				last, found = s, true
			}
		}
		if found {
			gap := float64(e.today - last.day)
			if gap <= limit {
				continue
			}
			e.add(Flag{Rule: rule, Level: LevelInfo, Title: q.title + " not trained lately", Value: f64(gap), Threshold: f64(limit), ThresholdName: rule + "." + q.param,
				Unit: "days", Inputs: []string{last.id},
				Reason: fmt.Sprintf("%.0f days since the last %s session (%s), over %.0f; its training effect lasts about %s days.",
					gap, q.name, last.day.Words(), limit, q.effect)})
			continue
		}
		span := float64(e.historyDays() - 1)
		if span > limit {
			within := fmt.Sprintf("the %.0f days on record", span)
			if span >= LookbackDays {
				// No session in all the days the rule looks back over.
				span = LookbackDays
				within = fmt.Sprintf("the last %.0f days", span)
			}
			e.add(Flag{Rule: rule, Level: LevelInfo, Title: q.title + " not trained lately", Value: f64(span), Threshold: f64(limit), ThresholdName: rule + "." + q.param,
				Unit: "days", Details: map[string]float64{"lower_bound": 1},
				Reason: fmt.Sprintf("No %s session in %s, over %.0f; its training effect lasts about %s days.",
					q.name, within, limit, q.effect)})
			continue
		}
		e.forming(rule, q.title+" not trained yet", fmt.Sprintf("No %s session yet in the %s on record (window %s).", q.name, count(int(span), "day", "days"), count(int(limit), "day", "days")), nil)
	}
}
