package plan

import (
	"fmt"
	"math"
	"slices"
	"time"

	"cornerbook/server/flags/day"
	"cornerbook/server/records"
)

// Check ids: fixed in JSON, never shown on a screen.
const (
	CheckCampDates      = "camp_dates"
	CheckCampLength     = "camp_length"
	CheckWeeksCover     = "weeks_cover"
	CheckBuildRun       = "build_run"
	CheckRestSpar       = "rest_spar"
	CheckReferenceLoad  = "reference_load"
	CheckFirstWeekSpike = "first_week_spike"
	CheckSparPeakEarly  = "spar_peak_early"
	CheckStrengthResid  = "strength_residual"
	CheckSpeedResid     = "speed_residual"
	CheckTaperCut       = "taper_cut"
	CheckTaperLength    = "taper_length"
	CheckTravelRecovery = "travel_recovery"
	CheckPathNone       = "path_none"
	CheckPathFlat       = "path_flat"
	CheckPathRate       = "path_rate"
	CheckPathFinalWeek  = "path_final_week"
	CheckPathEnd        = "path_end"
)

// Published numbers the checks use.
const (
	// SpikeRatio: a week's load over 1.5 × the weeks before is the zone
	// Gabbett (2016) called the danger zone of the acute:chronic ratio.
	SpikeRatio = 1.5
	// PriorWeeks: the chronic load is the mean of the three weeks before
	// (the uncoupled ratio; Windt & Gabbett 2019).
	PriorWeeks = 3
	// MaxStrengthResidualDays: maximal strength keeps its effect for
	// 30 ± 5 days after its training stops (Issurin 2008).
	MaxStrengthResidualDays = 35
	// SpeedResidualDays: maximal speed keeps its effect 5 ± 3 days
	// (Issurin 2008): speed work within the last 8 days before the bout.
	SpeedResidualDays = 8
	// TaperMinDays, TaperMaxDays: the taper length that worked best in
	// Bosquet et al.'s 2007 meta-analysis.
	TaperMinDays, TaperMaxDays = 8, 14
	// JetLagZones: jet lag follows crossings of more than 3 time zones
	// (Janse van Rensburg et al. 2021).
	JetLagZones = 3
	// ZonesPerDayEast, ZonesPerDayWest: the body resets about 1 zone a day
	// after flying east and 1.5 after flying west (REFERENCES §14.4, a
	// rule of thumb read in secondary sources).
	ZonesPerDayEast = 1.0
	ZonesPerDayWest = 1.5
)

// Context is what the checks read beyond the bout itself.
type Context struct {
	// PriorWeeksAU are the athlete's logged weekly loads before camp
	// start (weeks with at least one session, oldest first); only the
	// last PriorWeeks count.
	PriorWeeksAU []float64
}

// CheckWith is Check with the athlete's logged weeks before camp.
func CheckWith(b records.Bout, th map[string]map[string]float64, ctx Context) []Issue {
	out := check(b, th)
	start, bout, err := campDays(b.CampStart, b.BoutDay)
	if err != nil || len(b.Weeks) == 0 {
		return out
	}
	return append(out, checkContent(b, start, bout, th, ctx)...)
}

// weekSpan is the first and last training day of week k (1-based) before
// the bout.
func weekSpan(start, bout day.Number, k int) (first, last day.Number) {
	first = start + day.Number(7*(k-1))
	last = min(first+6, bout-1)
	return
}

func hasID(e *records.Emphasis, ids ...string) bool {
	if e == nil {
		return false
	}
	for _, id := range ids {
		if slices.Contains(e.IDs, id) {
			return true
		}
	}
	return false
}

