package series_test

import (
	"encoding/json"
	"errors"
	"math"
	"sort"
	"strings"
	"testing"

	"cornerbook/server/records"
	"cornerbook/server/series"
	devsync "cornerbook/sync"
)

// Every calendar day of the range is present, across a month end, and a
// camp with no records gives nulls and zeros, never missing days.
func TestBuild_EveryDayPresent(t *testing.T) {
	c := newCamp(t, "")
	s := series.Build(c.input(nil), d(-2), d(1))
	want := []string{"2026-02-28", "2026-03-01", "2026-03-02", "2026-03-03"}
	if strings.Join(s.Days, " ") != strings.Join(want, " ") || s.Units != "kg" || s.Athlete != athleteID {
		t.Fatalf("days %v units %q athlete %q", s.Days, s.Units, s.Athlete)
	}
	for _, col := range [][]*float64{s.Mass.MorningKg, s.Mass.TrendKg, s.Mass.PathKg, s.Jump.MeanCm, s.Load.DailyAU, s.Load.Ratio, s.Wellness.Total} {
		if len(col) != 4 {
			t.Fatalf("a column of %d values for 4 days", len(col))
		}
		for _, v := range col {
			isNull(t, "value with no records", v)
		}
	}
	if len(s.Sparring.CapRounds) != 4 || s.Sparring.CapRounds[0] != 30 {
		t.Fatalf("caps %v, want the spar_density default of 30", s.Sparring.CapRounds)
	}
}

func TestCheckRange(t *testing.T) {
	for _, c := range []struct{ from, to, field string }{
		{"2026-02-30", d(0), "from"},
		{d(0), "tomorrow", "to"},
		{d(1), d(0), "to"},
		{d(0), d(series.MaxDays), "to"},
	} {
		err := series.CheckRange(c.from, c.to)
		var fe *devsync.FieldError
		if !errors.As(err, &fe) || fe.Field != c.field {
			t.Fatalf("CheckRange(%q, %q) = %v, want an error on %s", c.from, c.to, err, c.field)
		}
		s := series.Build(newCamp(t, "kg").input(nil), c.from, c.to)
		raw, _ := json.Marshal(s)
		if len(s.Days) != 0 || !strings.Contains(string(raw), `"days":[]`) || !strings.Contains(string(raw), `"trend_kg":[]`) {
			t.Fatalf("a refused range drew %d days: %s", len(s.Days), raw)
		}
	}
	if err := series.CheckRange(d(0), d(series.MaxDays-1)); err != nil {
		t.Fatal(err)
	}
}

// The JSON the screens draw from: field names are part of the contract.
func TestBuild_JSONShape(t *testing.T) {
	c := newCamp(t, "lb")
	c.mass(d(0), "07:00", 70)
	raw, err := json.Marshal(series.Build(c.input(nil), d(0), d(1)))
	if err != nil {
		t.Fatal(err)
	}
	var top map[string]json.RawMessage
	if err := json.Unmarshal(raw, &top); err != nil {
		t.Fatal(err)
	}
	keys := func(m map[string]json.RawMessage) string {
		var ks []string
		for k := range m {
			ks = append(ks, k)
		}
		sort.Strings(ks)
		return strings.Join(ks, ",")
	}
	if got := keys(top); got != "athlete,days,from,jump,load,mass,sparring,to,units,wellness" {
		t.Fatalf("top-level keys %s", got)
	}
	want := map[string]string{
		"mass":     "caution,limit_kg,loss_pct_week,morning_kg,path_kg,projections,trend_kg",
		"jump":     "band_high_cm,band_low_cm,baseline_cm,baseline_test_days,best_cm,mean_cm,min_test_days,noise_pct",
		"load":     "acute_au,caution,chronic_au,daily_au,low_ratio,planned_week_au,ratio,ratio_min_days,watch_ratio,week_level",
		"sparring": "alert_factor,cap_rounds,hard_cap_rounds,hard_caps,hard_rounds,rolling_hard_rounds,rolling_rounds,rounds,window_days",
		"wellness": "alert_threshold,baseline_checkins,baseline_mean,min_checkins,total,watch_threshold",
	}
	for k, w := range want {
		var m map[string]json.RawMessage
		if err := json.Unmarshal(top[k], &m); err != nil {
			t.Fatal(err)
		}
		if got := keys(m); got != w {
			t.Fatalf("%s keys %s, want %s", k, got, w)
		}
	}
	if !strings.Contains(string(raw), `"units":"lb"`) || !strings.Contains(string(raw), `"morning_kg":[70,null]`) {
		t.Fatalf("json %s", raw)
	}
}

