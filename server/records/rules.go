package records

// Flag rule ids and their editable parameters. The flag engine reads its
// thresholds from here (Defaults, merged with a camp's and an athlete's
// settings by Resolve); settings records are validated against the same
// table, so a threshold a coach can type is one the engine reads.

// Flag rule ids, fixed by the product.
const (
	RuleJumpDrop       = "jump_drop"
	RuleMassAbovePath  = "mass_above_path"
	RuleMassLossFast   = "mass_loss_fast"
	RuleCutAtRisk      = "cut_at_risk"
	RuleSparDensity    = "spar_density"
	RuleSparSpacing    = "spar_spacing"
	RuleSparOnHold     = "spar_on_hold"
	RuleLoadSpike      = "load_spike"
	RuleMonotony       = "monotony"
	RuleWellnessDrop   = "wellness_drop"
	RuleHydration      = "hydration"
	RuleMissingCheckin = "missing_checkin"
	RuleOffPlan        = "off_plan"
	RuleResidualGap    = "residual_gap"
	RuleWeighIn        = "weigh_in" // check weights and fight-day weigh-ins against the bout's rules; regain
)

// Param is one editable threshold of a flag rule.
type Param struct {
	Name    string  `json:"name"`
	Default float64 `json:"default"`
	Unit    string  `json:"unit,omitempty"` // "%", "days", "kg", "rounds", "z", "" for a plain number
	// Min and Max bound what a settings record may set. For medical
	// stand-downs Min is the published minimum: a coach may lengthen them,
	// never shorten them.
	Min   float64 `json:"min"`
	Max   float64 `json:"max"`
	Whole bool    `json:"whole,omitempty"` // a count of days, rounds or check-ins
	Help  string  `json:"help"`
}

// Rule is a flag rule and its parameters.
type Rule struct {
	ID     string  `json:"id"`
	Params []Param `json:"params"`
}

func value(name string, def float64, unit string, lo, hi float64, help string) Param {
	return Param{Name: name, Default: def, Unit: unit, Min: lo, Max: hi, Help: help}
}

func whole(name string, def float64, unit string, lo, hi float64, help string) Param {
	return Param{Name: name, Default: def, Unit: unit, Min: lo, Max: hi, Whole: true, Help: help}
}

