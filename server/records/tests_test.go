package records

import (
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"

	"cornerbook/server/fitness"
	devsync "cornerbook/sync"
)

func preparedBody[T any](t *testing.T, kind, body string) (T, devsync.Record) {
	t.Helper()
	r := prepared(t, mk(kind, "ath-1", "2026-03-02", body))
	var v T
	if err := json.Unmarshal(r.Body, &v); err != nil {
		t.Fatal(err)
	}
	// Preparing a prepared record changes nothing.
	again := r
	if err := Prepare(&again); err != nil || string(again.Body) != string(r.Body) {
		t.Errorf("not idempotent: %v\n%s\n%s", err, r.Body, again.Body)
	}
	return v, r
}

func approx(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.6f, want %.6f ± %g", name, got, want, tol)
	}
}

// The derived values of a test, as the hub stores them: the 30-15 IFT's
// V_IFT from its stage (Buchheit 2008: 8 km/h + 0.5 km/h per stage
// [V]; stage 23 = 19.0 km/h [D]); Sdec and fatigue (REFERENCES §14.2: 4.00…
// 4.25 s → 3.0000 %, 6.25 % [D]); Epley and Brzycki (§14.3: 100 kg × 5 →
// 116.6667 / 112.5000 kg [D]; Reynolds 2006: none beyond 10 reps [V]); the
// load–velocity 1RM (§14.3: 40/60/80 kg at 1.00/0.75/0.50 m/s → 106.40
// kg at 0.17 m/s [D]); the drop jump's RSI (Healy 2017; §14.3: flight
// 0.500 s, contact 0.200 s → 1.5328 [D]).
func TestDerivedTests(t *testing.T) {
	ift, _ := preparedBody[FitnessTest](t, KindFitnessTest, `{"protocol":"ift_30_15","stage":23,"hr_peak":194}`)
	approx(t, "V_IFT stage 23", ift.VIFTKmh, 19.0, 0)
	approx(t, "start", ift.StartKmh, 8, 0)
	alt, _ := preparedBody[FitnessTest](t, KindFitnessTest, `{"protocol":"ift_30_15","start_kmh":10,"stage":19}`)
	approx(t, "V_IFT from 10 km/h, stage 19", alt.VIFTKmh, 19.0, 0)
	bySpeed, _ := preparedBody[FitnessTest](t, KindFitnessTest, `{"protocol":"ift_30_15","vift_kmh":19.5}`)
	if bySpeed.Stage != 24 {
		t.Errorf("19.5 km/h is stage 24, got %d", bySpeed.Stage)
	}
	// A stage sent with a stale speed: the stage is what was recorded.
	stale, _ := preparedBody[FitnessTest](t, KindFitnessTest, `{"protocol":"ift_30_15","stage":23,"vift_kmh":22}`)
	approx(t, "V_IFT from the stage", stale.VIFTKmh, 19.0, 0)

	rs, _ := preparedBody[FitnessTest](t, KindFitnessTest, `{"protocol":"repeated_sprint","sprint_s":[4.00,4.05,4.10,4.12,4.20,4.25],"distance_m":30}`)
	approx(t, "Sdec", rs.SDecPct, 3.0000, 0.00005)
	approx(t, "fatigue", rs.FatiguePct, 6.25, 0.00005)
	approx(t, "best", rs.BestS, 4.00, 0)

	hr, _ := preparedBody[FitnessTest](t, KindFitnessTest, `{"protocol":"hr_max","hr_max_bpm":197}`)
	if hr.HRMaxBpm != 197 {
		t.Errorf("hr max %d", hr.HRMaxBpm)
	}

	st, _ := preparedBody[Strength](t, KindStrength, `{"exercise":"back squat","sets":[{"load_kg":100,"reps":5},{"load_kg":80,"reps":11}]}`)
	approx(t, "Epley", st.EpleyKg, 116.6667, 0.00005)
	approx(t, "Brzycki", st.BrzyckiKg, 112.5, 0.00005)
	approx(t, "default min velocity", st.MinVelocityMs, 0.17, 0)
	if st.LV1RMKg != 0 {
		t.Errorf("no velocities, yet lv_1rm_kg %v", st.LV1RMKg)
	}
	only11, _ := preparedBody[Strength](t, KindStrength, `{"exercise":"back squat","sets":[{"load_kg":100,"reps":11}]}`)
	if only11.EpleyKg != 0 || only11.BrzyckiKg != 0 {
		t.Errorf("11 reps gave an estimate: %+v", only11)
	}
	lv, _ := preparedBody[Strength](t, KindStrength, `{"exercise":"bench press","sets":[{"load_kg":40,"reps":5,"mpv_ms":1.00},{"load_kg":60,"reps":4,"mpv_ms":0.75,"rir":3},{"load_kg":80,"reps":3,"mpv_ms":0.50,"rir":2}]}`)
	approx(t, "LV 1RM", lv.LV1RMKg, 106.40, 0.005)
	approx(t, "LV slope", lv.LVSlope, -0.0125, 1e-9)
	lvOwn, _ := preparedBody[Strength](t, KindStrength, `{"exercise":"bench press","min_velocity_ms":0.3,"sets":[{"load_kg":40,"reps":5,"mpv_ms":1.00},{"load_kg":60,"reps":4,"mpv_ms":0.75},{"load_kg":80,"reps":3,"mpv_ms":0.50}]}`)
	approx(t, "LV 1RM at 0.30 m/s", lvOwn.LV1RMKg, 96, 1e-9)

	dj, _ := preparedBody[Jump](t, KindJump, `{"test":"dj","drop_cm":40,"flight_ms":[500,480],"contact_ms":[200,220],"method":"mat"}`)
	approx(t, "DJ height", dj.HeightsCm[0], 30.6563, 0.00005)
	approx(t, "RSI attempt 1", dj.RSIs[0], 1.5328, 0.00005)
	approx(t, "best RSI", dj.RSI, 1.5328, 0.00005)
	cmj, _ := preparedBody[Jump](t, KindJump, `{"flight_ms":[500]}`)
	if cmj.Test != JumpCMJ || cmj.RSI != 0 {
		t.Errorf("a CMJ: %+v", cmj)
	}
}

