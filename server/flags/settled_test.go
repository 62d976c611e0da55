package flags

import (
	"encoding/json"
	"math"
	"strings"
	"testing"
	"time"

	"cornerbook/server/flags/day"
	devsync "cornerbook/sync"
)

// Tests of the settled readings of the flag rules (PRODUCT.md, "Settled
// readings of the flag rules"), one reading per test.

// nowAfterHour is a hub time long after every test day's check-in hour.
var nowAfterHour = time.Date(2027, 1, 1, 12, 0, 0, 0, time.UTC)

// boutRecord is a bout record for c's athlete.
func boutRecord(id string, body map[string]any) devsync.Record {
	b, _ := json.Marshal(body)
	return devsync.Record{ID: id, Kind: kindBout, Athlete: athleteID, At: d(0) + "T08:00:00+01:00", Body: b}
}

// Reading "Mass trend": the trend is seeded with the first morning mass
// within the 42 days up to the day, masses before camp start count, and
// mass_loss_fast states its slope as % of that trend — so a fighter with
// seven mornings before camp start gets no "+Inf %" alert. Loss rates:
// 0.7 vs 1.4 %/week, Garthe et al. 2011.
func TestSettledMassTrendCountsMassesBeforeCampStart(t *testing.T) {
	c := &camp{}
	c.standardBout(nil) // camp starts d(0)
	// 70 kg falling 0.05 kg a day (0.5 %/week): seven mornings before camp.
	for i := -7; i < 0; i++ {
		c.mass(d(i), 70-0.05*float64(i+7))
	}
	fs := c.run(d(-1))
	for _, f := range rule(fs, RuleMassLossFast) {
		if f.Status == StatusFlag {
			t.Fatalf("false mass_loss_fast before camp start: %s", describe(fs))
		}
	}
	// On camp start the trend includes the earlier mornings: the EWMA
	// (λ = 2/(7+1), seeded with the first mass) of the eight masses.
	c.mass(d(0), 69.6)
	kg := []float64{70, 69.95, 69.9, 69.85, 69.8, 69.75, 69.7, 69.6}
	want := kg[0]
	for _, m := range kg[1:] {
		want += 0.25 * (m - want) // EWMA recursion, λ = 2/(N+1), N = 7 (Williams et al. 2017)
	}
	tr, _, _, _, ok := mustEngine(t, c.input(d(0))).trend()
	if !ok || math.Abs(tr-want) > 1e-9 {
		t.Fatalf("trend %.6f, want %.6f over the masses before camp start too", tr, want)
	}
	// A fast loss before camp start is still stated against a real trend.
	c2 := &camp{}
	c2.standardBout(nil)
	for i := -14; i < 0; i++ {
		c2.mass(d(i), 72-0.2*float64(i+14)) // 0.2 kg a day ≈ 2 %/week
	}
	f := one(t, c2.run(d(-1)), RuleMassLossFast)
	wantLevel(t, f, LevelAlert, StatusFlag)
	if f.Value == nil || math.IsInf(*f.Value, 0) || *f.Value < 1.5 || *f.Value > 2.5 {
		t.Fatalf("loss %v %%/week: %s", f.Value, f.Reason)
	}
}

func mustEngine(t *testing.T, in Input) *engine {
	t.Helper()
	e, ok := newEngine(&in)
	if !ok {
		t.Fatal("bad input")
	}
	return e
}

// Reading "Several check-ins on one day": mass and each wellness item come
// from the earliest check-in of the day (by at) that has the field; usg is
// the highest reading of the day.
func TestSettledSeveralCheckinsOneDay(t *testing.T) {
	c := &camp{}
	wellnessBaseline(c) // d(0)..d(29), totals around 19
	// 07:10 morning check-in with mass and four items; 06:50 a usg strip
	// alone; 18:00 an evening check-in with every item low and a lower
	// mass.
	c.add(kindCheckin, d(30), map[string]any{"mass_kg": 70.4, "fatigue": 4, "sleep": 4, "soreness": 4, "stress": 4})
	c.last().At = d(30) + "T07:10:00+01:00"
	morning := c.last().ID
	c.add(kindCheckin, d(30), map[string]any{"usg": 1.012})
	c.last().At = d(30) + "T06:50:00+01:00"
	c.add(kindCheckin, d(30), map[string]any{"mass_kg": 69.1, "fatigue": 1, "sleep": 1, "soreness": 1, "stress": 1, "mood": 4, "usg": 1.026})
	c.last().At = d(30) + "T18:00:00+01:00"
	evening := c.last().ID
	e := mustEngine(t, c.input(d(30)))
	if m, id, ok := e.morningMass(e.today); !ok || m != 70.4 || id != morning {
		t.Fatalf("morning mass %v from %s, want 70.4 from the 07:10 check-in", m, id)
	}
	total, ids, ok := e.dayWellness(e.today)
	// fatigue, sleep, soreness, stress from 07:10 (4 each), mood from 18:00.
	if !ok || total != 20 || len(ids) != 2 || ids[0] != morning || ids[1] != evening {
		t.Fatalf("wellness total %v from %v, want 20 from both check-ins", total, ids)
	}
	fs := c.run(d(30))
	// The evening's 1s are not the day's items: no "item at its worst".
	for _, f := range rule(fs, RuleWellnessDrop) {
		if f.Status == StatusFlag {
			t.Errorf("wellness flag from a later check-in: %s", f.Reason)
		}
	}
	// usg: the highest reading of the day, whatever its time.
	f := one(t, fs, RuleHydration)
	approx(t, "usg", f.Value, 1.026, 1e-9)
}

