package records

import "testing"

func TestDefaults(t *testing.T) {
	// Each default is the value stated in PRODUCT.md "Flag rules".
	tests := []struct {
		rule, param string
		want        float64
	}{
		{RuleJumpDrop, "window_days", 28},
		{RuleJumpDrop, "min_days", 5},
		{RuleJumpDrop, "cv_floor_pct", 2},
		{RuleJumpDrop, "watch_pct", 5},
		{RuleJumpDrop, "watch_cv", 2},
		{RuleJumpDrop, "alert_pct", 10},
		{RuleJumpDrop, "alert_cv", 3},
		{RuleMassAbovePath, "ewma_n", 7},
		{RuleMassAbovePath, "watch_pct", 1},
		{RuleMassAbovePath, "alert_pct", 2},
		{RuleMassAbovePath, "final_days", 7},
		{RuleMassAbovePath, "factor_day_before", 1.05},
		{RuleMassAbovePath, "factor_same_day", 1.03},
		{RuleMassLossFast, "window_days", 14},
		{RuleMassLossFast, "min_checkins", 7},
		// Garthe et al. 2011 anchors these: 0.7 %/week kept lean mass, 1.4 did not.
		{RuleMassLossFast, "watch_pct_week", 1.0},
		{RuleMassLossFast, "alert_pct_week", 1.5},
		{RuleMassLossFast, "final_days", 7},
		{RuleCutAtRisk, "rate_pct_week", 1},
		{RuleCutAtRisk, "final_days", 7},
		{RuleCutAtRisk, "watch_pct_day_before", 5},
		{RuleCutAtRisk, "alert_pct_day_before", 8},
		{RuleCutAtRisk, "watch_pct_same_day", 3},
		{RuleCutAtRisk, "alert_pct_same_day", 5},
		{RuleSparDensity, "window_days", 7},
		{RuleSparDensity, "cap_rounds", 30},
		{RuleSparDensity, "alert_factor", 1.25},
		{RuleSparDensity, "hard_cap_rounds", 15},
		{RuleSparDensity, "hard_intensity", 3},
		// "3 or more of the last 7 days → watch": more than 2.
		{RuleSparSpacing, "max_hard_days", 2},
		{RuleSparSpacing, "min_gap_days", 2},
		// Neidecker et al. 2019 (ARP consensus): 30 / 60 / 90 days.
		{RuleSparOnHold, "stoppage_days", 30},
		{RuleSparOnHold, "knockout_days", 60},
		{RuleSparOnHold, "knockout_loc_days", 90},
		// Williams et al. 2017: acute N = 7, chronic N = 28.
		{RuleLoadSpike, "acute_n", 7},
		{RuleLoadSpike, "chronic_n", 28},
		{RuleLoadSpike, "min_days", 28},
		{RuleLoadSpike, "watch_ratio", 1.5},
		{RuleLoadSpike, "low_ratio", 0.8},
		{RuleMonotony, "window_days", 7},
		{RuleMonotony, "watch", 2.0},
		{RuleWellnessDrop, "window_days", 28},
		{RuleWellnessDrop, "watch_z", -1.5},
		{RuleWellnessDrop, "alert_z", -2.0},
		{RuleWellnessDrop, "min_checkins", 7},
		{RuleWellnessDrop, "item_min", 1},
		// Hew-Butler et al. 2018 (≥ 1.020); Casa et al. 2000 (> 1.030).
		{RuleHydration, "watch_usg", 1.020},
		{RuleHydration, "alert_usg", 1.030},
		{RuleMissingCheckin, "hour", 10},
		// Bosquet et al. 2007: taper volume cut 41–60 %.
		{RuleOffPlan, "tolerance_pct", 20},
		{RuleOffPlan, "taper_min_pct", 41},
		{RuleOffPlan, "taper_max_pct", 60},
		// Issurin 2008: 30 ± 5 and 5 ± 3 days, upper bounds.
		{RuleResidualGap, "max_strength_days", 35},
		{RuleResidualGap, "speed_days", 8},
	}
	for _, tt := range tests {
		got, ok := Defaults[tt.rule][tt.param]
		if !ok || got != tt.want {
			t.Errorf("Defaults[%s][%s] = %v (present %v), want %v", tt.rule, tt.param, got, ok, tt.want)
		}
	}
	// The fixed rule ids of PRODUCT.md, all present.
	for _, id := range []string{"jump_drop", "mass_above_path", "mass_loss_fast", "cut_at_risk", "spar_density",
		"spar_spacing", "spar_on_hold", "load_spike", "monotony", "wellness_drop", "hydration",
		"missing_checkin", "off_plan", "residual_gap"} {
		if _, ok := Defaults[id]; !ok {
			t.Errorf("rule %s missing from Defaults", id)
		}
	}
	// And the weigh-in rule of "Scope added 2026-12-03".
	if _, ok := Defaults[RuleWeighIn]["regain_watch_pct"]; !ok || len(Defaults) != 15 {
		t.Errorf("Defaults has %d rules, want the 14 of PRODUCT.md and weigh_in", len(Defaults))
	}
	for _, r := range Rules {
		for _, p := range r.Params {
			if p.Default < p.Min || p.Default > p.Max {
				t.Errorf("%s.%s: default %v outside its own bounds %v–%v", r.ID, p.Name, p.Default, p.Min, p.Max)
			}
		}
	}
}