// Mass: the morning mass is the day's earliest check-in by time; the trend
// is the EWMA with λ = 2/(7+1) = 0.25 seeded with the first morning mass of
// the 42 days up to the day, masses before camp start included (PRODUCT.md
// settled readings; recursion of Williams et al. 2017), skipping days
// without a mass: 72.0, 70.0, 69.6, 69.8, –, 69.5 give 72, 71.5, 71.025,
// 70.71875, 70.71875, 70.4140625 [D]. The default path runs straight from 70 kg
// to limit × 1.05 seven days before a day-before weigh-in; with the knee
// at 65 kg 56 days in, day 21 is 68.1250 kg (REFERENCES.md §6.1 linear
// example), and the weigh-in day is the limit.
func TestBuild_MassTrendAndDefaultPath(t *testing.T) {
	c := newCamp(t, "kg")
	limit := 65 / 1.05
	c.setBout(records.Bout{CampStart: d(0), WeighIn: d(63) + "T10:00:00+01:00", WeighInType: "day_before", BoutDay: d(64),
		WeightClass: records.ClassCustom, LimitKg: limit, StartMassKg: 70})
	c.mass(d(-1), "07:00", 72) // before the camp: seeds the trend
	c.mass(d(0), "07:30", 71.0)
	c.mass(d(0), "07:05", 70.0) // logged later, weighed earlier: the morning mass
	c.mass(d(1), "07:00", 69.6)
	c.mass(d(2), "07:00", 69.8)
	c.mass(d(4), "07:00", 69.5)
	s := series.Build(c.input(nil), d(-1), d(64))
	m := s.Mass
	near(t, "morning d(-1)", m.MorningKg[0], 72, 0)
	near(t, "morning d(0)", m.MorningKg[1], 70, 0)
	for i, want := range []float64{72, 71.5, 71.025, 70.71875, 70.71875, 70.4140625} {
		near(t, "trend", m.TrendKg[i], want, 1e-9)
	}
	isNull(t, "morning d(3)", m.MorningKg[4])
	isNull(t, "path before camp start", m.PathKg[0])
	near(t, "path d(0)", m.PathKg[1], 70, 1e-9)
	near(t, "path d(21)", m.PathKg[22], 68.1250, 0.0005)
	near(t, "path d(56)", m.PathKg[57], 65, 1e-9)
	near(t, "path d(60)", m.PathKg[61], 65+(limit-65)*4/7, 1e-9)
	near(t, "path at weigh-in", m.PathKg[64], limit, 1e-9)
	isNull(t, "path on the bout day, after the weigh-in", m.PathKg[65])
	near(t, "limit", m.LimitKg, limit, 1e-12)
	if m.WeighInDay != d(63) || m.Caution == "" {
		t.Fatalf("weigh-in day %q caution %q", m.WeighInDay, m.Caution)
	}
}