// Reading "missing_checkin": from the athlete's first record (not athlete,
// settings, bout or note) through the bout day; after it nothing until the
// next camp start; with no bout, every day from the first record.
func TestSettledMissingCheckinSpan(t *testing.T) {
	c := &camp{}
	c.add(kindNote, d(-20), map[string]any{"text": "signed up"})
	c.standardBout(nil) // camp d(0), weigh-in d(56), bout d(57)
	second := boutRecord("bout-2", map[string]any{"camp_start": d(100), "weigh_in": d(140) + "T10:00:00+01:00",
		"weigh_in_type": "day_before", "bout_day": d(141), "limit_kg": 63.5, "start_mass_kg": 69})
	missing := func(off int) bool {
		in := c.input(d(off))
		in.Now = nowAfterHour
		in.Bouts = []devsync.Record{second}
		return len(rule(Compute(in), RuleMissingCheckin)) == 1
	}
	// Before the first record (a note does not count): nothing.
	for _, off := range []int{-20, -10, -4} {
		if missing(off) {
			t.Errorf("%s: flagged before the athlete's first record", d(off))
		}
	}
	c.session(d(-3), 60, 5, "") // first record, before camp start
	for _, off := range []int{-3, -1, 0, 30, 56, 57} {
		if !missing(off) {
			t.Errorf("%s: no flag inside the span", d(off))
		}
	}
	// After the bout day, until the next camp start: nothing.
	for _, off := range []int{58, 70, 99} {
		if missing(off) {
			t.Errorf("%s: flagged between camps", d(off))
		}
	}
	if !missing(100) {
		t.Errorf("%s: the next camp start is flagged again", d(100))
	}
	// A check-in at any time of the day clears it.
	c.add(kindCheckin, d(30), map[string]any{"usg": 1.01})
	c.last().At = d(30) + "T21:40:00+01:00"
	if missing(30) {
		t.Errorf("an evening check-in did not clear the day")
	}
	// No bout at all: every day from the first record.
	c.bout = nil
	in := c.input(d(200))
	in.Now = nowAfterHour
	one(t, Compute(in), RuleMissingCheckin)
}

// Reading "mass_loss_fast": silent from 7 days before the weigh-in's
// calendar day through the bout day, and after the bout until the next
// camp start.
func TestSettledMassLossFastSilence(t *testing.T) {
	// Weigh-in on d(56) (day before), bout d(57); 2 %/week loss throughout.
	c := &camp{}
	c.standardBout(nil)
	for i := 30; i <= 80; i++ {
		c.mass(d(i), 70-0.2*float64(i-30))
	}
	raised := func(off int) bool {
		for _, f := range rule(c.run(d(off)), RuleMassLossFast) {
			if f.Status == StatusFlag {
				return true
			}
		}
		return false
	}
	if !raised(48) {
		t.Fatalf("%s: no flag 8 days before the weigh-in", d(48))
	}
	for _, off := range []int{49, 52, 56, 57} {
		if raised(off) {
			t.Errorf("%s: flagged in the final days or on the bout day", d(off))
		}
	}
	for _, off := range []int{58, 65, 80} {
		if raised(off) {
			t.Errorf("%s: flagged after the bout", d(off))
		}
	}
	// A weigh-in late in the venue's evening: its calendar day counts,
	// not the UTC one.
	c.standardBout(map[string]any{"weigh_in": d(56) + "T23:30:00-05:00"})
	if raised(49) {
		t.Errorf("final days counted from the UTC day of the weigh-in")
	}
}

