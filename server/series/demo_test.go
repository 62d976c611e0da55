package series_test

import (
	"encoding/json"
	"math"
	"testing"
	"time"

	"cornerbook/server/demo"
	"cornerbook/server/flags"
	"cornerbook/server/records"
	"cornerbook/server/series"
	devsync "cornerbook/sync"
)

// demoToday is the day the demo camp ends on in these tests.
var demoToday = time.Date(2026, 12, 1, 10, 30, 0, 0, time.UTC)

type demoAthlete struct {
	athlete devsync.Record
	bout    *devsync.Record
	recs    []devsync.Record
}

// demoCamp returns the demo's athletes with their records as the hub
// stores them (prepared), and the camp-wide thresholds.
func demoCamp(t testing.TB) ([]*demoAthlete, map[string]map[string]float64) {
	t.Helper()
	byID := map[string]*demoAthlete{}
	var order []*demoAthlete
	var camp records.Settings
	for _, r := range demo.Build(demoToday) {
		if err := records.Prepare(&r); err != nil {
			t.Fatalf("demo record %s: %v", r.ID, err)
		}
		switch {
		case r.Kind == records.KindSettings && r.Athlete == "":
			if err := json.Unmarshal(r.Body, &camp); err != nil {
				t.Fatal(err)
			}
		case r.Kind == records.KindAthlete:
			a := &demoAthlete{athlete: r}
			byID[r.ID] = a
			order = append(order, a)
		case r.Kind == records.KindBout:
			b := r
			byID[r.Athlete].bout = &b
		default:
			byID[r.Athlete].recs = append(byID[r.Athlete].recs, r)
		}
	}
	return order, records.Resolve(camp.Layer())
}

func same(t *testing.T, what string, engine *float64, series *float64) {
	t.Helper()
	if engine == nil || series == nil || math.Abs(*engine-*series) > 1e-9*math.Max(1, math.Abs(*engine)) {
		t.Fatalf("%s: flag engine %v, series %v", what, show(engine), show(series))
	}
}

