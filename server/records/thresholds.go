package records

import (
	"slices"
	"strings"
)

// The settings' thresholds as registry fields: one field per parameter of
// every flag rule (the Rules table), with its limits, unit and words, so
// the app's vocabulary and checks and the generated probes hold a
// threshold's limits as they hold every other field's.

// RuleNames are the flag rules in the coach's words.
var RuleNames = map[string]string{
	RuleJumpDrop:       "Jump height under baseline",
	RuleMassAbovePath:  "Mass above the planned path",
	RuleMassLossFast:   "Mass coming off quickly",
	RuleCutAtRisk:      "Large cut left for the final week",
	RuleSparDensity:    "Sparring volume over the cap",
	RuleSparSpacing:    "Hard sparring close together",
	RuleSparOnHold:     "Sparring stand-down",
	RuleLoadSpike:      "Load rising fast (acute:chronic)",
	RuleMonotony:       "Little day-to-day variation in load",
	RuleWellnessDrop:   "Wellness under usual",
	RuleHydration:      "Concentrated urine (USG)",
	RuleMissingCheckin: "No morning check-in",
	RuleOffPlan:        "Week away from the planned load",
	RuleResidualGap:    "Quality not trained lately",
	RuleWeighIn:        "Weigh-in over its cap or large regain",
}

// thresholdFields lists the threshold fields in the order the hub checks
// them (rule id, then parameter name). A whole-number parameter is a step
// of 1 with the hub's words for a fraction.
func thresholdFields() []Field {
	rules := slices.Clone(Rules)
	slices.SortFunc(rules, func(a, b Rule) int { return strings.Compare(a.ID, b.ID) })
	var out []Field
	for _, r := range rules {
		params := slices.Clone(r.Params)
		slices.SortFunc(params, func(a, b Param) int { return strings.Compare(a.Name, b.Name) })
		for _, p := range params {
			f := Field{Path: "body.thresholds." + r.ID + "." + p.Name, Label: RuleNames[r.ID] + ": " + p.Help, Unit: p.Unit,
				Min: f64(p.Min), Max: f64(p.Max)}
			if p.Whole {
				f.Whole, f.Step = true, 1
				f.StepWords = "must be a whole number of " + p.Unit + "; got {got}"
			}
			out = append(out, f)
		}
	}
	return out
}

// VocabRule is a flag rule as the app's checks and screens see it: its
// id, its name in the coach's words and the names of its parameters, in
// table order (a threshold naming another parameter is refused).
type VocabRule struct {
	ID     string   `json:"id"`
	Name   string   `json:"name"` // in the coach's words
	Params []string `json:"params"`
}

func vocabRules() []VocabRule {
	out := make([]VocabRule, len(Rules))
	for i, r := range Rules {
		out[i] = VocabRule{ID: r.ID, Name: RuleNames[r.ID], Params: make([]string, len(r.Params))}
		for j, p := range r.Params {
			out[i].Params[j] = p.Name
		}
	}
	return out
}