// Reading "Taper": load_spike's low-ratio info is silent in taper weeks
// only (level "taper"); a low week is not a taper. Ratio zones: Gabbett
// 2016 (< 0.8 low).
func TestSettledLowRatioSilentOnlyInTaperWeeks(t *testing.T) {
	for _, tc := range []struct {
		level string
		info  bool
	}{{"taper", false}, {"low", true}, {"rest", true}} {
		c := &camp{}
		weeks := []map[string]any{}
		for k := 1; k <= 8; k++ {
			lvl := "heavy"
			if k == 8 {
				lvl = tc.level
			}
			weeks = append(weeks, map[string]any{"week": k, "level": lvl})
		}
		c.standardBout(map[string]any{"weeks": weeks})
		for i := 0; i < 49; i++ {
			c.load(d(i), 600)
		}
		for i := 49; i < 53; i++ {
			c.load(d(i), 100)
		}
		got := false
		for _, f := range rule(c.run(d(52)), RuleLoadSpike) {
			got = got || (f.Status == StatusFlag && f.Level == LevelInfo)
		}
		if got != tc.info {
			t.Errorf("week 8 %s: low-ratio info %v, want %v", tc.level, got, tc.info)
		}
	}
}

// Reading "Taper": the taper-cut info is one flag on the plan from camp
// start to the end of the last taper week (cut outside 41–60 %, Bosquet et
// al. 2007).
func TestSettledTaperCutInfoSpan(t *testing.T) {
	c := &camp{}
	weeks := []map[string]any{}
	for k := 1; k <= 8; k++ {
		lvl := "medium"
		if k >= 7 {
			lvl = "taper"
		}
		weeks = append(weeks, map[string]any{"week": k, "level": lvl})
	}
	c.standardBout(map[string]any{"weeks": weeks, "reference_load_au": 3000})
	in := func(off int) Input {
		in := c.input(d(off))
		in.Settings = map[string]map[string]float64{RuleOffPlan: {"level_taper": 0.8}} // a 20 % cut
		return in
	}
	taperInfos := func(off int) []Flag {
		var out []Flag
		for _, f := range rule(Compute(in(off)), RuleOffPlan) {
			if strings.Contains(f.Title, "Taper") {
				out = append(out, f)
			}
		}
		return out
	}
	if fs := taperInfos(-1); len(fs) != 0 {
		t.Errorf("before camp start: %s", describe(fs))
	}
	for _, off := range []int{0, 20, 43, 55} {
		if fs := taperInfos(off); len(fs) != 1 {
			t.Errorf("%s: want one taper-cut info, got %s", d(off), describe(fs))
		}
	}
	if fs := taperInfos(56); len(fs) != 0 {
		t.Errorf("after the last taper week: %s", describe(fs))
	}
}

// Reading "Taper": level fractions of the reference week rest 0.3, low 0.5,
// medium 0.7, medium-heavy 0.85, heavy 1.0, taper 0.5 (common practice, no
// source; the taper's 50 % cut sits in Bosquet et al. 2007's 41–60 %); and
// off_plan projects from day 3 of a camp week.
func TestSettledOffPlanFractionsAndDayThree(t *testing.T) {
	for lvl, frac := range map[string]float64{"rest": 0.3, "low": 0.5, "medium": 0.7, "medium_heavy": 0.85, "heavy": 1.0, "taper": 0.5} {
		c := &camp{}
		c.standardBout(map[string]any{"weeks": []map[string]any{{"week": 1, "level": lvl}}, "reference_load_au": 2000})
		// Day 2 of week 1: forming.
		c.load(d(0), 2000)
		if f := one(t, c.run(d(1)), RuleOffPlan); f.Status != StatusForming {
			t.Errorf("%s: day 2 projected: %s", lvl, f.Reason)
		}
		// Day 3: 2000 AU in 3 days projects to 4667 AU, far above.
		f := one(t, c.run(d(2)), RuleOffPlan)
		wantLevel(t, f, LevelInfo, StatusFlag)
		approx(t, lvl+" planned", f.Reference, frac*2000, 1e-9)
		if strings.Contains(f.Reason, "_") {
			t.Errorf("level id in the reason: %s", f.Reason)
		}
	}
}