// Projections: morning masses falling exactly 0.1 kg a day for 14 days
// have a least-squares slope of −0.1 kg/day; the EWMA of the ramp
// x_k = 70 − 0.1k after 13 steps is x_13 + 0.3·(1 − 0.75^13) = 68.99287 kg
// [D, from the recursion]. Ten days before the weigh-in, the slope
// projection is 68.99287 − 1.0 = 67.99287 kg and the 1 %/week projection
// 68.99287 × 0.99^(10/7) = 68.00938 kg (constant-% path, REFERENCES.md
// §6.1). The mass_loss_fast value is 0.7 / 68.99287 = 1.0146 %/week.
func TestBuild_Projections(t *testing.T) {
	c := newCamp(t, "kg")
	c.setBout(records.Bout{CampStart: d(0), WeighIn: d(23) + "T10:00:00+01:00", WeighInType: "day_before", BoutDay: d(24),
		WeightClass: records.ClassCustom, LimitKg: 66, StartMassKg: 70})
	for k := 0; k < 14; k++ {
		c.mass(d(k), "07:00", math.Round((70-0.1*float64(k))*10)/10)
	}
	s := series.Build(c.input(nil), d(0), d(24))
	m := s.Mass
	if len(m.Projections) != 2 || m.Projections[0].Method != series.ProjectSlope || m.Projections[1].Method != series.ProjectRate ||
		m.Projections[0].Label == "" || !strings.Contains(m.Projections[1].Label, "1 %/week") {
		t.Fatalf("projections %+v", m.Projections)
	}
	near(t, "rate", m.Projections[1].RatePctWeek, 1, 0)
	near(t, "trend d(13)", m.TrendKg[13], 68.99287, 0.00001)
	near(t, "loss %/week", m.LossPctWeek[13], 1.014598, 0.00001)
	near(t, "slope projection", m.Projections[0].WeighInKg[13], 67.99287, 0.00001)
	near(t, "rate projection", m.Projections[1].WeighInKg[13], 68.00938, 0.00001)
	// Six masses: under the 7 check-ins mass_loss_fast needs.
	isNull(t, "loss with 6 masses", m.LossPctWeek[5])
	isNull(t, "slope projection with 6 masses", m.Projections[0].WeighInKg[5])
	if m.Projections[1].WeighInKg[5] == nil {
		t.Fatal("no rate projection on day 5")
	}
	// After the weigh-in nothing is projected.
	isNull(t, "projection after the weigh-in", m.Projections[1].WeighInKg[24])
	near(t, "projection on the weigh-in day is the trend", m.Projections[1].WeighInKg[23], val(m.TrendKg[23]), 1e-12)
}

// Load: daily load = rpe × minutes summed over the day's sessions
// (Foster et al. 2001: 60 min at RPE 7 = 420 AU); acute and chronic EWMA
// with N = 7 and 28, both seeded with day 1's load. Loads 300, 0, 450,
// 200, 0, 500, 350, 400, 0, 600 AU give the table of REFERENCES.md §4.2
// (Williams et al. 2017): day 10 acute 329.1561, chronic 296.1783, ratio
// 1.1113.
func TestBuild_LoadEWMA(t *testing.T) {
	c := newCamp(t, "kg")
	loads := []float64{300, 0, 450, 200, 0, 500, 350, 400, 0, 600}
	for i, l := range loads {
		if l > 0 {
			c.session(d(i), l/5, 5)
		}
	}
	table := [][3]float64{
		{300, 300, 1}, {225, 279.3103, 0.8056}, {281.25, 291.0820, 0.9662}, {260.9375, 284.8005, 0.9162},
		{195.7031, 265.1591, 0.7381}, {271.7773, 281.3550, 0.9660}, {291.3330, 286.0892, 1.0183},
		{318.4998, 293.9451, 1.0835}, {238.8748, 273.6730, 0.8728}, {329.1561, 296.1783, 1.1113},
	}
	// The ratio is shown from the 7th day on record (load_spike.min_days 7).
	s := series.Build(c.input(map[string]map[string]float64{records.RuleLoadSpike: {"min_days": 7}}), d(-2), d(9))
	l := s.Load
	isNull(t, "load before the first record", l.DailyAU[0])
	isNull(t, "acute before the first record", l.AcuteAU[1])
	for i, row := range table {
		near(t, "daily load", l.DailyAU[2+i], loads[i], 1e-9)
		near(t, "acute", l.AcuteAU[2+i], row[0], 0.0005)
		near(t, "chronic", l.ChronicAU[2+i], row[1], 0.0005)
		if i < 6 {
			isNull(t, "ratio before 7 days on record", l.Ratio[2+i])
		} else {
			near(t, "ratio", l.Ratio[2+i], row[2], 0.0005)
		}
	}
	// The default needs 28 days on record (PRODUCT.md load_spike).
	if r := series.Build(c.input(nil), d(0), d(9)).Load.Ratio[9]; r != nil {
		t.Fatalf("ratio %v shown after 10 days", *r)
	}
	if l.WatchAt != 1.5 || l.LowAt != 0.8 || l.Caution == "" {
		t.Fatalf("load zones %v %v caution %q", l.WatchAt, l.LowAt, l.Caution)
	}
	// Two sessions on one day add up: 60 × 7 + 45 × 5 = 420 + 225 = 645 AU.
	c2 := newCamp(t, "kg")
	c2.session(d(0), 60, 7)
	c2.session(d(0), 45, 5)
	near(t, "two sessions", series.Build(c2.input(nil), d(0), d(0)).Load.DailyAU[0], 645, 1e-9)
}

