// Package plan builds and checks a fighter's camp plan: the default
// week-by-week load levels and sparring caps for a camp's length, the
// planned mass path, and the plain-words issues a coach should see before
// the camp starts (a path that needs a fast loss, a taper outside the
// published band, weeks that do not cover the camp, and so on).
//
// The package is pure: no I/O and no clock; days and bouts are passed in.
// It reads its numbers from the flag thresholds (records.Defaults, or the
// merged settings a caller passes), so the plan it builds is the one the
// off_plan, spar_density and mass rules judge against.
//
// Choices made here (common practice, no source, unless a source is named):
//   - The camp's training weeks run from camp_start to the day before the
//     bout: ceil(days/7) weeks, week 1 starting on camp_start. A plan may
//     also carry the week holding the bout day.
//   - Step loading repeats medium, medium_heavy, heavy, low: a lighter
//     week every fourth week. The final week is the taper; when it holds
//     fewer than 4 training days, the week before it is a taper too, so the
//     taper lasts 8–13 days (Bosquet et al. 2007 found about two weeks,
//     8–14 days, best).
//   - The taper's load is level_taper × the reference week (the off_plan
//     fraction, 0.5 by default: a 50 % cut, inside Bosquet's 41–60 %).
//   - The sparring cap is spar_density.cap_rounds (30) in a loading week,
//     cap × level_taper (15) in a taper week — sparring volume comes down
//     with the rest of the load while some hard rounds keep the fighter
//     sharp — and 0 in a rest week.
//   - Mass checks measure a segment's loss as a share of its starting mass
//     per week (REFERENCES.md §6.1: 70.0 → 68.6 kg in a week is 2.0 %), and
//     leave the final days before the weigh-in (mass_loss_fast.final_days)
//     to the acute plan, judged against the cut_at_risk levels instead.
package plan