// Reading "wellness_drop": the baseline SD has a floor of 1.0 point. A
// baseline of 19 and 20 (SD ≈ 0.5) and a total of 18: without the floor
// z ≈ −2.8 (alert); with it z = −1.5 at most (watch), McLean et al. 2010
// items.
func TestSettledWellnessSDFloorOnePoint(t *testing.T) {
	c := &camp{}
	for i := 0; i < 28; i++ {
		c.wellnessTotal(d(i), 19+i%2)
	}
	c.wellnessTotal(d(28), 18)
	f := one(t, c.run(d(28)), RuleWellnessDrop)
	if f.Level == LevelAlert {
		t.Fatalf("a one-point dip raised an alert: %s", f.Reason)
	}
	wantLevel(t, f, LevelWatch, StatusFlag)
	approxV(t, "sd_used", f.Details["sd_used"], 1.0, 0)
}

// Reading "Jumps": valid attempts are flight times 200–1000 ms or typed
// heights 4.9–122.6 cm (REFERENCES §1.2; h = g·t²/8 gives 4.9 cm at 200 ms
// and 122.6 cm at 1000 ms, Asmussen & Bonde-Petersen flight-time formula,
// REFERENCES §1.1), the same range as entry. A
// 1000 ms flight counts; a 1.5 cm typo does not enter the value or the
// noise estimate.
func TestSettledJumpValidRange(t *testing.T) {
	b := JumpBody{FlightMs: []float64{1000, 199, 200}, HeightsCm: []float64{122.625, 1, 4.905}}
	if h := ValidHeights(&b); len(h) != 2 || math.Abs(h[0]-122.625) > 0.001 || math.Abs(h[1]-4.905) > 0.001 {
		t.Fatalf("flight heights %v", h)
	}
	b = JumpBody{HeightsCm: []float64{1.5, 4.8, 4.9, 122.6, 122.7}}
	if h := ValidHeights(&b); len(h) != 2 || h[0] != 4.9 || h[1] != 122.6 {
		t.Fatalf("typed heights %v", h)
	}
	// A typo does not inflate the noise: five steady days, a 1.5 cm typo,
	// then a real 11 % drop is still an alert.
	c := &camp{}
	for i := 0; i < 6; i++ {
		c.jump(d(i*2), 40, 40.2, 39.8)
	}
	c.jump(d(13), 1.5)
	if fs := rule(c.run(d(13)), RuleJumpDrop); len(fs) != 0 {
		t.Fatalf("the typo drove a flag: %s", describe(fs))
	}
	c.jump(d(14), 35.6, 35.6, 35.6) // 11 % below 40
	wantLevel(t, one(t, c.run(d(14)), RuleJumpDrop), LevelAlert, StatusFlag)
}

// Reading "Jumps": when a day holds several CMJ tests, the earliest by at
// is the day's monitoring test; later tests are shown but enter neither
// the day's value nor the baseline. 35.2/37.2/36.0 then 41.0/41.5/40.8
// must give 36.1 cm, not 38.6 cm; typical CMJ noise: Claudino et al. 2017.
func TestSettledFirstJumpTestOfTheDay(t *testing.T) {
	c := &camp{}
	for i := 0; i < 6; i++ {
		c.jump(d(i*3), 41.0, 41.2, 40.8) // baseline 41.0 cm
	}
	first := c.jump(d(20), 35.2, 37.2, 36.0)
	c.last().At = d(20) + "T09:40:00+01:00"
	c.jump(d(20), 41.0, 41.5, 40.8)
	c.last().At = d(20) + "T11:05:00+01:00"
	// Logged in the other order: the test's time decides, not the log order.
	c.recs[len(c.recs)-1], c.recs[len(c.recs)-2] = c.recs[len(c.recs)-2], c.recs[len(c.recs)-1]
	f := one(t, c.run(d(20)), RuleJumpDrop)
	approx(t, "day value", f.Value, (35.2+37.2+36.0)/3, 1e-9)
	wantLevel(t, f, LevelAlert, StatusFlag) // 12 % below 41.0
	if f.Inputs[0] != first || f.Details["later_tests"] != 1 {
		t.Errorf("inputs %v details %v", f.Inputs, f.Details)
	}
	if !strings.Contains(f.Reason, "36.1 cm") || strings.Contains(f.Reason, "38.6") || !strings.Contains(f.Reason, "later test") {
		t.Errorf("reason %q", f.Reason)
	}
	// The later test does not enter the next days' baseline either.
	c.jump(d(21), 41.0, 41.0, 41.0)
	e := mustEngine(t, c.input(d(21)))
	j, ok := e.jumpOn(e.today-1, "")
	if !ok || math.Abs(j.mean-36.133333333) > 1e-6 {
		t.Fatalf("baseline day value %v", j.mean)
	}
}