// On every day of the demo camp, the series shows the numbers the flag
// engine reports for that day: the jump baseline in jump_drop's Reference
// and the day's CMJ in its Value, the load ratio in load_spike's Value,
// the mass trend and planned path in mass_above_path's Value and
// Reference, the rate of loss in mass_loss_fast's Value, the trend in
// cut_at_risk's details, the rolling sparring count and cap in
// spar_density, the wellness mean and threshold in wellness_drop, and the
// planned week load in off_plan's Reference.
func TestBuild_AgreesWithFlagEngine(t *testing.T) {
	athletes, camp := demoCamp(t)
	from := demoToday.AddDate(0, 0, -demo.HistoryDays+1).Format(time.DateOnly)
	to := demoToday.Format(time.DateOnly)
	// A second pass with the most sensitive levels the settings allow makes
	// the rules report on many more days; the numbers compared do not
	// depend on the levels, so both passes must agree.
	sensitive := records.Resolve(camp, map[string]map[string]float64{
		records.RuleLoadSpike:     {"watch_ratio": 1, "low_ratio": 1},
		records.RuleJumpDrop:      {"watch_pct": 1, "watch_cv": 0},
		records.RuleWellnessDrop:  {"watch_z": 0},
		records.RuleMassAbovePath: {"watch_pct": 0.1},
		records.RuleMassLossFast:  {"watch_pct_week": 0.1},
		records.RuleCutAtRisk:     {"watch_pct_day_before": 0.5, "watch_pct_same_day": 0.5},
		records.RuleSparDensity:   {"cap_rounds": 0, "hard_cap_rounds": 0},
	})
	checked := map[string]int{}
	for pass, a := range append(append([]*demoAthlete{}, athletes...), athletes...) {
		th := camp
		if pass >= len(athletes) {
			th = sensitive
		}
		in := flags.Input{Athlete: a.athlete, Bout: a.bout, Records: a.recs, Settings: th}
		s := series.Build(in, from, to)
		for i, dayStr := range s.Days {
			in.Day = dayStr
			for _, f := range flags.Compute(in) {
				what := a.athlete.ID[:8] + " " + dayStr + " " + f.Rule + " " + f.Status
				switch {
				case f.Rule == flags.RuleJumpDrop && f.Status == flags.StatusFlag:
					same(t, what+" value", f.Value, s.Jump.MeanCm[i])
					same(t, what+" reference", f.Reference, s.Jump.BaselineCm[i])
					best := f.Details["best_cm"]
					same(t, what+" best", &best, s.Jump.BestCm[i])
					cv := f.Details["cv_pct"]
					same(t, what+" noise", &cv, s.Jump.NoisePct[i])
				case f.Rule == flags.RuleJumpDrop:
					same(t, what+" value", f.Value, s.Jump.MeanCm[i])
					if s.Jump.BaselineCm[i] != nil || s.Jump.TestDays[i] != int(f.Details["baseline_days"]) {
						t.Fatalf("%s: baseline forming in the engine (%v days), series %v (%d days)", what, f.Details["baseline_days"], show(s.Jump.BaselineCm[i]), s.Jump.TestDays[i])
					}
				case f.Rule == flags.RuleLoadSpike && f.Status == flags.StatusFlag:
					same(t, what+" ratio", f.Value, s.Load.Ratio[i])
					acute, chronic := f.Details["acute_au"], f.Details["chronic_au"]
					same(t, what+" acute", &acute, s.Load.AcuteAU[i])
					same(t, what+" chronic", &chronic, s.Load.ChronicAU[i])
				case f.Rule == flags.RuleLoadSpike:
					if s.Load.Ratio[i] != nil {
						t.Fatalf("%s: ratio forming in the engine, series %v", what, *s.Load.Ratio[i])
					}
				case f.Rule == flags.RuleMassAbovePath && f.Status == flags.StatusFlag:
					same(t, what+" trend", f.Value, s.Mass.TrendKg[i])
					same(t, what+" path", f.Reference, s.Mass.PathKg[i])
					limit := f.Details["limit_kg"]
					same(t, what+" limit", &limit, s.Mass.LimitKg)
				case f.Rule == flags.RuleMassLossFast && f.Status == flags.StatusFlag:
					same(t, what+" loss", f.Value, s.Mass.LossPctWeek[i])
				case f.Rule == flags.RuleCutAtRisk && f.Status == flags.StatusFlag:
					trend := f.Details["trend_kg"]
					same(t, what+" trend", &trend, s.Mass.TrendKg[i])
				case f.Rule == flags.RuleSparDensity && f.Status == flags.StatusFlag && f.Unit == "rounds":
					same(t, what+" rounds", f.Value, fp(s.Sparring.RollingRounds[i]))
					same(t, what+" cap", f.Reference, fp(s.Sparring.CapRounds[i]))
				case f.Rule == flags.RuleSparDensity && f.Status == flags.StatusFlag:
					same(t, what+" hard rounds", f.Value, fp(s.Sparring.RollingHard[i]))
				case f.Rule == flags.RuleWellnessDrop && f.Status == flags.StatusFlag && f.Reference != nil:
					same(t, what+" total", f.Value, s.Wellness.Total[i])
					same(t, what+" mean", f.Reference, s.Wellness.Mean[i])
					thr := s.Wellness.WatchBelow[i]
					if f.Level == flags.LevelAlert {
						thr = s.Wellness.AlertBelow[i]
					}
					same(t, what+" threshold", f.Threshold, thr)
				case f.Rule == flags.RuleOffPlan && f.Reference != nil:
					same(t, what+" planned week", f.Reference, s.Load.PlannedWeekAU[i])
				default:
					continue
				}
				checked[f.Rule+" "+f.Status]++
			}
		}
	}
	for _, k := range []string{
		"jump_drop flag", "jump_drop forming", "load_spike flag", "load_spike forming", "mass_above_path flag",
		"mass_loss_fast flag", "cut_at_risk flag", "spar_density flag", "wellness_drop flag", "off_plan forming",
	} {
		if checked[k] == 0 {
			t.Errorf("the demo camp never gave a %s to compare with", k)
		}
	}
	t.Logf("compared %v", checked)
}

func fp(n int) *float64 { v := float64(n); return &v }