func checkContent(b records.Bout, start, bout day.Number, th map[string]map[string]float64, ctx Context) []Issue {
	var out []Issue
	add := func(check, field, level, format string, args ...any) {
		out = append(out, Issue{Check: check, Field: field, Level: level, Message: fmt.Sprintf(format, args...)})
	}
	ws := b.Weeks
	n := WeeksFor(start, bout)

	// first_week_spike: week 1's planned load against the logged weeks
	// before camp (uncoupled, Windt & Gabbett 2019), else the habitual
	// week; over 1.5 × is Gabbett's (2016) danger zone.
	if ref := b.ReferenceLoadAU; ref > 0 {
		if f, ok := Fraction(ws[0].Level, th); ok {
			planned := f * ref
			prior := ctx.PriorWeeksAU
			if len(prior) > PriorWeeks {
				prior = prior[len(prior)-PriorWeeks:]
			}
			base, what := ref, fmt.Sprintf("the %.0f AU habitual week (reference load)", ref)
			if len(prior) > 0 {
				sum := 0.0
				for _, p := range prior {
					sum += p
				}
				base = sum / float64(len(prior))
				what = fmt.Sprintf("the %.0f AU a week logged over the %d %s before camp", base, len(prior), plural(len(prior), "week", "weeks"))
			}
			if base > 0 && planned/base > SpikeRatio {
				add(CheckFirstWeekSpike, "body.weeks[0].level", LevelWatch,
					"Week 1 is planned %s, %.0f AU: %.2f × %s, over the %.1f × that marks a load spike (Gabbett 2016). A first week nearer the weeks before lets the camp build without a spike.",
					LevelWords(ws[0].Level), planned, planned/base, what, SpikeRatio)
			}
		}
	}

	// spar_peak_early: the week with most planned sparring in the first
	// third of the camp (common practice, no source: hard sparring peaks
	// in the back half, nearer the bout).
	peak, peakRounds, planned := 0, 0, 0
	for i, w := range ws {
		if w.SparRounds == nil {
			continue
		}
		planned++
		if *w.SparRounds > peakRounds {
			peak, peakRounds = i+1, *w.SparRounds
		}
	}
	if planned >= 3 && peakRounds > 0 && float64(peak) <= float64(n)/3 {
		add(CheckSparPeakEarly, fmt.Sprintf("body.weeks[%d].spar_rounds", peak-1), LevelInfo,
			"The most sparring, %d rounds, is planned in week %d of %d, in the first third of the camp; sparring usually peaks in the back half, nearer the bout (common practice).",
			peakRounds, peak, n)
	}

	// strength_residual: the last maximal-strength week ends more than
	// 35 days before the bout (Issurin 2008: 30 ± 5 days).
	lastMax := 0
	for i, w := range ws {
		if hasID(w.Strength, "max_strength") {
			lastMax = i + 1
		}
	}
	if lastMax > 0 {
		_, last := weekSpan(start, bout, lastMax)
		if gap := int(bout - last); gap > MaxStrengthResidualDays {
			add(CheckStrengthResid, fmt.Sprintf("body.weeks[%d].strength", lastMax-1), LevelWatch,
				"The last maximal-strength week (week %d) ends on %s, %d days before the bout: maximal strength keeps its effect about 30 ± 5 days after its training stops (Issurin 2008), so little of it may be left on the night. Plan some maximal-strength work within %d days of the bout.",
				lastMax, last.Words(), gap, MaxStrengthResidualDays)
		}
	}

	// speed_residual: no speed or plyometric emphasis in the last 8 days
	// (Issurin 2008: maximal speed 5 ± 3 days).
	content := false
	for _, w := range ws {
		if w.Strength != nil {
			content = true
		}
	}
	if content {
		from := bout - SpeedResidualDays
		found, lastWeek := false, 0
		for i, w := range ws {
			first, last := weekSpan(start, bout, i+1)
			if last < from || first > bout-1 {
				continue
			}
			lastWeek = i + 1
			if hasID(w.Strength, "speed", "plyometric") {
				found = true
			}
		}
		if !found && lastWeek > 0 {
			add(CheckSpeedResid, fmt.Sprintf("body.weeks[%d].strength", lastWeek-1), LevelWatch,
				"No speed or jump work is planned in the last %d days before the bout (%s to %s): speed keeps its effect only about 5 ± 3 days after its training stops (Issurin 2008).",
				SpeedResidualDays, from.Words(), (bout - 1).Words())
		}
	}

	// travel_recovery: more than 3 zones crossed with a planned level
	// above low in the days the body needs to adjust.
	lowFrac, _ := Fraction("low", th)
	for i, w := range ws {
		if w.Travel == nil {
			continue
		}
		j, err := Journey(*w.Travel)
		if err != nil || math.Abs(j.ShiftH) <= JetLagZones {
			continue
		}
		arrive, _ := day.Parse(j.ArriveDay)
		var heavy []string
		for d := arrive; d < arrive+day.Number(j.Days) && d < bout; d++ {
			if d < start {
				continue
			}
			k := int(d-start)/7 + 1
			if k > len(ws) {
				break
			}
			if f, ok := Fraction(ws[k-1].Level, th); ok && f > lowFrac {
				heavy = append(heavy, fmt.Sprintf("%s (week %d, %s)", d.Words(), k, LevelWords(ws[k-1].Level)))
			}
		}
		if len(heavy) == 0 {
			continue
		}
		add(CheckTravelRecovery, fmt.Sprintf("body.weeks[%d].travel", i), LevelWatch,
			"The journey from %s to %s arriving %s shifts the clock %s h (%s); the body needs about %d days to adjust (about %s zone a day %s; Janse van Rensburg et al. 2021), but %s %s planned above low. A lighter plan for those days lets the fighter adjust.",
			j.From, j.To, day.Words(j.ArriveDay), signed(j.ShiftH), j.Direction, j.Days, fmtRate(j.Rate), j.Direction, joinAnd(heavy), isAre(len(heavy)))
	}
	return out
}