// Reading "Default path": start mass below limit × factor gives a path
// flat at the start mass, then straight to the limit at the weigh-in
// (common practice, no source).
func TestSettledDefaultPathBelowKnee(t *testing.T) {
	// Limit 63.5 × 1.05 = 66.675 kg; start 65.0 kg.
	p := DefaultPath(0, 56, 65.0, 63.5, 1.05, 7)
	for _, tc := range []struct {
		d    int
		want float64
	}{{0, 65}, {25, 65}, {49, 65}, {52, 65 - 1.5*3/7.0}, {56, 63.5}} {
		if got := PathAt(p, day.Number(tc.d)); math.Abs(got-tc.want) > 1e-9 {
			t.Errorf("day %d: path %.4f, want %.4f", tc.d, got, tc.want)
		}
	}
}

// Reading "First record" (load_spike, monotony, residual_gap): the
// earliest day of a record naming the athlete, skipping athlete,
// settings, bout and note kinds.
func TestSettledFirstRecordSkipsNotes(t *testing.T) {
	c := &camp{}
	c.add(kindNote, d(0), map[string]any{"text": "joined the gym"})
	c.load(d(20), 500)
	fs := c.run(d(22))
	f := one(t, fs, RuleLoadSpike)
	if f.Status != StatusForming || !strings.Contains(f.Reason, ": 3 of 28 days") {
		t.Errorf("load ratio counted the note's day: %s", f.Reason)
	}
	if f := one(t, fs, RuleMonotony); !strings.Contains(f.Reason, ": 3 of 7 days") {
		t.Errorf("monotony counted the note's day: %s", f.Reason)
	}
}

// Reading "First record": a record of any kind but athlete, settings,
// bout and note starts the load series, even one the rules do not read
// (a weigh-in, a test), when the caller names its day.
func TestSettledFirstRecordOfAnyKind(t *testing.T) {
	c := &camp{}
	c.load(d(20), 500)
	in := c.input(d(22))
	in.FirstDay = d(10)
	f := one(t, Compute(in), RuleLoadSpike)
	if !strings.Contains(f.Reason, ": 13 of 28 days") {
		t.Errorf("load days not counted from the first record: %s", f.Reason)
	}
	// Older than the records given: counted from the first day they cover.
	in.FirstDay, in.From = d(-300), d(5)
	if f := one(t, Compute(in), RuleLoadSpike); !strings.Contains(f.Reason, ": 18 of 28 days") {
		t.Errorf("load days before the records given: %s", f.Reason)
	}
}

// Reading "mass_loss_fast": the weigh-in's calendar day is the venue's.
// A weigh-in at 2026-04-28T02:00Z in a venue at UTC−5 (America/New_York
// in April, IANA tz database) is on 27 April there.
func TestSettledWeighInDayAtTheVenue(t *testing.T) {
	got, ok := WeighInDay("2026-04-28T02:00:00Z", "America/New_York")
	if want := day.MustParse("2026-04-27"); !ok || got != want {
		t.Fatalf("venue day %s, want %s", got, want)
	}
	if got, _ := WeighInDay("2026-04-28T02:00:00Z", ""); got != day.MustParse("2026-04-28") {
		t.Fatalf("without a zone the written date counts: %s", got)
	}
}

// Reading "First record": before the athlete's first record (a note does
// not count) there is no load, sparring or check-in series, so no flag
// speaks of one; the plan's own checks still do.
func TestSettledNothingBeforeTheFirstRecord(t *testing.T) {
	c := &camp{}
	weeks := []map[string]any{{"week": 1, "level": "heavy"}, {"week": 8, "level": "taper"}}
	c.standardBout(map[string]any{"weeks": weeks, "reference_load_au": 3000})
	c.add(kindNote, d(0), map[string]any{"text": "arrives on Thursday"})
	c.session(d(10), 60, 5, "")
	in := c.input(d(4))
	in.Now = nowAfterHour
	in.Settings = map[string]map[string]float64{RuleOffPlan: {"level_taper": 0.8}} // a 20 % taper cut
	for _, f := range Compute(in) {
		switch f.Rule {
		case RuleMassAbovePath, RuleCutAtRisk:
			if f.Status != StatusForming {
				t.Errorf("mass flag without a mass: %s", f.Reason)
			}
		case RuleOffPlan:
			if !strings.Contains(f.Title, "Taper") {
				t.Errorf("week load judged before the first record: %s", f.Reason)
			}
		default:
			t.Errorf("%s before the first record: %s", f.Title, f.Reason)
		}
	}
	if len(rule(Compute(in), RuleOffPlan)) != 1 {
		t.Errorf("the taper-cut info on the plan is missing")
	}
}