// Rules lists every flag rule with its parameters. Each default is the
// value of PRODUCT.md "Flag rules"; the sources of those defaults are in
// REFERENCES.md (named per rule below). Bounds are plausibility limits
// (common practice, no source) except the stand-down minimums.
var Rules = []Rule{
	// Claudino et al. 2017 (mean of attempts); thresholds common practice
	// anchored on typical CMJ noise (Markovic et al. 2004).
	{RuleJumpDrop, []Param{
		whole("window_days", 28, "days", 7, 90, "days before the day that form the baseline"),
		whole("min_days", 5, "days", 3, 30, "test days needed before the baseline is used"),
		value("cv_floor_pct", 2, "%", 0, 20, "smallest day-to-day noise assumed"),
		value("watch_pct", 5, "%", 1, 50, "drop below baseline that starts a watch"),
		value("watch_cv", 2, "× CV", 0, 10, "drop, in multiples of the noise, that starts a watch"),
		value("alert_pct", 10, "%", 1, 50, "drop below baseline that starts an alert"),
		value("alert_cv", 3, "× CV", 0, 10, "drop, in multiples of the noise, that starts an alert"),
	}},
	// Trend and path: common practice; 1 % ≈ 1.5 × the morning-mass CV of
	// 0.66 % (Cheuvront et al. 2004).
	{RuleMassAbovePath, []Param{
		whole("ewma_n", 7, "days", 2, 28, "span N of the weighted trend, λ = 2/(N+1)"),
		value("watch_pct", 1, "% of limit", 0.1, 10, "trend above the path that starts a watch"),
		value("alert_pct", 2, "% of limit", 0.1, 20, "trend above the path that starts an alert"),
		whole("final_days", 7, "days", 1, 21, "default path: days before the weigh-in where the final phase starts"),
		value("factor_day_before", 1.05, "× limit", 1, 1.15, "default path: mass at the start of the final phase, day-before weigh-in"),
		value("factor_same_day", 1.03, "× limit", 1, 1.15, "default path: mass at the start of the final phase, same-day weigh-in"),
	}},
	// Garthe et al. 2011: 0.7 %/week preserved lean mass better than 1.4 %/week.
	{RuleMassLossFast, []Param{
		whole("window_days", 14, "days", 7, 42, "days of morning masses in the slope"),
		whole("min_checkins", 7, "check-ins", 3, 42, "check-ins needed in the window"),
		value("watch_pct_week", 1.0, "%/week", 0.1, 5, "weekly loss that starts a watch"),
		value("alert_pct_week", 1.5, "%/week", 0.1, 5, "weekly loss that starts an alert"),
		whole("final_days", 7, "days", 0, 21, "final days before the weigh-in left to the acute plan"),
	}},
	// Common practice anchored on Reale et al. 2017 and ACSM 2007 (Sawka et al.).
	{RuleCutAtRisk, []Param{
		value("rate_pct_week", 1.0, "%/week", 0, 2, "gradual loss assumed until the final days"),
		whole("final_days", 7, "days", 1, 21, "length of the final phase"),
		value("watch_pct_day_before", 5, "% of body mass", 0.5, 15, "left to lose in the final days, day-before weigh-in: watch"),
		value("alert_pct_day_before", 8, "% of body mass", 0.5, 15, "left to lose in the final days, day-before weigh-in: alert"),
		value("watch_pct_same_day", 3, "% of body mass", 0.5, 15, "left to lose in the final days, same-day weigh-in: watch"),
		value("alert_pct_same_day", 5, "% of body mass", 0.5, 15, "left to lose in the final days, same-day weigh-in: alert"),
	}},
	// No published volume cap (REFERENCES.md §12): common practice.
	{RuleSparDensity, []Param{
		whole("window_days", 7, "days", 7, 14, "days counted"),
		whole("cap_rounds", 30, "rounds", 0, 200, "sparring rounds in the window when the week has no cap of its own"),
		value("alert_factor", 1.25, "× cap", 1, 3, "multiple of the cap that starts an alert"),
		whole("hard_cap_rounds", 15, "rounds", 0, 200, "hard sparring rounds in the window"),
		whole("hard_intensity", 3, "intensity", 1, 3, "round intensity counted as hard"),
	}},
	// Common practice (REFERENCES.md §12).
	{RuleSparSpacing, []Param{
		whole("window_days", 7, "days", 7, 14, "days looked back"),
		whole("max_hard_days", 2, "days", 1, 7, "hard sparring days allowed in the window; more starts a watch"),
		whole("min_gap_days", 2, "days", 1, 7, "least days between hard sparring days"),
		whole("hard_intensity", 3, "intensity", 1, 3, "round intensity counted as hard"),
	}},
	// Neidecker et al. 2019 (ARP): 30 / 60 / 90 days at least.
	{RuleSparOnHold, []Param{
		whole("stoppage_days", 30, "days", 30, 365, "stand-down after a stoppage (at least 30)"),
		whole("knockout_days", 60, "days", 60, 365, "stand-down after a knockout (at least 60)"),
		whole("knockout_loc_days", 90, "days", 90, 365, "stand-down after a knockout with loss of consciousness (at least 90)"),
	}},
	// Williams et al. 2017 (EWMA); zones Gabbett 2016, with the cautions of
	// Impellizzeri et al. 2020, 2021.
	{RuleLoadSpike, []Param{
		whole("acute_n", 7, "days", 3, 14, "span of the acute average"),
		whole("chronic_n", 28, "days", 14, 56, "span of the chronic average"),
		whole("min_days", 28, "days", 7, 90, "days of history before the ratio is shown"),
		value("watch_ratio", 1.5, "ratio", 1, 5, "ratio above which a watch starts"),
		value("low_ratio", 0.8, "ratio", 0, 1, "ratio below which an info is shown outside the taper"),
	}},
	// Foster 1998; the 2.0 threshold is widely attributed to it (from memory).
	{RuleMonotony, []Param{
		whole("window_days", 7, "days", 7, 14, "days of daily loads"),
		value("watch", 2.0, "", 1, 10, "monotony (mean / SD of daily loads) that starts a watch"),
	}},
	// McLean et al. 2010 items; z-score thresholds common practice.
	{RuleWellnessDrop, []Param{
		whole("window_days", 28, "days", 7, 90, "days before the day that form the baseline"),
		whole("min_checkins", 7, "check-ins", 3, 60, "check-ins needed before z-scores are shown"),
		value("watch_z", -1.5, "z", -5, 0, "z-score at or below which a watch starts"),
		value("alert_z", -2.0, "z", -5, 0, "z-score at or below which an alert starts"),
		whole("item_min", 1, "points", 1, 5, "a single item at this value or below starts a watch"),
		value("sd_floor", 1.0, "points", 0, 5, "smallest baseline SD divided by"),
	}},
	// Hew-Butler et al. 2018 (≥ 1.020); Casa et al. 2000 (> 1.030 serious).
	{RuleHydration, []Param{
		value("watch_usg", 1.020, "", 1.000, 1.040, "urine specific gravity at or above which a watch starts"),
		value("alert_usg", 1.030, "", 1.000, 1.040, "urine specific gravity above which an alert starts"),
	}},
	// PRODUCT.md: 10:00 local by default.
	{RuleMissingCheckin, []Param{
		value("hour", DefaultCheckinHour, "h", 0, MaxCheckinHour, "local hour by which a check-in is expected (10.5 = 10:30)"),
	}},
	// Bosquet et al. 2007: taper volume cut 41–60 %; ±20 % and the level
	// fractions are common practice, no source.
	{RuleOffPlan, []Param{
		value("tolerance_pct", 20, "%", 1, 100, "projected week load away from the plan that starts an info"),
		whole("min_days", 3, "days", 1, 7, "days into the week before projecting"),
		value("taper_min_pct", 41, "%", 0, 100, "least load cut of a taper week"),
		value("taper_max_pct", 60, "%", 0, 100, "largest load cut of a taper week"),
		value("level_rest", 0.3, "× reference week", 0, 2, "planned load of a rest week"),
		value("level_low", 0.5, "× reference week", 0, 2, "planned load of a low week"),
		value("level_medium", 0.7, "× reference week", 0, 2, "planned load of a medium week"),
		value("level_medium_heavy", 0.85, "× reference week", 0, 2, "planned load of a medium-heavy week"),
		value("level_heavy", 1.0, "× reference week", 0, 2, "planned load of a heavy week"),
		value("level_taper", 0.5, "× reference week", 0, 2, "planned load of a taper week"),
	}},
	// Issurin 2008: residuals 30 ± 5 days (maximal strength), 5 ± 3 days
	// (maximal speed); defaults are the upper bounds.
	{RuleResidualGap, []Param{
		whole("max_strength_days", 35, "days", 1, 90, "days since the last maximal-strength session"),
		whole("speed_days", 8, "days", 1, 60, "days since the last speed or plyometric session"),
	}},
	// Check weights and fight-day weigh-ins over the caps of the bout's own
	// rules are alerts (REFERENCES §14.1). A regain above 10 % of the
	// official mass is a watch: a state commission's fight-night check
	// (2017) and the 2019 check-weight programme both use 10 % (§14.1);
	// 20.6 % of professional boxers exceeded it (§6.3).
	{RuleWeighIn, []Param{
		value("regain_watch_pct", 10, "% of the official mass", 1, 30, "regain from the official weigh-in to the fight-day weigh-in that starts a watch"),
	}}}