// checkTaper reads the taper as the settled reading has it: only weeks
// planned at the taper level are taper weeks. It checks the taper's
// length and its load cut against the Bosquet et al. 2007 model.
func checkTaper(b records.Bout, bout day.Number, th map[string]map[string]float64) []Issue {
	var out []Issue
	add := func(check, field, level, threshold, format string, args ...any) {
		out = append(out, Issue{Check: check, Field: field, Level: level, Threshold: threshold, Message: fmt.Sprintf(format, args...)})
	}
	ws := b.Weeks
	start, _ := day.Parse(b.CampStart)
	minCut := param(th, records.RuleOffPlan, "taper_min_pct")
	maxCut := param(th, records.RuleOffPlan, "taper_max_pct")
	model := fmt.Sprintf("the Bosquet et al. 2007 meta-analysis: %d–%d days, load cut %.0f–%.0f %%, intensity kept", TaperMinDays, TaperMaxDays, minCut, maxCut)
	lastWeek := min(len(ws), WeeksFor(start, bout)) // the week holding the day before the bout
	var tapers []int
	for i, w := range ws {
		if w.Level == "taper" {
			tapers = append(tapers, i+1)
		}
	}
	last := ws[lastWeek-1]
	switch {
	case len(tapers) == 0:
		add(CheckTaperLength, fmt.Sprintf("body.weeks[%d].level", lastWeek-1), LevelInfo, "",
			"No week is planned as a taper: only a week planned at the taper level counts, and the last week before the bout (week %d) is planned %s. A taper worked best before competition in %s.",
			lastWeek, LevelWords(last.Level), model)
	case last.Level != "taper":
		add(CheckTaperLength, fmt.Sprintf("body.weeks[%d].level", lastWeek-1), LevelInfo, "",
			"The taper is planned in %s, not in the last week before the bout (week %d, planned %s).",
			weekList(tapers), lastWeek, LevelWords(last.Level))
	default:
		first := lastWeek
		for first > 1 && ws[first-2].Level == "taper" {
			first--
		}
		from, _ := weekSpan(start, bout, first)
		days := int(bout - from)
		if days < TaperMinDays || days > TaperMaxDays {
			add(CheckTaperLength, fmt.Sprintf("body.weeks[%d].level", first-1), LevelInfo, "",
				"The taper runs %d days (%s to %s, %s); tapers of %d–%d days worked best in %s.",
				days, from.Words(), (bout - 1).Words(), weekRange(first, lastWeek), TaperMinDays, TaperMaxDays, model)
		}
	}
	if cut, ok := TaperCut(ws, th); ok && (cut < minCut || cut > maxCut) {
		name, word := "taper_min_pct", "less"
		if cut > maxCut {
			name, word = "taper_max_pct", "more"
		}
		msg := fmt.Sprintf("The taper cuts load by %.0f %% of the reference week, %s than in %s.", cut, word, model)
		if ref := b.ReferenceLoadAU; ref > 0 {
			lo, hi := taperBand(ref, minCut, maxCut)
			frac := param(th, records.RuleOffPlan, "level_taper")
			msg = fmt.Sprintf("The taper plans %.0f AU a week, a %.0f %% cut from the %.0f AU reference week, %s than the %.0f–%.0f AU of %s.",
				frac*ref, cut, ref, word, lo, hi, model)
		}
		add(CheckTaperCut, fmt.Sprintf("body.weeks[%d].level", tapers[0]-1), LevelInfo, records.RuleOffPlan+"."+name, "%s", msg)
	}
	return out
}

