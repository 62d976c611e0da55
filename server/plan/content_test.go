package plan_test

import (
	"strings"
	"testing"

	"cornerbook/server/plan"
	"cornerbook/server/records"
)

func ip(v int) *int { return &v }

// tenWeeks is the 10-week starting plan of a bout on day 69 (the sixth
// day of week 10), as records.Week values to edit.
func tenWeeks(t *testing.T) []records.Week { return weeksOf(gen(t, 69)) }

// Gabbett 2016 and the uncoupled ratio (Windt & Gabbett 2019; REFERENCES
// §4.1 worked example): weeks of 1500, 1600 and 1700 AU before camp give a
// chronic load of 1600 AU; a 2400 AU week is 1.500 × (not over), a heavy
// first week of 2500 AU is 1.5625 × and a spike. Only the last three
// weeks before camp count.
func TestCheck_FirstWeekSpike(t *testing.T) {
	ws := tenWeeks(t)
	ws[0].Level = "heavy"
	b := fullBout(t, 69, "day_before", ws)
	prior := plan.Context{PriorWeeksAU: []float64{9000, 1500, 1600, 1700}}
	is := checksOf(plan.CheckWith(b, nil, prior), plan.CheckFirstWeekSpike)
	if len(is) != 1 || is[0].Level != plan.LevelWatch || is[0].Field != "body.weeks[0].level" ||
		!strings.Contains(is[0].Message, "2500 AU: 1.56 × the 1600 AU a week logged over the 3 weeks before camp") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	b.ReferenceLoadAU = 2400 // 2400 / 1600 = 1.500: at, not over
	if is := checksOf(plan.CheckWith(b, nil, prior), plan.CheckFirstWeekSpike); len(is) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
	// No weeks logged: week 1 against the habitual week. A heavy week is
	// 1.0 ×; a week set at 1.6 × by the coach's settings is a spike.
	b.ReferenceLoadAU = 2500
	if is := checksOf(plan.Check(b, nil), plan.CheckFirstWeekSpike); len(is) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
	th := records.Resolve(map[string]map[string]float64{records.RuleOffPlan: {"level_heavy": 1.6}})
	if is := checksOf(plan.Check(b, th), plan.CheckFirstWeekSpike); len(is) != 1 || !strings.Contains(is[0].Message, "1.60 × the 2500 AU habitual week") {
		t.Fatalf("issues:\n%s", messages(is))
	}
}

// Common practice, no source: hard sparring peaks in the back half of the
// camp. A 10-week plan whose most sparring is in week 3 (first third:
// weeks 1–3) is noted; in week 4 it is not.
func TestCheck_SparPeakEarly(t *testing.T) {
	ws := tenWeeks(t)
	ws[2].SparRounds = ip(32)
	is := checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckSparPeakEarly)
	if len(is) != 1 || is[0].Level != plan.LevelInfo || is[0].Field != "body.weeks[2].spar_rounds" || !strings.Contains(is[0].Message, "32 rounds, is planned in week 3 of 10") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	ws = tenWeeks(t)
	ws[3].SparRounds = ip(32)
	if is := checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckSparPeakEarly); len(is) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
}

// Issurin 2008 (REFERENCES §10): maximal strength keeps its effect 30 ± 5
// days. Camp 2026-01-05 to the bout on 2026-03-15: a last max-strength
// week 5 ends 2026-02-08, 35 days out (inside); week 4 ends 2026-02-01,
// 42 days out (beyond 35: noted).
func TestCheck_StrengthResidual(t *testing.T) {
	ws := tenWeeks(t)
	for i := range ws {
		if i >= 5 && ws[i].Strength.IDs[0] == "max_strength" {
			ws[i].Strength = &records.Emphasis{IDs: []string{"strength_speed", "plyometric"}}
		}
	}
	b := fullBout(t, 69, "day_before", ws)
	if b.BoutDay != "2026-03-15" {
		t.Fatalf("bout day %s", b.BoutDay)
	}
	if is := checksOf(plan.Check(b, nil), plan.CheckStrengthResid); len(is) != 0 {
		t.Fatalf("35 days is inside 30 ± 5:\n%s", messages(is))
	}
	b.Weeks[4].Strength = &records.Emphasis{IDs: []string{"strength_speed"}}
	is := checksOf(plan.Check(b, nil), plan.CheckStrengthResid)
	if len(is) != 1 || is[0].Level != plan.LevelWatch || is[0].Field != "body.weeks[3].strength" ||
		!strings.Contains(is[0].Message, "(week 4) ends on Sun 1 Feb, 42 days before the bout") || !strings.Contains(is[0].Message, "Issurin 2008") {
		t.Fatalf("issues:\n%s", messages(is))
	}
}