// Prescriptions: distance per rep = V_IFT / 3.6 × pct × seconds (REFERENCES
// §14.2 [D]: 19.0 km/h at 90 % for 15 s → 71.25 m; at 80 % for 180 s → 760
// m); a band of HRmax (Tanaka 2001 at 24 years: 191.2 bpm; 90 % = 172.08
// bpm [D]).
func TestDerivedPrescription(t *testing.T) {
	short, _ := preparedBody[Intervals](t, KindIntervals, `{"protocol":"short_15_15","modality":"run","work_s":15,"rest_s":15,"reps":12,"sets":2,"pct_vift":90,"vift_kmh":19.0}`)
	approx(t, "15 s at 90 %", short.TargetRepM, 71.25, 0.0001)
	long, _ := preparedBody[Intervals](t, KindIntervals, `{"modality":"run","work_s":180,"rest_s":120,"reps":4,"pct_vift":80,"vift_kmh":19.0,"done_reps":4,"done_rep_m":745}`)
	approx(t, "180 s at 80 %", long.TargetRepM, 760, 0.0001)
	band, _ := preparedBody[Intervals](t, KindIntervals, `{"modality":"run","work_s":240,"rest_s":180,"reps":4,"hr_lo_pct":90,"hr_hi_pct":95,"hr_max_bpm":191.2,"hr_max_from":"age","hr_peak":176}`)
	approx(t, "90 % of 191.2", band.TargetHRLo, 172.08, 0.0001)
	approx(t, "95 % of 191.2", band.TargetHRHi, 181.64, 0.0001)
	if band.HRMaxFrom != HRMaxAge {
		t.Errorf("hr_max_from %q", band.HRMaxFrom)
	}
}