// taperBand is the taper week's load band from a reference week: cut by
// maxCut (low end) to minCut (high end).
func taperBand(ref, minCut, maxCut float64) (lo, hi float64) {
	return ref * (1 - maxCut/100), ref * (1 - minCut/100)
}

// JourneyShift is a planned journey read from zone data.
type JourneyShift struct {
	From, To  string
	ArriveDay string // the arrival's calendar day at the destination
	// ShiftH is the destination's UTC offset minus the origin's, both at
	// the arrival instant, folded into −12…+12 h: what the body crosses
	// (positive east).
	ShiftH float64
	// ClockH is the same difference unfolded: what the clock shows.
	ClockH    float64
	Direction string  // "east" or "west" ("" for no shift)
	Rate      float64 // zones a day the body resets
	Days      int     // days the body needs: ⌈|shift| / rate⌉
}

// Journey reads a travel's shift from the zone database at the arrival
// instant — never fixed offsets, so summer time on either side counts.
func Journey(t records.Travel) (JourneyShift, error) {
	from, err := time.LoadLocation(t.FromZone)
	if err != nil {
		return JourneyShift{}, err
	}
	to, err := time.LoadLocation(t.ToZone)
	if err != nil {
		return JourneyShift{}, err
	}
	arr, err := time.Parse(time.RFC3339, t.ArriveAt)
	if err != nil {
		return JourneyShift{}, err
	}
	_, offFrom := arr.In(from).Zone()
	_, offTo := arr.In(to).Zone()
	clock := float64(offTo-offFrom) / 3600
	shift := clock
	for shift > 12 {
		shift -= 24
	}
	for shift < -12 {
		shift += 24
	}
	j := JourneyShift{From: t.FromZone, To: t.ToZone, ArriveDay: arr.In(to).Format(time.DateOnly), ShiftH: shift, ClockH: clock}
	switch {
	case shift > 0:
		j.Direction, j.Rate = "east", ZonesPerDayEast
	case shift < 0:
		j.Direction, j.Rate = "west", ZonesPerDayWest
	}
	if j.Rate > 0 {
		j.Days = int(math.Ceil(math.Abs(shift)/j.Rate - 1e-9))
	}
	return j, nil
}

func signed(h float64) string {
	if h > 0 {
		return fmt.Sprintf("+%g", h)
	}
	return fmt.Sprintf("%g", h)
}

func fmtRate(r float64) string { return fmt.Sprintf("%g", r) }

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}

func isAre(n int) string {
	if n == 1 {
		return "is"
	}
	return "are"
}

func weekRange(a, b int) string {
	if a == b {
		return fmt.Sprintf("week %d", a)
	}
	return fmt.Sprintf("weeks %d–%d", a, b)
}

func joinAnd(s []string) string {
	switch len(s) {
	case 0:
		return ""
	case 1:
		return s[0]
	}
	out := ""
	for i, x := range s[:len(s)-1] {
		if i > 0 {
			out += ", "
		}
		out += x
	}
	return out + " and " + s[len(s)-1]
}