// Issurin 2008: maximal speed keeps its effect 5 ± 3 days, so speed or
// jump work belongs in the last 8 days (2026-03-07 to 2026-03-14 before a
// bout on 2026-03-15). A taper with maximal strength only is noted; jumps
// in the fight week alone are enough.
func TestCheck_SpeedResidual(t *testing.T) {
	ws := tenWeeks(t)
	ws[8].Strength = &records.Emphasis{IDs: []string{"max_strength"}}
	ws[9].Strength = &records.Emphasis{IDs: []string{"max_strength"}, Label: "heavy singles"}
	is := checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckSpeedResid)
	if len(is) != 1 || is[0].Level != plan.LevelWatch || !strings.Contains(is[0].Message, "last 8 days before the bout (Sat 7 Mar to Sat 14 Mar)") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	ws[9].Strength = &records.Emphasis{IDs: []string{"plyometric"}}
	if is := checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckSpeedResid); len(is) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
	// A coach's own label without a listed id is not read by the check.
	ws[9].Strength = &records.Emphasis{Label: "reaction drills"}
	if is := checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckSpeedResid); len(is) != 1 {
		t.Fatalf("issues:\n%s", messages(is))
	}
	// A plan without content (an older bout) is not checked for it.
	for i := range ws {
		ws[i].Strength, ws[i].Conditioning = nil, nil
	}
	if is := checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckSpeedResid); len(is) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
}

// Bosquet et al. 2007: tapers of 8–14 days worked best. Only weeks at the
// taper level are taper weeks (the settled reading): a final low week is
// no taper; a one-week taper of 7 days and a three-week taper of 20 days
// are noted; two weeks of 13 days are not.
func TestCheck_TaperLength(t *testing.T) {
	ws := tenWeeks(t) // taper weeks 9–10: 7 + 6 = 13 days
	if is := checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckTaperLength); len(is) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
	ws[7].Level = "taper" // three weeks: 20 days
	is := checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckTaperLength)
	if len(is) != 1 || is[0].Field != "body.weeks[7].level" || !strings.Contains(is[0].Message, "The taper runs 20 days (Mon 23 Feb to Sat 14 Mar, weeks 8–10)") ||
		!strings.Contains(is[0].Message, "Bosquet et al. 2007 meta-analysis") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	ws = tenWeeks(t)
	ws[8].Level = "heavy" // one week: 6 days
	is = checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckTaperLength)
	if len(is) != 1 || !strings.Contains(is[0].Message, "The taper runs 6 days") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	ws[8].Level, ws[9].Level = "heavy", "low"
	is = checksOf(plan.Check(fullBout(t, 69, "day_before", ws), nil), plan.CheckTaperLength)
	if len(is) != 1 || is[0].Level != plan.LevelInfo || !strings.Contains(is[0].Message, "No week is planned as a taper: only a week planned at the taper level counts, and the last week before the bout (week 10) is planned low") {
		t.Fatalf("issues:\n%s", messages(is))
	}
}

// Zone data, never fixed offsets (REFERENCES §14.4, Go's zone database):
// London → New York on 2025-03-20 is −4 h (New York was on summer time,
// London not yet); London → Tokyo on 2025-01-15 +9 h; Los Angeles →
// Sydney on 2025-01-15 +19 h on the clock, −5 h for the body. About 1 zone
// a day east and 1.5 west: 3, 9 and 4 days.
func TestJourney_ZoneData(t *testing.T) {
	for _, c := range []struct {
		from, to, arrive string
		shift, clock     float64
		dir              string
		days             int
	}{
		{"Europe/London", "America/New_York", "2025-03-20T13:00:00-04:00", -4, -4, "west", 3},
		{"Europe/London", "Asia/Tokyo", "2025-01-15T18:00:00+09:00", 9, 9, "east", 9},
		{"America/Los_Angeles", "Australia/Sydney", "2025-01-15T07:00:00+11:00", -5, 19, "west", 4},
		{"Europe/London", "America/New_York", "2025-03-05T13:00:00-05:00", -5, -5, "west", 4}, // both on winter time
	} {
		j, err := plan.Journey(records.Travel{DepartAt: "2025-01-01T00:00:00Z", ArriveAt: c.arrive, FromZone: c.from, ToZone: c.to})
		if err != nil {
			t.Fatal(err)
		}
		if j.ShiftH != c.shift || j.ClockH != c.clock || j.Direction != c.dir || j.Days != c.days {
			t.Errorf("%s → %s at %s: %+v", c.from, c.to, c.arrive, j)
		}
	}
}