import (
	"fmt"
	"math"
	"strings"
	"time"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// Issue levels.
const (
	LevelInfo  = "info"
	LevelWatch = "watch"
)

// Issue is one thing a coach should look at in a camp plan.
type Issue struct {
	// Check is the check's fixed id (first_week_spike, taper_cut, …);
	// screens show Message, never the id.
	Check string `json:"check"`
	// Field is the bout body field the issue is about, as a JSON path in
	// the form record validation uses ("body.weeks[7].level", "body.path").
	Field   string `json:"field"`
	Level   string `json:"level"` // "info" or "watch"
	Message string `json:"message"`
	// Threshold names the setting the issue was judged against, e.g.
	// "mass_loss_fast.alert_pct_week"; empty where none applies.
	Threshold string `json:"threshold,omitempty"`
	// Caution is shown with issues about body mass.
	Caution string `json:"caution,omitempty"`
}

// Cycle is the step-loading order of the default plan: three building
// weeks, then a lighter one.
var Cycle = []string{"medium", "medium_heavy", "heavy", "low"}

// MinTaperDays is the fewest training days the final week may hold before
// the week ahead of it is planned as a taper too.
const MinTaperDays = 4

// param returns rule.name from the thresholds, else the default.
func param(th map[string]map[string]float64, rule, name string) float64 {
	if m, ok := th[rule]; ok {
		if v, ok := m[name]; ok {
			return v
		}
	}
	return records.Defaults[rule][name]
}

// Fraction is the planned load of a level as a multiple of the reference
// week (the off_plan level_* settings); false for an unknown level.
func Fraction(level string, th map[string]map[string]float64) (float64, bool) {
	if _, ok := records.ParamOf(records.RuleOffPlan, "level_"+level); !ok {
		return 0, false
	}
	return param(th, records.RuleOffPlan, "level_"+level), true
}

// SparCap is the default sparring cap, in rounds per week, for a level:
// spar_density.cap_rounds, scaled by level_taper in a taper week, 0 in a
// rest week.
func SparCap(level string, th map[string]map[string]float64) int {
	capRounds := param(th, records.RuleSparDensity, "cap_rounds")
	switch level {
	case "rest":
		return 0
	case "taper":
		return int(math.Round(capRounds * param(th, records.RuleOffPlan, "level_taper")))
	}
	return int(math.Round(capRounds))
}

// campDays parses the camp's dates and returns its training days
// (camp_start to the day before the bout).
func campDays(campStart, boutDay string) (start, bout day.Number, err error) {
	start, err = day.Parse(campStart)
	if err != nil {
		return 0, 0, devsync.Invalid("body.camp_start", "must be a calendar day written YYYY-MM-DD; got %q", campStart)
	}
	bout, err = day.Parse(boutDay)
	if err != nil {
		return 0, 0, devsync.Invalid("body.bout_day", "must be a calendar day written YYYY-MM-DD; got %q", boutDay)
	}
	switch n := int(bout - start); {
	case n < 1:
		return 0, 0, devsync.Invalid("body.bout_day", "is %s, not after the camp start %s: a plan needs at least one training day", boutDay, campStart)
	case n > records.MaxCampDays:
		return 0, 0, devsync.Invalid("body.bout_day", "is %d days after the camp start; a camp is at most %d days — check the year", n, records.MaxCampDays)
	}
	return start, bout, nil
}

// WeeksFor is the number of planned weeks a camp needs: ceil(training
// days / 7), the training days running from camp start to the day before
// the bout.
func WeeksFor(start, bout day.Number) int { return (int(bout-start) + 6) / 7 }

// DefaultWeeks is the default week plan for a camp with the product's
// default thresholds (see DefaultWeeksFor).
func DefaultWeeks(campStart, boutDay string) ([]records.Week, error) {
	return DefaultWeeksFor(campStart, boutDay, nil)
}

// DefaultWeeksFor builds the default week plan: step loading in Cycle
// order (a lighter week every fourth week), a taper in the final week (and
// the week before it when the final week holds fewer than MinTaperDays
// training days), and each week's default sparring cap (SparCap). th are
// the merged thresholds in force (nil for the defaults). An error is a
// *devsync.FieldError naming body.camp_start or body.bout_day.
func DefaultWeeksFor(campStart, boutDay string, th map[string]map[string]float64) ([]records.Week, error) {
	start, bout, err := campDays(campStart, boutDay)
	if err != nil {
		return nil, err
	}
	n := WeeksFor(start, bout)
	if n >= GenMinWeeks && n <= GenMaxWeeks {
		gen, err := Generate(campStart, boutDay, th)
		if err != nil {
			return nil, err
		}
		weeks := make([]records.Week, len(gen))
		for i, g := range gen {
			weeks[i] = g.Week
		}
		return weeks, nil
	}
	lastDays := int(bout-start) - 7*(n-1) // training days in the final week
	taperFrom := n
	if lastDays < MinTaperDays && n > 1 {
		taperFrom = n - 1
	}
	weeks := make([]records.Week, n)
	for i := range weeks {
		k := i + 1
		level := Cycle[i%len(Cycle)]
		if k >= taperFrom {
			level = "taper"
		}
		c := SparCap(level, th)
		weeks[i] = records.Week{Week: k, Level: level, SparCapRounds: &c}
	}
	return weeks, nil
}

// TaperCut is the planned load cut of the taper week, in % of the
// reference week: (1 − level_taper) × 100, exactly as the off_plan rule
// measures it (the reference week is the bout's reference_load_au, the
// heavy level). ok is false when no week is a taper.
func TaperCut(weeks []records.Week, th map[string]map[string]float64) (pct float64, ok bool) {
	for _, w := range weeks {
		if w.Level == "taper" {
			return (1 - param(th, records.RuleOffPlan, "level_taper")) * 100, true
		}
	}
	return 0, false
}

// weighInDay is the weigh-in's calendar day at the venue: the wall-clock
// date of its RFC 3339 time, as the flag engine reads it.
func weighInDay(b records.Bout) (day.Number, bool) {
	if t, err := time.Parse(time.RFC3339, b.WeighIn); err == nil {
		return day.Of(t), true
	}
	d, err := day.Parse(b.WeighIn)
	return d, err == nil
}

// Path is the bout's planned mass path with the default thresholds (see
// PathFor).
func Path(b records.Bout) []flags.Knot { return PathFor(b, nil) }

// PathFor is the planned mass path the mass_above_path rule judges
// against: the coach's knots (sorted, those with a day and a mass), else
// the product's default path (flags.DefaultPath: start mass at camp start,
// limit × factor_day_before or × factor_same_day final_days before the
// weigh-in, then the limit on the weigh-in day). Nil when the bout has no
// limit (limit_kg 0), no start mass or unreadable dates.
func PathFor(b records.Bout, th map[string]map[string]float64) []flags.Knot {
	var knots []flags.Knot
	for _, k := range b.Path {
		if d, err := day.Parse(k.Day); err == nil && k.MassKg > 0 {
			knots = append(knots, flags.Knot{Day: d, MassKg: k.MassKg})
		}
	}
	if len(knots) > 0 {
		sortKnots(knots)
		return knots
	}
	start, err := day.Parse(b.CampStart)
	wi, ok := weighInDay(b)
	if err != nil || !ok || b.LimitKg <= 0 || b.StartMassKg <= 0 || wi < start {
		return nil
	}
	return flags.DefaultPath(start, wi, b.StartMassKg, b.LimitKg, factor(b, th), int(param(th, records.RuleMassAbovePath, "final_days")))
}

func sortKnots(ks []flags.Knot) {
	for i := 1; i < len(ks); i++ { // insertion sort: paths have a handful of knots
		for j := i; j > 0 && ks[j].Day < ks[j-1].Day; j-- {
			ks[j], ks[j-1] = ks[j-1], ks[j]
		}
	}
}

// factor is the default path's final-phase factor for the bout's weigh-in type.
func factor(b records.Bout, th map[string]map[string]float64) float64 {
	if b.WeighInType == "same_day" {
		return param(th, records.RuleMassAbovePath, "factor_same_day")
	}
	return param(th, records.RuleMassAbovePath, "factor_day_before")
}

func weekList(ks []int) string {
	s := make([]string, len(ks))
	for i, k := range ks {
		s[i] = fmt.Sprint(k)
	}
	switch len(s) {
	case 0:
		return ""
	case 1:
		return "week " + s[0]
	}
	return "weeks " + strings.Join(s[:len(s)-1], ", ") + " and " + s[len(s)-1]
}

func levelNames(ws []records.Week) string {
	s := make([]string, len(ws))
	for i, w := range ws {
		s[i] = strings.ReplaceAll(w.Level, "_", "-")
	}
	return strings.Join(s, ", ")
}