// Jump: the day's value is the mean of its valid attempts (Claudino et al.
// 2017), the best shown beside it; the baseline is the mean of the daily
// values over the 28 days before (≥ 5 test days), the noise the CV of
// those values with a 2 % floor (PRODUCT.md jump_drop). Daily means 40,
// 41, 39, 40, 40 cm: baseline 40, sample SD 0.707107, CV 1.7678 % → the 2 %
// floor, band 39.2–40.8 cm [D]. A force-plate jump on a mat day is not
// mixed in. A flight of 500 ms is 30.6563 cm (h = g·t²/8, REFERENCES.md §1.3).
func TestBuild_JumpBaselineAndBand(t *testing.T) {
	c := newCamp(t, "kg")
	for i, tri := range [][]float64{{39.5, 40, 40.5}, {41, 41, 41}, {38.5, 39, 39.5}, {40, 40, 40}, {40.2, 39.8, 40}} {
		c.jump(d([]int{0, 2, 4, 7, 9}[i]), tri...)
	}
	c.jump(d(11), 36, 37, 38)
	c.add(records.KindJump, d(11), "10:00", records.Jump{Test: "cmj", Method: "force_plate", HeightsCm: []float64{50, 50, 50}})
	c.add(records.KindJump, d(13), "09:30", records.Jump{Test: "cmj", Method: "mat", FlightMs: []float64{500}})
	s := series.Build(c.input(nil), d(0), d(13))
	j := s.Jump
	near(t, "mean d(0)", j.MeanCm[0], 40, 1e-9)
	near(t, "best d(0)", j.BestCm[0], 40.5, 0)
	isNull(t, "no test on d(1)", j.MeanCm[1])
	isNull(t, "baseline with 4 test days", j.BaselineCm[9])
	if j.TestDays[9] != 4 || j.TestDays[11] != 5 {
		t.Fatalf("test days %v", j.TestDays)
	}
	near(t, "mean d(11), mat only", j.MeanCm[11], 37, 1e-9)
	near(t, "best d(11)", j.BestCm[11], 38, 0)
	near(t, "baseline d(11)", j.BaselineCm[11], 40, 1e-9)
	near(t, "noise d(11)", j.NoisePct[11], 2, 0)
	near(t, "band low", j.BandLowCm[11], 39.2, 1e-9)
	near(t, "band high", j.BandHighCm[11], 40.8, 1e-9)
	near(t, "baseline on a day without a test", j.BaselineCm[10], 40, 1e-9)
	near(t, "flight-time height", j.MeanCm[13], 30.6563, 0.0005)
}