// Bad input is refused with the field named and a reason in plain words.
func TestTestsRefused(t *testing.T) {
	ft := func(b string) devsync.Record { return mk(KindFitnessTest, "ath-1", "2026-03-02", b) }
	st := func(b string) devsync.Record { return mk(KindStrength, "ath-1", "2026-03-02", b) }
	jp := func(b string) devsync.Record { return mk(KindJump, "ath-1", "2026-03-02", b) }
	iv := func(b string) devsync.Record { return mk(KindIntervals, "ath-1", "2026-03-02", b) }
	cases := []struct {
		name  string
		rec   devsync.Record
		field string
		words []string
	}{
		{"no protocol", ft(`{"stage":12}`), "body.protocol", []string{ChooseOneWords}},
		{"unknown protocol", ft(`{"protocol":"beep"}`), "body.protocol", []string{"one of"}},
		{"stage the protocol lacks", ft(`{"protocol":"ift_30_15","stage":36}`), "body.stage", []string{"must be between 1 and 35 (the stages of the test); got 36"}},
		{"stage 0", ft(`{"protocol":"ift_30_15","stage":0}`), "body.stage", []string{"between 1 and 35", "got 0"}},
		{"stage beyond the 10 km/h table", ft(`{"protocol":"ift_30_15","start_kmh":10,"stage":32}`), "body.stage", []string{"between 1 and 31 (the stages of the test from 10 km/h, 10 to 25 km/h); got 32"}},
		{"speed between stages", ft(`{"protocol":"ift_30_15","vift_kmh":19.3}`), "body.vift_kmh", []string{"no stage at 19.3 km/h"}},
		{"odd start", ft(`{"protocol":"ift_30_15","start_kmh":9,"stage":3}`), "body.start_kmh", []string{"8 or 10 km/h"}},
		{"no stage", ft(`{"protocol":"ift_30_15"}`), "body.stage", []string{"required", "last stage"}},
		{"sprints on an IFT", ft(`{"protocol":"ift_30_15","stage":20,"sprint_s":[4,4.1]}`), "body.sprint_s", []string{"repeated-sprint", "not a 30-15 IFT"}},
		{"one sprint", ft(`{"protocol":"repeated_sprint","sprint_s":[4.0]}`), "body.sprint_s", []string{"2 to 20"}},
		{"sprint time 0", ft(`{"protocol":"repeated_sprint","sprint_s":[4.0,0]}`), "body.sprint_s[1]", []string{"between 1 and 30 s", "got 0"}},
		{"no hr max", ft(`{"protocol":"hr_max"}`), "body.hr_max_bpm", []string{"required"}},
		{"hr max 250", ft(`{"protocol":"hr_max","hr_max_bpm":250}`), "body.hr_max_bpm", []string{"120 and 230 bpm"}},
		{"stage on an hr max", ft(`{"protocol":"hr_max","hr_max_bpm":190,"stage":3}`), "body.stage", []string{"30-15 IFT"}},

		{"no exercise", st(`{"sets":[{"load_kg":100,"reps":5}]}`), "body.exercise", []string{"required"}},
		{"no sets", st(`{"exercise":"back squat","sets":[]}`), "body.sets", []string{"1 to 20 sets"}},
		{"0 reps", st(`{"exercise":"back squat","sets":[{"load_kg":100,"reps":5},{"load_kg":110,"reps":0}]}`), "body.sets[1].reps", []string{"between 1 and 100 repetitions", "got 0"}},
		{"no load", st(`{"exercise":"back squat","sets":[{"load_kg":0,"reps":5}]}`), "body.sets[0].load_kg", []string{"more than 0"}},
		{"velocity rises with load", st(`{"exercise":"bench press","sets":[{"load_kg":40,"reps":5,"mpv_ms":1.00},{"load_kg":60,"reps":4,"mpv_ms":0.75},{"load_kg":80,"reps":3,"mpv_ms":0.80}]}`),
			"body.sets[2].mpv_ms", []string{"0.8 m/s at 80 kg", "0.75 m/s at the lighter 60 kg (set 2)", "falls as the load rises"}},
		{"velocity rises, heavier first", st(`{"exercise":"bench press","sets":[{"load_kg":80,"reps":3,"mpv_ms":0.9},{"load_kg":40,"reps":5,"mpv_ms":0.6}]}`),
			"body.sets[0].mpv_ms", []string{"0.9 m/s at 80 kg", "lighter 40 kg (set 2)"}},
		{"velocity absurd", st(`{"exercise":"bench press","sets":[{"load_kg":40,"reps":5,"mpv_ms":9}]}`), "body.sets[0].mpv_ms", []string{"0.05 and 3 m/s"}},
		{"rir 11", st(`{"exercise":"bench press","sets":[{"load_kg":40,"reps":5,"rir":11}]}`), "body.sets[0].rir", []string{"0 and 10"}},
		{"min velocity", st(`{"exercise":"bench press","min_velocity_ms":1.2,"sets":[{"load_kg":40,"reps":5}]}`), "body.min_velocity_ms", []string{"0.05 and 0.6"}},

		{"dj without drop", jp(`{"test":"dj","flight_ms":[500],"contact_ms":[200]}`), "body.drop_cm", []string{"required"}},
		{"dj without contact", jp(`{"test":"dj","drop_cm":40,"flight_ms":[500,480]}`), "body.contact_ms", []string{"2 attempts, 0 contact times"}},
		{"dj contact 50 ms", jp(`{"test":"dj","drop_cm":40,"flight_ms":[500],"contact_ms":[50]}`), "body.contact_ms[0]", []string{"80 and 1000 ms"}},
		{"contact on a cmj", jp(`{"test":"cmj","flight_ms":[500],"contact_ms":[200]}`), "body.contact_ms", []string{"drop jump"}},

		{"pct without vift", iv(`{"modality":"run","work_s":15,"rest_s":15,"reps":10,"pct_vift":90}`), "body.vift_kmh", []string{"required"}},
		{"pct 200", iv(`{"modality":"run","work_s":15,"rest_s":15,"reps":10,"pct_vift":200,"vift_kmh":19}`), "body.pct_vift", []string{"50 and 150"}},
		{"band upside down", iv(`{"modality":"run","work_s":240,"rest_s":180,"reps":4,"hr_lo_pct":95,"hr_hi_pct":90,"hr_max_bpm":190}`), "body.hr_hi_pct", []string{"below"}},
		{"band without hr max", iv(`{"modality":"run","work_s":240,"rest_s":180,"reps":4,"hr_lo_pct":85,"hr_hi_pct":90}`), "body.hr_max_bpm", []string{"required"}},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			r := c.rec
			err := Prepare(&r)
			var fe *devsync.FieldError
			if !errors.As(err, &fe) {
				t.Fatalf("want a field error on %s, got %v", c.field, err)
			}
			if fe.Field != c.field {
				t.Errorf("field %q (%v), want %q", fe.Field, err, c.field)
			}
			for _, w := range c.words {
				if !strings.Contains(err.Error(), w) {
					t.Errorf("%q does not say %q", err, w)
				}
			}
		})
	}
}