// DefaultCheckinHour is the local hour by which a check-in is expected
// (PRODUCT.md, missing_checkin), unless settings say otherwise. A
// settings record may set it as checkin_hour or as the threshold
// missing_checkin.hour; Settings.Layer folds the first into the second,
// and an explicit threshold wins where both are set.
const DefaultCheckinHour = 10.0

// RuleIDs lists the rule ids in table order.
var RuleIDs = func() []string {
	ids := make([]string, len(Rules))
	for i, r := range Rules {
		ids[i] = r.ID
	}
	return ids
}()

// Defaults maps rule id → parameter name → default value, built from
// Rules. Treat it as read-only; Resolve returns a fresh copy with
// overrides applied.
var Defaults = func() map[string]map[string]float64 {
	m := make(map[string]map[string]float64, len(Rules))
	for _, r := range Rules {
		m[r.ID] = make(map[string]float64, len(r.Params))
		for _, prm := range r.Params {
			m[r.ID][prm.Name] = prm.Default
		}
	}
	return m
}()

// RuleByID finds a rule.
func RuleByID(id string) (Rule, bool) {
	for _, r := range Rules {
		if r.ID == id {
			return r, true
		}
	}
	return Rule{}, false
}

// ParamOf finds one parameter of a rule.
func ParamOf(rule, name string) (Param, bool) {
	r, ok := RuleByID(rule)
	if !ok {
		return Param{}, false
	}
	for _, prm := range r.Params {
		if prm.Name == name {
			return prm, true
		}
	}
	return Param{}, false
}

// Resolve returns the thresholds in force: the defaults, overridden by
// each layer in turn (typically the camp's settings, then the athlete's).
// Unknown rules and parameters in a layer are ignored; validated settings
// never carry them.
func Resolve(layers ...map[string]map[string]float64) map[string]map[string]float64 {
	out := make(map[string]map[string]float64, len(Defaults))
	for rule, params := range Defaults {
		out[rule] = make(map[string]float64, len(params))
		for k, v := range params {
			out[rule][k] = v
		}
	}
	for _, layer := range layers {
		for rule, params := range layer {
			for k, v := range params {
				if _, ok := out[rule][k]; ok {
					out[rule][k] = v
				}
			}
		}
	}
	return out
}

// Layer is the settings' thresholds as one layer for Resolve, with
// checkin_hour folded in as missing_checkin.hour (an explicit
// missing_checkin.hour threshold wins). The result is a fresh map.
func (s Settings) Layer() map[string]map[string]float64 {
	out := make(map[string]map[string]float64, len(s.Thresholds)+1)
	if s.CheckinHour != nil {
		out[RuleMissingCheckin] = map[string]float64{"hour": *s.CheckinHour}
	}
	for rule, params := range s.Thresholds {
		if out[rule] == nil {
			out[rule] = make(map[string]float64, len(params))
		}
		for k, v := range params {
			out[rule][k] = v
		}
	}
	return out
}
