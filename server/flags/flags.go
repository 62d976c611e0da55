// Package flags is Cornerbook's flag engine: for one athlete and one camp
// day it turns the athlete's records into the day's flags, each with a
// level, the numbers behind it, the thresholds it used, a plain-language
// reason and, where health is involved, a caution.
//
// The package is pure. It does no I/O and reads no clock: the day, the
// hub's time (for the check-in hour) and the records are passed in. Days
// are the records' own day strings (the camp's local day chosen on the
// device); windows count calendar days on those strings (package day) and
// never derive a day from a UTC timestamp.
//
// Flags are prompts for the coach's judgement. Where the data cannot yet
// support a rule, the rule says so with a "forming" flag instead of staying
// silent, so that "no flag" never means "not enough data".
//
// Statistics live in package stats and calendar arithmetic in package day;
// the rule functions here (rule_*.go) are small and each is tested against
// the rule as the product states it. Thresholds are the table in
// server/records (records.Defaults), overridden by Input.Settings.
//
// The settled readings of the rules (PRODUCT.md) hold here: the mass trend
// runs over the morning masses of the 42 days ending the day, before camp
// start included, and mass_loss_fast's slope is stated against it; a
// day's mass and each wellness item come from its earliest check-in (by
// at) carrying the field, and its usg is the day's highest; the day's
// earliest CMJ test is its monitoring test; a round is inside a stand-down
// only after the incident; missing_checkin and mass_loss_fast are silent
// between a bout day and the next camp start.
//
// Choices made where the rule leaves room (common practice, no source):
//   - The mass trend skips days without a mass (they are not filled).
//   - The default path's knee is never above the start mass, and a camp
//     shorter than the final phase goes straight to the limit. Explicit
//     knots replace the default path; before the first knot and after the
//     last the path is flat.
//   - cut_at_risk projects at a constant percentage per week (the
//     geometric path) and takes the projected mass as the body mass.
//   - Daily load sums session records (rpe × minutes, or the stored
//     load_au). Intervals records are not added: their RPE is normally
//     the same session's sRPE, and counting both would double the load.
//   - jump_drop does not mix measuring methods in one baseline; its
//     typical error is the floored CV times the baseline.
//   - spar_on_hold never uses a stand-down shorter than the published
//     minimum (30/60/90 days), whatever the settings say. Sparring inside
//     a stand-down stays an alert until a decision naming the rule is
//     recorded after it (a whole-day decision acknowledges it that day
//     only).
//   - A decision naming a rule wins over a whole-day decision for that
//     rule's flags.
//   - residual_gap with no session of the quality on record reports the
//     days on record as a lower bound once they exceed the limit.
package flags

