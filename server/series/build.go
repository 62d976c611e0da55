package series

import (
	"encoding/json"
	"math"
	"sort"
	"strconv"
	"time"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	"cornerbook/server/flags/stats"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

type checkin struct {
	at   time.Time
	body flags.CheckinBody
}

type jump struct {
	method  string
	heights []float64
	at      time.Time
}

type round struct {
	spar      bool
	intensity int
}

// dayData is one day's records, in the order given.
type dayData struct {
	checkins []checkin
	jumps    []jump
	rounds   []round
	load     float64
}

type builder struct {
	in       *flags.Input
	from, to day.Number
	lo       day.Number // first indexed day
	days     []dayData  // days[i] is day lo+i
	first    day.Number // the athlete's first record day (load history), or to+1 if none
	hasFirst bool

	bout       *records.Bout
	campStart  day.Number
	hasCamp    bool
	weighIn    day.Number
	hasWeighIn bool
	weeks      map[int]records.Week
}

func (b *builder) param(rule, name string) float64 {
	if m, ok := b.in.Settings[rule]; ok {
		if v, ok := m[name]; ok {
			return v
		}
	}
	return records.Defaults[rule][name]
}

func dayOf(s string) (day.Number, bool) {
	if s == "" {
		return 0, false
	}
	d, err := day.Parse(s)
	return d, err == nil
}

func newBuilder(in *flags.Input, from, to day.Number) *builder {
	b := &builder{in: in, from: from, to: to, first: to + 1}
	athlete := in.Athlete.ID
	own := func(r *devsync.Record) bool { return !r.Deleted && (athlete == "" || r.Athlete == athlete) }
	// The athlete's first record day within the engine's history bound, as
	// the load ratio counts days from it.
	for i := range in.Records {
		r := &in.Records[i]
		if !own(r) || r.Kind == records.KindAthlete || r.Kind == records.KindBout || r.Kind == records.KindSettings || r.Kind == records.KindNote {
			continue
		}
		if d, ok := dayOf(r.Day); ok && d <= to && d < b.first {
			b.first, b.hasFirst = d, true
		}
	}
	// The load series of a day runs from at most flags.LookbackDays
	// before it, as in the engine: nothing older is read.
	if b.hasFirst && b.first < from-flags.LookbackDays {
		b.first = from - flags.LookbackDays
	}
	b.lo = from - recentDays + 1
	if b.hasFirst && b.first < b.lo {
		b.lo = b.first
	}
	b.days = make([]dayData, int(to-b.lo)+1)
	for i := range in.Records {
		r := &in.Records[i]
		if !own(r) {
			continue
		}
		d, ok := dayOf(r.Day)
		if !ok || d < b.lo || d > to {
			continue
		}
		dd := &b.days[d-b.lo]
		switch r.Kind {
		case records.KindCheckin:
			var c flags.CheckinBody
			if json.Unmarshal(r.Body, &c) == nil {
				t, _ := time.Parse(time.RFC3339, r.At) // unreadable: the zero time, as in the engine
				dd.checkins = append(dd.checkins, checkin{t, c})
			}
		case records.KindJump:
			var j flags.JumpBody
			if json.Unmarshal(r.Body, &j) == nil && (j.Test == "" || j.Test == "cmj") {
				if h := flags.ValidHeights(&j); len(h) > 0 {
					t, _ := time.Parse(time.RFC3339, r.At) // unreadable: the zero time, as in the engine
					dd.jumps = append(dd.jumps, jump{j.Method, h, t})
				}
			}
		case records.KindRound:
			var rb flags.RoundBody
			if json.Unmarshal(r.Body, &rb) == nil {
				dd.rounds = append(dd.rounds, round{rb.Activity == "spar", rb.Intensity})
			}
		case records.KindSession:
			var s flags.SessionBody
			if json.Unmarshal(r.Body, &s) == nil {
				dd.load += s.Load()
			}
		}
	}
	if in.Bout != nil && !in.Bout.Deleted {
		var bt records.Bout
		if json.Unmarshal(in.Bout.Body, &bt) == nil {
			b.bout = &bt
			b.campStart, b.hasCamp = dayOf(bt.CampStart)
			b.weighIn, b.hasWeighIn = flags.WeighInDay(bt.WeighIn, bt.WeighInZone) // the venue's day
			b.weeks = map[int]records.Week{}
			for _, w := range bt.Weeks {
				b.weeks[w.Week] = w
			}
		}
	}
	return b
}

// at returns day d's data, nil outside the index.
func (b *builder) at(d day.Number) *dayData {
	if d < b.lo || d > b.to {
		return nil
	}
	return &b.days[d-b.lo]
}

// seen returns day d's data as the engine evaluating day ref sees it:
// nothing older than its indexed window.
func (b *builder) seen(ref, d day.Number) *dayData {
	if d > ref || d <= ref-recentDays {
		return nil
	}
	return b.at(d)
}

// morningMass is the day's earliest check-in (by its time) with a mass.
func (dd *dayData) morningMass() (float64, bool) {
	best, found := 0.0, false
	var bestAt time.Time
	for _, c := range dd.checkins {
		if c.body.MassKg == nil || !(*c.body.MassKg > 0) {
			continue
		}
		if !found || c.at.Before(bestAt) {
			best, bestAt, found = *c.body.MassKg, c.at, true
		}
	}
	return best, found
}

// masses lists the morning masses from day lo through ref, oldest first, as
// the engine evaluating ref sees them.
func (b *builder) masses(ref, lo day.Number) (days []day.Number, kg []float64) {
	if min := ref - recentDays + 1; lo < min {
		lo = min
	}
	for d := lo; d <= ref; d++ {
		if dd := b.at(d); dd != nil {
			if m, ok := dd.morningMass(); ok {
				days, kg = append(days, d), append(kg, m)
			}
		}
	}
	return
}

// trend is the mass_above_path trend on day d: the morning masses of the
// 42 days ending d, before camp start included.
func (b *builder) trend(d day.Number) (float64, bool) {
	_, kg := b.masses(d, d-recentDays+1)
	if len(kg) == 0 {
		return 0, false
	}
	return stats.EWMA(kg, stats.Lambda(b.param(records.RuleMassAbovePath, "ewma_n"))), true
}

// path is the planned path the mass rule judges against: the coach's
// knots, else the default path when the bout has a limit and start mass.
func (b *builder) path() []flags.Knot {
	bt := b.bout
	if bt == nil {
		return nil
	}
	var knots []flags.Knot
	for _, k := range bt.Path {
		if d, ok := dayOf(k.Day); ok && k.MassKg > 0 {
			knots = append(knots, flags.Knot{Day: d, MassKg: k.MassKg})
		}
	}
	if len(knots) > 0 {
		sort.Slice(knots, func(i, j int) bool { return knots[i].Day < knots[j].Day })
		return knots
	}
	if !b.hasCamp || !b.hasWeighIn || bt.LimitKg <= 0 || bt.StartMassKg <= 0 || b.campStart > b.weighIn {
		return nil
	}
	factor := b.param(records.RuleMassAbovePath, "factor_day_before")
	if bt.WeighInType == "same_day" {
		factor = b.param(records.RuleMassAbovePath, "factor_same_day")
	}
	return flags.DefaultPath(b.campStart, b.weighIn, bt.StartMassKg, bt.LimitKg, factor, int(b.param(records.RuleMassAbovePath, "final_days")))
}

// pathAt is the planned path's mass on day d, from camp start to the
// weigh-in; null outside it or without a path.
func (b *builder) pathAt(path []flags.Knot, d day.Number) *float64 {
	if path == nil || !b.hasCamp || !b.hasWeighIn || d < b.campStart || d > b.weighIn {
		return nil
	}
	return f64(flags.PathAt(path, d))
}

// PathOnly is Build's Mass.PathKg for from..to without the rest of the
// series (no record is read): the planned path on to a bout still ahead.
func PathOnly(in flags.Input, from, to day.Number) []*float64 {
	b := newBuilder(&flags.Input{Athlete: in.Athlete, Bout: in.Bout, Settings: in.Settings}, from, to)
	path := b.path()
	out := make([]*float64, int(to-from)+1)
	for i := range out {
		out[i] = b.pathAt(path, from+day.Number(i))
	}
	return out
}

func (b *builder) mass(s *Series) {
	m := &s.Mass
	if b.bout != nil && b.bout.LimitKg > 0 {
		m.LimitKg = f64(b.bout.LimitKg)
	}
	if b.hasWeighIn {
		m.WeighInDay = b.weighIn.String()
	}
	path := b.path()
	window := int(b.param(records.RuleMassLossFast, "window_days"))
	minN := int(b.param(records.RuleMassLossFast, "min_checkins"))
	rate := b.param(records.RuleCutAtRisk, "rate_pct_week")
	var slopeP, rateP []*float64
	if b.hasWeighIn {
		slopeP, rateP = make([]*float64, len(s.Days)), make([]*float64, len(s.Days))
		m.Projections = []Projection{
			{Method: ProjectSlope, Label: "Weigh-in mass if the trend keeps the last " + itoa(window) + " days' rate (least-squares slope of morning mass)", WeighInKg: slopeP},
			{Method: ProjectRate, Label: "Weigh-in mass at a steady " + fmtPct(rate) + " %/week from the trend", RatePctWeek: f64(rate), WeighInKg: rateP},
		}
	}
	for i := range s.Days {
		d := b.from + day.Number(i)
		if dd := b.at(d); dd != nil {
			if kg, ok := dd.morningMass(); ok {
				m.MorningKg[i] = f64(kg)
			}
		}
		m.PathKg[i] = b.pathAt(path, d)
		trend, ok := b.trend(d)
		if !ok {
			continue
		}
		m.TrendKg[i] = f64(trend)
		// mass_loss_fast: slope over the window ending d, as % of the trend.
		days, kg := b.masses(d, d-day.Number(window)+1)
		slope := math.NaN()
		if len(kg) >= minN {
			x := make([]float64, len(days))
			for j, dj := range days {
				x[j] = float64(dj - days[0])
			}
			slope = stats.Slope(x, kg)
			m.LossPctWeek[i] = f64(-slope * 7 / trend * 100)
		}
		if b.hasWeighIn && d <= b.weighIn {
			ahead := float64(b.weighIn - d)
			if !math.IsNaN(slope) {
				slopeP[i] = f64(trend + slope*ahead)
			}
			rateP[i] = f64(flags.GeometricMass(trend, rate, ahead/7))
		}
	}
}

// firstTest is the day's monitoring test: its earliest CMJ test by at
// (later tests of the day enter no value).
func firstTest(dd *dayData) (jump, bool) {
	if dd == nil || len(dd.jumps) == 0 {
		return jump{}, false
	}
	first := dd.jumps[0]
	for _, j := range dd.jumps[1:] {
		if j.at.Before(first.at) {
			first = j
		}
	}
	return first, true
}

// jumpOn is day d's CMJ, its monitoring test, if compatible with method
// (an empty method on either side matches).
func jumpOn(dd *dayData, method string) (mean, best float64, ok bool) {
	j, ok := firstTest(dd)
	if !ok || (method != "" && j.method != "" && j.method != method) {
		return 0, 0, false
	}
	for _, h := range j.heights {
		mean += h
		best = math.Max(best, h)
	}
	return mean / float64(len(j.heights)), best, true
}

// methodOf is the measuring method of a test day: its monitoring test's.
func methodOf(dd *dayData) (string, bool) {
	j, ok := firstTest(dd)
	return j.method, ok
}

func (b *builder) jump(s *Series) {
	j := &s.Jump
	window := int(b.param(records.RuleJumpDrop, "window_days"))
	minDays := int(b.param(records.RuleJumpDrop, "min_days"))
	j.MinTestDays = minDays
	floor := b.param(records.RuleJumpDrop, "cv_floor_pct")
	// The method in force: that of the latest test day up to the day.
	method := ""
	for d := b.lo; d < b.from; d++ {
		if m, ok := methodOf(b.at(d)); ok {
			method = m
		}
	}
	daily := make([]float64, 0, window)
	for i := range s.Days {
		d := b.from + day.Number(i)
		if m, ok := methodOf(b.at(d)); ok {
			method = m
		}
		if mean, best, ok := jumpOn(b.at(d), method); ok {
			j.MeanCm[i], j.BestCm[i] = f64(mean), f64(best)
		}
		daily = daily[:0]
		for k := d - day.Number(window); k < d; k++ {
			if mean, _, ok := jumpOn(b.seen(d, k), method); ok {
				daily = append(daily, mean)
			}
		}
		j.TestDays[i] = len(daily)
		if len(daily) < minDays || len(daily) < 2 {
			continue
		}
		base := stats.Mean(daily)
		cv := stats.CVPercent(daily)
		noise := math.Max(cv, floor)
		if math.IsNaN(cv) {
			noise = floor
		}
		j.BaselineCm[i], j.NoisePct[i] = f64(base), f64(noise)
		j.BandLowCm[i], j.BandHighCm[i] = f64(base*(1-noise/100)), f64(base*(1+noise/100))
	}
}

func (b *builder) load(s *Series) {
	l := &s.Load
	acuteN, chronicN := b.param(records.RuleLoadSpike, "acute_n"), b.param(records.RuleLoadSpike, "chronic_n")
	minDays := int(b.param(records.RuleLoadSpike, "min_days"))
	l.WatchAt, l.LowAt = b.param(records.RuleLoadSpike, "watch_ratio"), b.param(records.RuleLoadSpike, "low_ratio")
	l.RatioMinDays = minDays
	if bt := b.bout; bt != nil && b.hasCamp {
		for i := range s.Days {
			d := b.from + day.Number(i)
			if d < b.campStart {
				continue
			}
			w, ok := b.weeks[int(d-b.campStart)/7+1]
			if !ok || w.Level == "" {
				continue
			}
			l.WeekLevel[i] = w.Level
			if frac := b.param(records.RuleOffPlan, "level_"+w.Level); frac > 0 && bt.ReferenceLoadAU > 0 {
				l.PlannedWeekAU[i] = f64(frac * bt.ReferenceLoadAU)
			}
		}
	}
	if !b.hasFirst {
		return
	}
	la, lc := stats.Lambda(acuteN), stats.Lambda(chronicN)
	for i := range s.Days {
		d := b.from + day.Number(i)
		if d < b.first {
			continue
		}
		// Each day's averages run as the engine runs them for that day:
		// seeded with the load of the first record's day or of the day
		// flags.LookbackDays before, whichever is later.
		start := max(b.first, d-flags.LookbackDays)
		var acute, chronic float64
		for e := start; e <= d; e++ {
			x := b.at(e).load
			if e == start {
				acute, chronic = x, x // both seeded with the first day's load
				continue
			}
			// One step of the engine's recursion: the same function, so
			// the same floating-point result.
			acute = stats.EWMASeeded([]float64{x}, la, acute)
			chronic = stats.EWMASeeded([]float64{x}, lc, chronic)
		}
		l.DailyAU[i], l.AcuteAU[i], l.ChronicAU[i] = f64(b.at(d).load), f64(acute), f64(chronic)
		if int(d-start)+1 >= minDays && chronic > 0 {
			l.Ratio[i] = f64(acute / chronic)
		}
	}
}

func (b *builder) spar(s *Series) {
	p := &s.Sparring
	window := int(b.param(records.RuleSparDensity, "window_days"))
	hi := int(b.param(records.RuleSparDensity, "hard_intensity"))
	capDefault := int(b.param(records.RuleSparDensity, "cap_rounds"))
	p.HardCap = int(b.param(records.RuleSparDensity, "hard_cap_rounds"))
	p.AlertFactor = b.param(records.RuleSparDensity, "alert_factor")
	p.WindowDays = window
	count := func(d day.Number) (all, hard int) {
		dd := b.at(d)
		if dd == nil {
			return 0, 0
		}
		for _, r := range dd.rounds {
			if r.spar {
				all++
				if r.intensity >= hi {
					hard++
				}
			}
		}
		return
	}
	for i := range s.Days {
		d := b.from + day.Number(i)
		p.Rounds[i], p.HardRounds[i] = count(d)
		for k := d - day.Number(window) + 1; k <= d; k++ {
			if k <= d-recentDays {
				continue
			}
			a, h := count(k)
			p.RollingRounds[i] += a
			p.RollingHard[i] += h
		}
		p.CapRounds[i], p.HardCaps[i] = capDefault, p.HardCap
		if b.bout != nil && b.hasCamp && d >= b.campStart {
			if w, ok := b.weeks[int(d-b.campStart)/7+1]; ok {
				switch { // the week's planned rounds stand over the older flat cap
				case w.SparRounds != nil:
					p.CapRounds[i] = *w.SparRounds
				case w.SparCapRounds != nil:
					p.CapRounds[i] = *w.SparCapRounds
				}
				if w.HardRounds != nil {
					p.HardCaps[i] = *w.HardRounds
				}
			}
		}
	}
}

// wellnessTotal is the day's total: each of the five items from the
// earliest check-in of the day (by at) that has it; false unless all five
// are logged.
func wellnessTotal(dd *dayData) (float64, bool) {
	if dd == nil {
		return 0, false
	}
	var vals [5]*int
	var at [5]time.Time
	for _, c := range dd.checkins {
		for k, v := range [5]*int{c.body.Fatigue, c.body.Sleep, c.body.Soreness, c.body.Stress, c.body.Mood} {
			if v != nil && (vals[k] == nil || c.at.Before(at[k])) {
				vals[k], at[k] = v, c.at
			}
		}
	}
	total := 0.0
	for _, v := range vals {
		if v == nil {
			return 0, false
		}
		total += float64(*v)
	}
	return total, true
}

func (b *builder) wellness(s *Series) {
	w := &s.Wellness
	window := int(b.param(records.RuleWellnessDrop, "window_days"))
	minN := int(b.param(records.RuleWellnessDrop, "min_checkins"))
	w.MinCheckins = minN
	watchZ, alertZ := b.param(records.RuleWellnessDrop, "watch_z"), b.param(records.RuleWellnessDrop, "alert_z")
	sdFloor := b.param(records.RuleWellnessDrop, "sd_floor")
	base := make([]float64, 0, window)
	for i := range s.Days {
		d := b.from + day.Number(i)
		if t, ok := wellnessTotal(b.at(d)); ok {
			w.Total[i] = f64(t)
		}
		base = base[:0]
		for k := d - day.Number(window); k < d; k++ {
			if t, ok := wellnessTotal(b.seen(d, k)); ok {
				base = append(base, t)
			}
		}
		w.Checkins[i] = len(base)
		if len(base) < minN || len(base) < 2 {
			continue
		}
		mean, sd := stats.Mean(base), math.Max(stats.SD(base), sdFloor)
		w.Mean[i], w.WatchBelow[i], w.AlertBelow[i] = f64(mean), f64(mean+watchZ*sd), f64(mean+alertZ*sd)
	}
}

func itoa(n int) string { return strconv.Itoa(n) }

// fmtPct writes a number without trailing zeros (1, 0.7, 1.25).
func fmtPct(v float64) string { return strconv.FormatFloat(v, 'f', -1, 64) }