// The interval templates that prescribe from a test give each fighter's
// targets by the same formulas the hub stores: REFERENCES §14.2 [D]: V_IFT
// 19.0 km/h at 90 % for 15 s → 71.25 m, at 80 % for 180 s → 760 m; Tanaka
// 2001 at 24 years, 191.2 bpm, 90 % → 172.08 bpm.
func TestTemplatesPrescribe(t *testing.T) {
	short, _ := ProtocolByID("short_15_15")
	long, _ := ProtocolByID("long_3min_80")
	band, _ := ProtocolByID("long_4x4")
	approx(t, "short distance", fitness.RepDistanceM(19.0, short.PctVIFT, short.WorkS), 71.25, 1e-9)
	approx(t, "long distance", fitness.RepDistanceM(19.0, long.PctVIFT, long.WorkS), 760, 1e-9)
	approx(t, "band low", fitness.Band(fitness.TanakaHRmax(24), band.HRLoPct, band.HRHiPct).LoBpm, 172.08, 1e-9)
	for _, p := range Protocols {
		if p.PctVIFT != 0 && (p.PctVIFT < MinPctVIFT || p.PctVIFT > MaxPctVIFT) || p.HRHiPct < p.HRLoPct {
			t.Errorf("template %s carries a target validation would refuse: %+v", p.ID, p)
		}
		if p.PctVIFT != 0 && p.HRLoPct != 0 {
			t.Errorf("template %s carries both a distance and a heart-rate target", p.ID)
		}
	}
}
