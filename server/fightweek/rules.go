// Package fightweek computes a fighter's last days before the bout: the
// weigh-in rule sets a coach picks per bout (kept as data, each with its
// source and how sure that source is), the morning mass a week before the
// official weigh-in, the acute loss to the official mass, the regain from
// it to the fight-day mass, the hours from the official weigh-in to the
// bout in zoned times, and each check weight and fight-day weigh-in
// against its cap.
//
// The package is pure: no I/O and no clock; records and the bout are
// passed in. It shows numbers and never prescribes a cut: every figure it
// gives is a prompt for the coach's judgement, the medical team's plan and
// the sanctioning body's rules (REFERENCES.md §6.6).
package fightweek

import (
	"fmt"
	"math"
	"strings"

	"cornerbook/server/records"
)

// Rules is a bout's weigh-in rules (the bout's `rules` field; the type
// lives with the record format in server/records, which also validates it).
type (
	Rules       = records.WeighInRules
	CheckWeight = records.CheckWeight
	FightDayCap = records.FightDayCap
)

// How sure a preset's source is, after the tags of REFERENCES.md.
const (
	SureVerified  = "verified"  // read in the rule or paper itself [V]
	SureSecondary = "secondary" // read only in a secondary or news copy [V2]
)

// SureWords says in a coach's words how sure a source is.
func SureWords(tag string) string {
	switch tag {
	case SureVerified:
		return "read in the published rule; its current version may differ"
	case SureSecondary:
		return "read only in a secondary copy of the rule; check it before relying on it"
	}
	return "source not checked"
}

// CautionRules goes with every preset: rules change and bodies differ.
const CautionRules = "Check the sanctioning body's current rules for this bout before relying on these numbers; " +
	"bodies change their rules and a commission may add its own."

// Preset is a named set of weigh-in rules a coach can pick for a bout.
type Preset struct {
	ID   string `json:"id"`
	Name string `json:"name"` // in a coach's words
	// WeighInType is the weigh-in the scheme assumes: day_before or same_day.
	WeighInType string `json:"weigh_in_type"`
	Rules       Rules  `json:"rules"`
	Summary     string `json:"summary"` // the rules in words
	Source      string `json:"source"`
	Sure        string `json:"sure"`
	Caution     string `json:"caution"`
}

func pct(v float64) *float64 { return &v }

// Presets are the weigh-in schemes of REFERENCES.md §14.1 and the amateur
// same-day weigh-in. They are named by what they ask, not by the body that
// asks it, since the coach picks the rule that the bout's contract names.
var Presets = []Preset{
	{
		ID: "check_weights_30_14_7", Name: "Check weights at 30, 14 and 7 days; fight day ≤ 10 % over the weigh-in mass",
		WeighInType: "day_before",
		Rules: Rules{Preset: "check_weights_30_14_7", CheckWeights: []CheckWeight{
			{DaysBefore: 30, OverLimitPct: 10}, {DaysBefore: 14, OverLimitPct: 5}, {DaysBefore: 7, OverLimitPct: 3}},
			FightDay: &FightDayCap{OverOfficialPct: pct(10)}},
		Source: "A professional body's check-weight programme announced in 2019; " + // REFERENCES §14.1
			"the fight-day cap is 10 % over the official weigh-in mass.",
		Sure: SureVerified,
	},
	{
		ID: "fight_day_10lb", Name: "Second weigh-in on fight day, at most 10 lb over the limit",
		WeighInType: "day_before",
		Rules:       Rules{Preset: "fight_day_10lb", FightDay: &FightDayCap{OverLimitLb: pct(10)}},
		Source:      "A professional body's rule: a second weigh-in 08:00–10:00 on the day of the bout.", // REFERENCES §14.1, §6.3
		Sure:        SureSecondary,
	},
	{
		ID: "fight_night_10pct", Name: "Fight-night weight check, gain over 10 % of the weigh-in mass noted",
		WeighInType: "day_before",
		Rules:       Rules{Preset: "fight_night_10pct", FightDay: &FightDayCap{OverOfficialPct: pct(10)}},
		Source: "A state commission's plan of 2017: a fight-night weight check; a gain above 10 % may lead to a " +
			"recommendation to move up a class; IV rehydration banned since 2016.", // REFERENCES §14.1
		Sure: SureVerified,
	},
	{
		ID: "amateur_same_day", Name: "Amateur: weigh-in on the day of the bout",
		WeighInType: "same_day",
		Rules:       Rules{Preset: "amateur_same_day"},
		Source:      "Amateur boxing weighs in on the day of the bout (Reale et al. 2017: weigh-ins 3–24 h before competition in Olympic combat sports).", // REFERENCES §14.1, §6.2
		Sure:        SureVerified,
	},
}

func init() {
	for i := range Presets {
		Presets[i].Summary = RulesWords(Presets[i].Rules)
		Presets[i].Caution = CautionRules
	}
}

// PresetByID returns the preset with that id.
func PresetByID(id string) (Preset, bool) {
	for _, p := range Presets {
		if p.ID == id {
			return p, true
		}
	}
	return Preset{}, false
}

// RulesWords states a rule set in a coach's words.
func RulesWords(r Rules) string {
	var parts []string
	for _, c := range r.CheckWeights {
		parts = append(parts, fmt.Sprintf("%d days out ≤ %s %% over the limit", c.DaysBefore, num(c.OverLimitPct)))
	}
	if f := r.FightDay; f != nil {
		switch {
		case f.OverLimitLb != nil:
			parts = append(parts, fmt.Sprintf("fight day ≤ %s lb over the limit", num(*f.OverLimitLb)))
		case f.OverOfficialPct != nil:
			parts = append(parts, fmt.Sprintf("fight day ≤ %s %% over the official weigh-in mass", num(*f.OverOfficialPct)))
		}
	}
	if len(parts) == 0 {
		return "Official weigh-in only."
	}
	s := strings.Join(parts, "; ")
	return strings.ToUpper(s[:1]) + s[1:] + "."
}

// num prints a rule's number without trailing zeros (10, 2.5).
func num(v float64) string {
	if v == math.Trunc(v) {
		return fmt.Sprintf("%.0f", v)
	}
	return strings.TrimRight(strings.TrimRight(fmt.Sprintf("%.2f", v), "0"), ".")
}

// Problem is a field that cannot be used, with the reason.
type Problem struct {
	Field  string // JSON path, e.g. "at"
	Reason string
}

// Cautions go with every fight-week number and flag (REFERENCES.md §6.6;
// the wording is Cornerbook's). They defer to the medical team and the
// sanctioning body and never suggest losing faster.
var Cautions = []string{
	"These numbers are a prompt for the coach's judgement, never a reason to cut faster. " +
		"Any acute weight loss is planned and supervised by a sports dietitian and a physician, " +
		"within the sanctioning body's rules and local law.",
	"Rapid weight loss is common in combat sports and has killed athletes; " +
		"a loss of about 5 % of body mass within a week has raised markers of kidney stress in most studies reviewed.",
	"Never use diuretics, laxatives, vomiting, saunas or sweat suits, or fluid restriction in the heat. " +
		"No dehydration-based cutting for minors.",
}
