package plan_test

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	"cornerbook/server/plan"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// engineFlags evaluates one day of a bout with one morning mass far above
// any path, so mass_above_path reports the planned path as its Reference.
func engineFlags(t *testing.T, b records.Bout, th map[string]map[string]float64, dayStr string) []flags.Flag {
	t.Helper()
	raw, _ := json.Marshal(b)
	bout := devsync.Record{ID: "bout-1", Kind: records.KindBout, Athlete: "ath-1", At: campStart + "T08:00:00+01:00", Device: "dev", Body: raw}
	mass, _ := json.Marshal(records.Checkin{MassKg: ptr(b.StartMassKg + 8)})
	in := flags.Input{Day: dayStr, Athlete: devsync.Record{ID: "ath-1", Kind: records.KindAthlete},
		Bout: &bout, Settings: th, Records: []devsync.Record{{ID: "c-1", Kind: records.KindCheckin, Athlete: "ath-1", Day: dayStr,
			At: dayStr + "T07:00:00+01:00", Device: "dev", Body: mass}}}
	return flags.Compute(in)
}

func ptr[T any](v T) *T { return &v }

// The plan and the flag engine agree: the default week plan raises no
// off_plan taper note and a taper level outside 41–60 % raises one in both
// (Bosquet et al. 2007); Path is the path mass_above_path judges against.
func TestPlanAgreesWithFlagEngine(t *testing.T) {
	ws, err := plan.DefaultWeeks(campStart, d(55))
	if err != nil {
		t.Fatal(err)
	}
	b := bout(t, 55, 70, 66.5, nil, ws)
	taperNote := func(fs []flags.Flag) bool {
		for _, f := range fs {
			if f.Rule == flags.RuleOffPlan && strings.Contains(f.Reason, "planned taper") {
				return true
			}
		}
		return false
	}
	if taperNote(engineFlags(t, b, nil, d(3))) {
		t.Fatal("the engine questions the default plan's taper")
	}
	th := records.Resolve(map[string]map[string]float64{records.RuleOffPlan: {"level_taper": 0.75}})
	if !taperNote(engineFlags(t, b, th, d(3))) || len(checksOf(plan.Check(b, th), plan.CheckTaperCut)) != 1 {
		t.Fatal("a 25 % taper is not questioned by both the engine and Check")
	}
	for _, same := range []bool{false, true} {
		bt := b
		if same {
			bt.WeighInType, bt.WeighIn = "same_day", d(55)+"T09:00:00+01:00"
		}
		path := plan.Path(bt)
		for _, off := range []int{0, 20, 47, 50, 54} {
			var ref *float64
			for _, f := range engineFlags(t, bt, nil, d(off)) {
				if f.Rule == flags.RuleMassAbovePath {
					ref = f.Reference
				}
			}
			want := flags.PathAt(path, day.MustParse(d(off)))
			if ref == nil || *ref != want {
				t.Fatalf("%s day %d: engine path %v, plan.Path %v", fmt.Sprint(bt.WeighInType), off, ref, want)
			}
		}
	}
}
