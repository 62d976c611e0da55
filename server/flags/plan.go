package flags

import (
	"encoding/json"
	"math"
	"sort"
	"time"

	"cornerbook/server/flags/day"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// plan is a bout record read for the rules.
type plan struct {
	id          string
	body        boutBody
	campStart   day.Number
	hasCamp     bool
	weighIn     day.Number // the venue's calendar day of the weigh-in
	hasWeighIn  bool
	boutDay     day.Number
	hasBoutDay  bool
	sameDay     bool
	knots       []Knot // explicit path, sorted by day; nil for the default path
	weekByIndex map[int]weekBody
}

// Knot is one point of a planned mass path.
type Knot struct {
	Day    day.Number
	MassKg float64
}

func parsePlan(r *devsync.Record) *plan {
	p := &plan{id: r.ID}
	if json.Unmarshal(r.Body, &p.body) != nil {
		return nil
	}
	b := &p.body
	p.campStart, p.hasCamp = dayOf(b.CampStart)
	p.boutDay, p.hasBoutDay = dayOf(b.BoutDay)
	p.weighIn, p.hasWeighIn = WeighInDay(b.WeighIn, b.WeighInZone)
	p.sameDay = b.WeighInType == "same_day"
	for _, k := range b.Path {
		if d, ok := dayOf(k.Day); ok && k.MassKg > 0 {
			p.knots = append(p.knots, Knot{d, k.MassKg})
		}
	}
	sort.Slice(p.knots, func(i, j int) bool { return p.knots[i].Day < p.knots[j].Day })
	p.weekByIndex = map[int]weekBody{}
	for i, w := range b.Weeks {
		w.pos = i
		p.weekByIndex[w.Week] = w
	}
	return p
}

// WeighInDay is the calendar day of a weigh-in at its venue: the date in
// the venue's zone when one is named (as entry validation reads it),
// otherwise the wall-clock date of its RFC 3339 time (its own offset); a
// bare date is taken as written.
func WeighInDay(weighIn, zone string) (day.Number, bool) {
	t, err := time.Parse(time.RFC3339, weighIn)
	if err != nil {
		return dayOf(weighIn)
	}
	if zone != "" {
		if loc, err := time.LoadLocation(zone); err == nil {
			t = t.In(loc)
		}
	}
	return day.Of(t), true
}

// massReady reports whether the plan has what the mass rules need.
func (p *plan) massReady() bool {
	return p != nil && p.hasCamp && p.hasWeighIn && p.body.LimitKg > 0 && p.body.StartMassKg > 0 && p.campStart <= p.weighIn
}

// week returns the plan week containing d (week 1 starts on camp start),
// its first day, and whether d falls in the camp.
func (p *plan) week(d day.Number) (k int, start day.Number, ok bool) {
	if p == nil || !p.hasCamp || d < p.campStart {
		return 0, 0, false
	}
	k = int(d-p.campStart)/7 + 1
	return k, p.campStart + day.Number(7*(k-1)), true
}

// weekLevel is the planned level of the week containing d ("" if none).
func (p *plan) weekLevel(d day.Number) string {
	k, _, ok := p.week(d)
	if !ok {
		return ""
	}
	return p.weekByIndex[k].Level
}

// DefaultPath is the product's default planned mass path: a straight line
// from the start mass at camp start to limit × factor, final days before
// the weigh-in, then straight to the limit on the weigh-in day. The knee is
// never above the start mass (a fighter already near the limit is not
// planned to gain), and a camp shorter than the final phase goes straight
// to the limit.
func DefaultPath(campStart, weighIn day.Number, startKg, limitKg, factor float64, finalDays int) []Knot {
	knee := weighIn - day.Number(finalDays)
	kneeKg := math.Min(startKg, limitKg*factor)
	if knee <= campStart {
		return []Knot{{campStart, startKg}, {weighIn, limitKg}}
	}
	return []Knot{{campStart, startKg}, {knee, kneeKg}, {weighIn, limitKg}}
}

// PathAt interpolates a path linearly between knots (sorted by day); before
// the first knot it holds the first mass, after the last the last mass.
// NaN for an empty path.
func PathAt(knots []Knot, d day.Number) float64 {
	if len(knots) == 0 {
		return math.NaN()
	}
	if d <= knots[0].Day {
		return knots[0].MassKg
	}
	for i := 1; i < len(knots); i++ {
		a, b := knots[i-1], knots[i]
		if d <= b.Day {
			if b.Day == a.Day {
				return b.MassKg
			}
			f := float64(d-a.Day) / float64(b.Day-a.Day)
			return a.MassKg + f*(b.MassKg-a.MassKg)
		}
	}
	return knots[len(knots)-1].MassKg
}

// path returns the plan's path: the coach's knots if any, else the default.
func (e *engine) path() []Knot {
	p := e.bout
	if len(p.knots) > 0 {
		return p.knots
	}
	factor := e.param(RuleMassAbovePath, "factor_day_before")
	if p.sameDay {
		factor = e.param(RuleMassAbovePath, "factor_same_day")
	}
	return DefaultPath(p.campStart, p.weighIn, p.body.StartMassKg, p.body.LimitKg, factor, int(e.param(RuleMassAbovePath, "final_days")))
}

// GeometricMass is the mass after weeks at a constant loss of ratePct per
// week: m0 · (1 − r)^weeks (the constant-percentage path).
func GeometricMass(m0, ratePct, weeks float64) float64 {
	return m0 * math.Pow(1-ratePct/100, weeks)
}

// WeeksNeeded is how many weeks a constant loss of ratePct per week takes
// from m0 to target: ln(target/m0) / ln(1 − r).
func WeeksNeeded(m0, target, ratePct float64) float64 {
	return math.Log(target/m0) / math.Log(1-ratePct/100)
}

// WeeklyLossPct is a loss from one mass to another over days, as a
// percentage of the first mass per week (positive for a loss).
func WeeklyLossPct(fromKg, toKg float64, days float64) float64 {
	return (fromKg - toKg) / fromKg * 100 * 7 / days
}

// StandDown is the minimum stand-down after an incident (Neidecker et al.
// 2019): Days > 0 for a dated minimum; Dated false for a suspected
// concussion, which runs until a clearance whatever the date. Applies is
// false for incident types without a stand-down (an injury).
type StandDown struct {
	Days    int
	Dated   bool
	Applies bool
}

// StandDownFor returns the stand-down of an incident type with the given
// minimum days per type (the spar_on_hold settings).
func StandDownFor(kind string, stoppage, knockout, knockoutLOC int) StandDown {
	switch kind {
	case "head_knock", "knockdown":
		return StandDown{Applies: true}
	case "stoppage":
		return StandDown{Days: stoppage, Dated: true, Applies: true}
	case "knockout":
		return StandDown{Days: knockout, Dated: true, Applies: true}
	case "knockout_loc":
		return StandDown{Days: knockoutLOC, Dated: true, Applies: true}
	}
	return StandDown{}
}

// StandDownEnd is the first day the minimum stand-down no longer holds
// (incident day + days), and false when there is no date (until clearance
// only) or no stand-down.
func StandDownEnd(kind, incidentDay string) (string, bool) {
	s := StandDownFor(kind, 30, 60, 90)
	d, err := day.Parse(incidentDay)
	if !s.Dated || err != nil {
		return "", false
	}
	return (d + day.Number(s.Days)).String(), true
}

// TaperBand is the taper-week load band: the reference weekly load cut by
// maxCutPct (low end) to minCutPct (high end); Bosquet et al. 2007 found
// 41–60 % volume cuts best.
func TaperBand(referenceAU, minCutPct, maxCutPct float64) (lowAU, highAU float64) {
	return referenceAU * (1 - maxCutPct/100), referenceAU * (1 - minCutPct/100)
}

// HeightFromFlight is the jump height in cm from flight time in ms by the
// flight-time method, h = g·t²/8 (records.JumpHeightCm, g = records.G).
func HeightFromFlight(ms float64) float64 { return records.JumpHeightCm(ms) }

// ValidHeights lists a jump's valid attempts in cm, with the ranges entry
// validation accepts (REFERENCES §1.2): from flight times (200–1000 ms)
// when the mat gave them — the hub stores the heights derived from them
// too, and a 1000 ms flight is 122.6 cm — else from typed heights
// (4.9–122.6 cm).
func ValidHeights(b *JumpBody) []float64 {
	var out []float64
	if len(b.FlightMs) > 0 {
		for _, ms := range b.FlightMs {
			if ms >= records.MinFlightMs && ms <= records.MaxFlightMs {
				out = append(out, HeightFromFlight(ms))
			}
		}
		return out
	}
	for _, h := range b.HeightsCm {
		if h >= records.MinHeightCm && h <= records.MaxHeightCm {
			out = append(out, h)
		}
	}
	return out
}