// Sparring: rounds per day, all and hard (intensity 3), the rolling 7-day
// totals spar_density counts, and the cap of the day's plan week, else
// the default of 30 (PRODUCT.md spar_density; common practice).
func TestBuild_Sparring(t *testing.T) {
	c := newCamp(t, "kg")
	c.setBout(records.Bout{CampStart: d(0), WeighIn: d(40) + "T10:00:00+01:00", WeighInType: "day_before", BoutDay: d(41),
		WeightClass: records.ClassCustom, LimitKg: 66, StartMassKg: 70, ReferenceLoadAU: 2500,
		Weeks: []records.Week{{Week: 1, Level: "medium", SparCapRounds: ip(20)}, {Week: 2, Level: "heavy"}}})
	c.rounds(d(0), "spar", 3, 3)
	c.rounds(d(0), "spar", 2, 2)
	c.rounds(d(0), "pads", 4, 3)
	c.rounds(d(3), "spar", 6, 3)
	c.rounds(d(8), "spar", 4, 1)
	s := series.Build(c.input(nil), d(-1), d(8))
	p := s.Sparring
	check := func(what string, got []int, want []int) {
		t.Helper()
		for i := range want {
			if got[i] != want[i] {
				t.Fatalf("%s %v, want %v", what, got, want)
			}
		}
	}
	//          d-1 d0 d1 d2 d3 d4 d5 d6 d7 d8
	check("rounds", p.Rounds, []int{0, 5, 0, 0, 6, 0, 0, 0, 0, 4})
	check("hard", p.HardRounds, []int{0, 3, 0, 0, 6, 0, 0, 0, 0, 0})
	check("rolling", p.RollingRounds, []int{0, 5, 5, 5, 11, 11, 11, 11, 6, 10})
	check("rolling hard", p.RollingHard, []int{0, 3, 3, 3, 9, 9, 9, 9, 6, 6})
	check("cap", p.CapRounds, []int{30, 20, 20, 20, 20, 20, 20, 20, 30, 30})
	if p.HardCap != 15 || p.AlertFactor != 1.25 || p.WindowDays != 7 {
		t.Fatalf("caps %+v", p)
	}
	// The planned week load off_plan compares with: level fraction ×
	// reference week (medium 0.7, heavy 1.0 × 2500 AU; common practice).
	l := s.Load
	if l.WeekLevel[0] != "" || l.WeekLevel[1] != "medium" || l.WeekLevel[8] != "heavy" {
		t.Fatalf("week levels %q", l.WeekLevel)
	}
	isNull(t, "planned load before the camp", l.PlannedWeekAU[0])
	near(t, "planned medium week", l.PlannedWeekAU[1], 1750, 1e-9)
	near(t, "planned heavy week", l.PlannedWeekAU[8], 2500, 1e-9)
}

// Wellness: total of the five items (McLean et al. 2010), each from the
// day's earliest check-in that has it (PRODUCT.md settled readings); threshold = 28-day mean − 1.5 SD
// (wellness_drop watch level) once 7 check-ins are in. REFERENCES.md §5.3:
// baseline 19, 20, 18, 21, 19, 17, 19 has mean 19.0 and sample SD
// 1.290994, so the watch threshold is 17.063508 and the alert one
// (z = −2.0) 16.418011 [D]; today's 15 is below both.
func TestBuild_Wellness(t *testing.T) {
	c := newCamp(t, "kg")
	for i, tot := range []int{19, 20, 18, 21, 19, 17, 19} {
		c.wellness(d(i), "07:00", tot)
	}
	c.add(records.KindCheckin, d(7), "06:00", records.Checkin{Mood: ip(5)}) // the day's mood
	c.wellness(d(7), "09:00", 22)
	c.wellness(d(7), "07:00", 15) // items 3, 3, 3, 3, 3: four of them are the day's
	s := series.Build(c.input(nil), d(0), d(7))
	w := s.Wellness
	near(t, "total d(7)", w.Total[7], 3*4+5, 0)
	if w.Checkins[6] != 6 || w.Checkins[7] != 7 || w.MinCheckins != 7 {
		t.Fatalf("check-ins %v, min %d", w.Checkins, w.MinCheckins)
	}
	isNull(t, "threshold with 6 check-ins", w.WatchBelow[6])
	near(t, "mean", w.Mean[7], 19, 1e-9)
	near(t, "watch threshold", w.WatchBelow[7], 17.063508, 0.000001)
	near(t, "alert threshold", w.AlertBelow[7], 16.418011, 0.000001)
}

// Jumps (PRODUCT.md settled readings): with two CMJ tests on one day, the
// earliest by at is the day's monitoring test; the later one enters
// neither the day's value nor the baseline. 35.2/37.2/36.0 then
// 41.0/41.5/40.8 give 36.1 cm, not 38.6 cm [D].
func TestBuild_FirstJumpTestOfTheDay(t *testing.T) {
	c := newCamp(t, "kg")
	c.add(records.KindJump, d(0), "11:05", records.Jump{Test: "cmj", Method: "mat", HeightsCm: []float64{41.0, 41.5, 40.8}})
	c.add(records.KindJump, d(0), "09:40", records.Jump{Test: "cmj", Method: "mat", HeightsCm: []float64{35.2, 37.2, 36.0}})
	s := series.Build(c.input(nil), d(0), d(0))
	near(t, "day value", s.Jump.MeanCm[0], (35.2+37.2+36.0)/3, 1e-9)
	near(t, "best", s.Jump.BestCm[0], 37.2, 0)
}
