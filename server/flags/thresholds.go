package flags

// defaults is every rule's parameters with the product's defaults. It is
// read-only; DefaultThresholds hands out copies.
//
// Parameters that the product leaves open are marked "decided here" and
// are common practice, no source.
var defaults = map[string]map[string]float64{
	RuleJumpDrop: {
		"window_days":  28, // baseline: the 28 days before the day
		"min_days":     5,  // test days needed for a baseline
		"cv_floor_pct": 2,  // noise floor
		"watch_pct":    5,  // watch if drop > max(watch_pct, watch_cv × CV)
		"watch_cv":     2,
		"alert_pct":    10, // alert if drop > max(alert_pct, alert_cv × CV)
		"alert_cv":     3,
	},
	RuleMassAbovePath: {
		"ewma_n":            7,    // trend λ = 2/(n+1)
		"watch_pct":         1,    // trend above path by > 1 % of the limit
		"alert_pct":         2,    // … by > 2 %
		"final_days":        7,    // the default path's knee, days before weigh-in
		"factor_day_before": 1.05, // knee mass = limit × factor
		"factor_same_day":   1.03,
	},
	RuleMassLossFast: {
		"window_days":    14,
		"min_checkins":   7,
		"watch_pct_week": 1.0,
		"alert_pct_week": 1.5,
		"final_days":     7, // not judged in the final days before weigh-in
	},
	RuleCutAtRisk: {
		"rate_pct_week":        1.0, // projection rate
		"final_days":           7,
		"watch_pct_day_before": 5,
		"alert_pct_day_before": 8,
		"watch_pct_same_day":   3,
		"alert_pct_same_day":   5,
	},
	RuleSparDensity: {
		"window_days":     7,
		"cap_rounds":      30, // when the plan's week sets no cap
		"alert_factor":    1.25,
		"hard_cap_rounds": 15,
		"hard_intensity":  3,
	},
	RuleSparSpacing: {
		"window_days":    7,
		"max_hard_days":  2, // 3 or more hard days in the window → watch
		"min_gap_days":   2, // hard days closer than this (consecutive days) → watch
		"hard_intensity": 3,
	},
	RuleSparOnHold: {
		"stoppage_days":     30,
		"knockout_days":     60,
		"knockout_loc_days": 90,
	},
	RuleLoadSpike: {
		"acute_n":     7,
		"chronic_n":   28,
		"min_days":    28,
		"watch_ratio": 1.5,
		"low_ratio":   0.8,
	},
	RuleMonotony: {
		"window_days": 7,
		"watch":       2.0,
	},
	RuleWellnessDrop: {
		"window_days":  28,
		"min_checkins": 7,
		"watch_z":      -1.5,
		"alert_z":      -2.0,
		"item_min":     1,   // any single item at this value → watch
		"sd_floor":     0.5, // decided here: a near-constant baseline is not divided by ~0
	},
	RuleHydration: {
		"watch_usg": 1.020, // ≥
		"alert_usg": 1.030, // >
	},
	RuleMissingCheckin: {
		"hour": 10, // local hour, camp time
	},
	RuleOffPlan: {
		"tolerance_pct": 20,
		"min_days":      3, // decided here: days into the week before projecting
		"taper_min_pct": 41,
		"taper_max_pct": 60,
		// Planned level as a fraction of the reference weekly load
		// (decided here; the coach edits them).
		"level_rest":         0.3,
		"level_low":          0.5,
		"level_medium":       0.7,
		"level_medium_heavy": 0.85,
		"level_heavy":        1.0,
		"level_taper":        0.5,
	},
	RuleResidualGap: {
		"max_strength_days": 35,
		"speed_days":        8,
	},
}

// DefaultThresholds returns every rule's parameters with the product's
// defaults, as a fresh map the caller may change.
func DefaultThresholds() map[string]map[string]float64 {
	out := make(map[string]map[string]float64, len(defaults))
	for rule, params := range defaults {
		m := make(map[string]float64, len(params))
		for k, v := range params {
			m[k] = v
		}
		out[rule] = m
	}
	return out
}

// param returns the setting for rule.name: the override if present, else
// the default.
func (e *engine) param(rule, name string) float64 {
	if m, ok := e.in.Settings[rule]; ok {
		if v, ok := m[name]; ok {
			return v
		}
	}
	return defaults[rule][name]
}