import (
	"fmt"
	"sort"
	"time"

	"cornerbook/server/medical"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// Levels, most serious first.
const (
	LevelAlert = "alert"
	LevelWatch = "watch"
	LevelInfo  = "info"
)

// Statuses.
const (
	StatusFlag    = "flag"
	StatusForming = "forming" // not enough data yet for the rule to judge
)

// Rule ids (fixed by the product; settings and decisions name them).
const (
	RuleJumpDrop       = records.RuleJumpDrop
	RuleMassAbovePath  = records.RuleMassAbovePath
	RuleMassLossFast   = records.RuleMassLossFast
	RuleCutAtRisk      = records.RuleCutAtRisk
	RuleSparDensity    = records.RuleSparDensity
	RuleSparSpacing    = records.RuleSparSpacing
	RuleSparOnHold     = records.RuleSparOnHold
	RuleLoadSpike      = records.RuleLoadSpike
	RuleMonotony       = records.RuleMonotony
	RuleWellnessDrop   = records.RuleWellnessDrop
	RuleHydration      = records.RuleHydration
	RuleMissingCheckin = records.RuleMissingCheckin
	RuleOffPlan        = records.RuleOffPlan
	RuleResidualGap    = records.RuleResidualGap
	RuleWeighIn        = records.RuleWeighIn
)

// Rules lists every rule id in a stable order.
var Rules = []string{
	RuleJumpDrop, RuleMassAbovePath, RuleMassLossFast, RuleCutAtRisk,
	RuleSparDensity, RuleSparSpacing, RuleSparOnHold, RuleLoadSpike,
	RuleMonotony, RuleWellnessDrop, RuleHydration, RuleMissingCheckin,
	RuleOffPlan, RuleResidualGap, RuleWeighIn,
}

// Input is everything one athlete-day evaluation needs.
type Input struct {
	Day      string          // YYYY-MM-DD, the camp's local day being evaluated
	Now      time.Time       // hub time, for missing_checkin's hour (read in Location); zero skips that rule
	Location *time.Location  // camp time zone; nil means UTC
	Athlete  devsync.Record  // the athlete record; its ID is the athlete id
	Bout     *devsync.Record // current bout (nil if none)
	// Bouts are all of the athlete's bouts (Bout among them or not): the
	// spans between camps, when missing_checkin and mass_loss_fast are
	// silent, run from one bout day to the next camp start. Bout records
	// in Records count too.
	Bouts []devsync.Record
	// FirstDay is the day of the athlete's first record of a kind that
	// marks activity (not athlete, settings, bout or note), when the caller
	// knows it from beyond Records' window or kinds; "" to read it from
	// Records. missing_checkin runs from it, and the daily load series
	// (load_spike, monotony, residual_gap) from it or From, the later.
	FirstDay string
	// From is the first day from which Records hold every session ("" for
	// the whole history).
	From string
	// Settings are merged thresholds overriding the defaults
	// (rule → parameter → value); absent entries take DefaultThresholds.
	Settings map[string]map[string]float64
	// Records are this athlete's live records (all kinds) over at least the
	// 42 days ending Day. The load ratio runs from the earliest record
	// given, and stand-downs need every incident and clearance, so the
	// caller passes those from the start of the athlete's history. Records
	// after Day, deleted records and records of other athletes are ignored.
	Records []devsync.Record
}

// Flag is one finding for one athlete on one day.
type Flag struct {
	Athlete string `json:"athlete"`
	Day     string `json:"day"`
	Rule    string `json:"rule"`
	Level   string `json:"level"`  // info | watch | alert
	Status  string `json:"status"` // "flag" or "forming" (not enough data yet — never reported as clean)
	// Title is a short heading in the coach's words, unique among one
	// athlete-day's flags (never a rule id or a setting key).
	Title string `json:"title"`
	// Value, Reference and Threshold share Unit. Reference is what the
	// value is compared against (a baseline or a plan), nil where the rule
	// has none; Threshold is the crossing point the level came from.
	Value         *float64 `json:"value"`
	Reference     *float64 `json:"reference"`
	Threshold     *float64 `json:"threshold"`
	ThresholdName string   `json:"threshold_name"` // which setting was used, e.g. "jump_drop.watch_pct"
	Unit          string   `json:"unit"`
	Reason        string   `json:"reason"`            // one sentence with the numbers
	Inputs        []string `json:"inputs"`            // record ids used
	Caution       string   `json:"caution,omitempty"` // for mass, hydration, head impact and load
	// Details carries extra numbers (e.g. best_cm, drop_te, strain).
	Details  map[string]float64 `json:"details,omitempty"`
	Decision *DecisionRef       `json:"decision,omitempty"` // the coach's acknowledgement, if recorded that day
	// Restriction is set on the flag of a running stand-down (spar_on_hold
	// at level info), on every day it runs.
	Restriction *Restriction `json:"restriction,omitempty"`

	ownDecision bool // the rule chose Decision itself
}

// Restriction describes a stand-down in force: what started it, the rule
// that sets its minimum and what ends it.
type Restriction struct {
	Incident     string `json:"incident"`      // the incident record id
	IncidentType string `json:"incident_type"` // head_knock, knockdown, stoppage, knockout, knockout_loc
	StartedDay   string `json:"started_day"`   // YYYY-MM-DD
	StartedAt    string `json:"started_at"`    // RFC 3339, the incident's at
	// Rule names, in words, what sets the minimum, e.g. "Knockout: at
	// least 60 days".
	Rule string `json:"rule"`
	// EarliestEnd is the first day the dated minimum no longer holds
	// (YYYY-MM-DD), "" when only a clearance ends it.
	EarliestEnd string `json:"earliest_end"`
	Until       string `json:"until"` // what ends it in every case
	// RTS is the incident's graded return to sport so far (Patricios et
	// al. 2023): the last step and when, the next and its earliest time,
	// the early steps' heart-rate caps from the fighter's age. Every
	// screen that shows the stand-down shows it from here.
	RTS *medical.Ladder `json:"rts,omitempty"`
}

// Decision scopes.
const (
	ScopeFlag = "flag" // a decision naming the flag's rule
	ScopeDay  = "day"  // a decision for the athlete's whole day (no rule)
)

// DecisionRef points at the decision record that acknowledged a flag.
type DecisionRef struct {
	ID    string `json:"id"`
	Note  string `json:"note"`
	By    string `json:"by"`
	At    string `json:"at"`    // the decision record's at (RFC 3339)
	Scope string `json:"scope"` // "flag" (named this flag's rule) or "day" (the whole day)
}

// Compute evaluates every rule for in.Athlete on in.Day. The result is
// sorted most serious first (alert, watch, info, then forming), then by
// rule id. A Day that is not a calendar date gives no flags.
func Compute(in Input) []Flag {
	e, ok := newEngine(&in)
	if !ok {
		return nil
	}
	if !e.active {
		// Nothing of the athlete's on record yet on or before the day: no
		// load, sparring or check-in series exists, so only the plan speaks.
		e.massAbovePath()
		e.cutAtRisk()
		e.offPlan()
		e.attachDecisions()
		uniqueTitles(e.out)
		sortFlags(e.out)
		return e.out
	}
	e.jumpDrop()
	e.wellnessDrop()
	e.massAbovePath()
	e.massLossFast()
	e.cutAtRisk()
	e.sparDensity()
	e.sparSpacing() // after jump_drop and wellness_drop: it reads their alerts
	e.sparOnHold()
	e.loadSpike()
	e.monotony()
	e.hydration()
	e.missingCheckin()
	e.offPlan()
	e.residualGap()
	e.weighInRules()
	e.attachDecisions()
	uniqueTitles(e.out)
	sortFlags(e.out)
	return e.out
}

// Rank orders flags for every list a coach reads: a stand-down in force
// first (a restriction, not a prompt), then sparring logged during one,
// then alert, watch, info, and "forming" last. Lower ranks come first.
func Rank(f *Flag) int {
	switch {
	case f.Restriction != nil:
		return -2
	case f.Rule == RuleSparOnHold && f.Level == LevelAlert && f.Status == StatusFlag:
		return -1
	}
	return rank(f)
}

func rank(f *Flag) int {
	if f.Status == StatusForming {
		return 3
	}
	switch f.Level {
	case LevelAlert:
		return 0
	case LevelWatch:
		return 1
	}
	return 2
}

// uniqueTitles keeps one athlete-day's titles distinct: a stand-down
// title repeated (two incidents of one type) names its start day; any
// other repeat is numbered.
func uniqueTitles(fs []Flag) {
	seen := map[string]int{}
	for i := range fs {
		seen[fs[i].Title]++
	}
	for i := range fs {
		f := &fs[i]
		if seen[f.Title] < 2 {
			continue
		}
		if f.Restriction != nil {
			f.Title += " on " + f.Restriction.StartedDay
		}
	}
	used := map[string]int{}
	for i := range fs {
		f := &fs[i]
		used[f.Title]++
		if n := used[f.Title]; n > 1 {
			f.Title = fmt.Sprintf("%s (%d)", f.Title, n)
		}
	}
}

func sortFlags(fs []Flag) {
	sort.SliceStable(fs, func(i, j int) bool {
		ri, rj := Rank(&fs[i]), Rank(&fs[j])
		if ri != rj {
			return ri < rj
		}
		return fs[i].Rule < fs[j].Rule
	})
}