// travel_recovery (Janse van Rensburg et al. 2021: jet lag after more than
// 3 zones). A camp from 2025-03-03 with a flight London → New York landing
// 2025-03-20: −4 h, 3 days to adjust (20–22 March, all in week 3). A heavy
// week 3 is noted; a low week 3 is not; a 3-zone trip (London → Moscow in
// January, +3 h) is not.
func TestCheck_TravelRecovery(t *testing.T) {
	const start = "2025-03-03"
	mk := func(level3 string, tr records.Travel) records.Bout {
		var ws []records.Week
		levels := []string{"medium", "medium_heavy", level3, "medium", "medium_heavy", "heavy", "low", "medium_heavy", "heavy", "heavy", "taper", "taper"}
		for i, l := range levels {
			ws = append(ws, records.Week{Week: i + 1, Level: l})
		}
		ws[2].Travel = &tr
		return records.Bout{CampStart: start, BoutDay: "2025-05-24", WeighIn: "2025-05-23T10:00:00-04:00", WeighInType: "day_before",
			LimitKg: 66.68, StartMassKg: 70, ReferenceLoadAU: 2500, Weeks: ws}
	}
	ny := records.Travel{DepartAt: "2025-03-20T09:00:00Z", ArriveAt: "2025-03-20T13:00:00-04:00", FromZone: "Europe/London", ToZone: "America/New_York"}
	is := checksOf(plan.Check(mk("heavy", ny), nil), plan.CheckTravelRecovery)
	if len(is) != 1 || is[0].Level != plan.LevelWatch || is[0].Field != "body.weeks[2].travel" ||
		!strings.Contains(is[0].Message, "shifts the clock -4 h (west); the body needs about 3 days") ||
		!strings.Contains(is[0].Message, "Thu 20 Mar (week 3, heavy), Fri 21 Mar (week 3, heavy) and Sat 22 Mar (week 3, heavy) are planned above low") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	if is := checksOf(plan.Check(mk("low", ny), nil), plan.CheckTravelRecovery); len(is) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
	// A landing on the last day of week 3 carries into week 4 (medium).
	late := ny
	late.DepartAt, late.ArriveAt = "2025-03-23T09:00:00Z", "2025-03-23T13:00:00-04:00"
	is = checksOf(plan.Check(mk("low", late), nil), plan.CheckTravelRecovery)
	if len(is) != 1 || !strings.Contains(is[0].Message, "Mon 24 Mar (week 4, medium) and Tue 25 Mar (week 4, medium)") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	moscow := records.Travel{DepartAt: "2025-03-20T09:00:00Z", ArriveAt: "2025-03-20T16:00:00+03:00", FromZone: "Europe/London", ToZone: "Europe/Moscow"}
	if is := checksOf(plan.Check(mk("heavy", moscow), nil), plan.CheckTravelRecovery); len(is) != 0 {
		t.Fatalf("3 zones is not more than 3:\n%s", messages(is))
	}
}

// The mass-path checks carry their ids: REFERENCES §6.1, a week from 70.0
// to 68.6 kg is 2.0 %/week, above the 1.5 %/week alert level (path_rate);
// and a path that leaves 6 % for the final 7 days of a day-before
// weigh-in is above the 5 % watch level (path_final_week).
func TestCheck_PathIDs(t *testing.T) {
	ws := tenWeeks(t)
	b := fullBout(t, 69, "day_before", ws)
	b.StartMassKg, b.LimitKg = 72, 66.68
	b.Path = []records.Knot{{Day: d(0), MassKg: 72}, {Day: d(7), MassKg: 72 * 0.98}, {Day: d(61), MassKg: 66.68 / 0.94}, {Day: d(68), MassKg: 66.68}}
	all := plan.Check(b, nil)
	rate := checksOf(all, plan.CheckPathRate)
	if len(rate) != 1 || !strings.Contains(rate[0].Message, "2.00 % of body mass a week") || rate[0].Level != plan.LevelWatch {
		t.Fatalf("issues:\n%s", messages(all))
	}
	final := checksOf(all, plan.CheckPathFinalWeek)
	if len(final) == 0 || !strings.Contains(final[0].Message, "(6.0 % of body mass) of loss in the final 7 days") {
		t.Fatalf("issues:\n%s", messages(all))
	}
}