func TestResolve(t *testing.T) {
	camp := map[string]map[string]float64{RuleSparDensity: {"cap_rounds": 24}, "nope": {"x": 1}}
	athlete := map[string]map[string]float64{RuleSparDensity: {"cap_rounds": 20}, RuleHydration: {"watch_usg": 1.025, "bogus": 3}}
	got := Resolve(camp, athlete)
	if got[RuleSparDensity]["cap_rounds"] != 20 || got[RuleHydration]["watch_usg"] != 1.025 {
		t.Errorf("athlete layer must win: %v", got)
	}
	if got[RuleSparDensity]["hard_cap_rounds"] != 15 {
		t.Errorf("untouched parameters keep defaults: %v", got[RuleSparDensity])
	}
	if _, ok := got["nope"]; ok {
		t.Error("unknown rules must not appear")
	}
	if _, ok := got[RuleHydration]["bogus"]; ok {
		t.Error("unknown parameters must not appear")
	}
	got[RuleJumpDrop]["watch_pct"] = 99
	if Defaults[RuleJumpDrop]["watch_pct"] != 5 {
		t.Error("Resolve must return a copy, not the Defaults maps")
	}
}

func TestSettingsLayer(t *testing.T) {
	h := 8.5
	camp := Settings{CheckinHour: &h}
	athlete := Settings{Thresholds: map[string]map[string]float64{RuleMissingCheckin: {"hour": 9}}}
	if got := Resolve(camp.Layer())[RuleMissingCheckin]["hour"]; got != 8.5 {
		t.Errorf("camp checkin_hour: got %v, want 8.5", got)
	}
	if got := Resolve(camp.Layer(), athlete.Layer())[RuleMissingCheckin]["hour"]; got != 9 {
		t.Errorf("athlete threshold over camp hour: got %v, want 9", got)
	}
	both := Settings{CheckinHour: &h, Thresholds: map[string]map[string]float64{RuleMissingCheckin: {"hour": 7}}}
	if got := both.Layer()[RuleMissingCheckin]["hour"]; got != 7 {
		t.Errorf("explicit threshold wins over checkin_hour: got %v, want 7", got)
	}
	if got := Resolve()[RuleMissingCheckin]["hour"]; got != DefaultCheckinHour {
		t.Errorf("default hour: got %v, want %v (PRODUCT.md: 10:00)", got, DefaultCheckinHour)
	}
}

// Every flag rule has its name in the coach's words: the app's screens and
// the refusals of a settings threshold read it.
func TestEveryRuleHasItsName(t *testing.T) {
	for _, r := range Rules {
		if RuleNames[r.ID] == "" {
			t.Errorf("%s has no name in words", r.ID)
		}
	}
	if len(RuleNames) != len(Rules) {
		t.Errorf("%d names for %d rules", len(RuleNames), len(Rules))
	}
}
