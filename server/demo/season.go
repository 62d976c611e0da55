package demo

import (
	"math/rand/v2"
	"time"

	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// SeasonDays is the length of the season's camp: twelve weeks.
const SeasonDays = 12 * 7

// Season builds a season's camp for the performance benchmarks: eight
// invented fighters over twelve weeks ending on today, every kind of
// record (athletes, settings, bouts and their plans, check-ins, jumps,
// rounds, interval sessions, sessions, incidents, clearances, decisions,
// notes), about 8,000 records. Four of the fighters follow the demo camp's
// stories and four are their invented training partners; the draws come
// from a fixed seed, so the same day gives the same season.
func Season(today time.Time) []devsync.Record {
	g := &gen{rng: rand.New(rand.NewPCG(Seed, 0x5ea5)), today: dayStart(today), loc: today.Location()}
	start := -SeasonDays + 1
	g.add(records.KindSettings, "", start, 6, 0, coachTablet, records.Settings{GymName: GymName, CheckinHour: ptr(10.0)})
	lb := records.LbToKg
	line := func(from, perDay float64) func(d int) float64 {
		return func(d int) float64 { return from - perDay*float64(d-start) }
	}
	fs := []*fighter{
		{key: "tomas", name: "Tomas Varga", units: "lb", sex: "m", birthYear: 1998, class: "pro_lightweight", limitKg: lb(135), weighType: "day_before",
			startMass: 68.4, campStart: start, boutIn: 28, baseCMJ: 44.0, refLoad: 3300, massAt: line(68.4, 0.01)},
		{key: "ines", name: "Ines Halloran", units: "kg", sex: "f", birthYear: 2001, class: "wb2025_f_57", limitKg: 57, weighType: "same_day",
			startMass: 61.2, campStart: start, boutIn: 42, baseCMJ: 33.0, refLoad: 3400, massAt: line(61.2, 0.035)},
		{key: "kofi", name: "Kofi Brandt", units: "kg", sex: "m", birthYear: 1996, class: "ol2024_m_71", limitKg: 71, weighType: "same_day",
			startMass: 75.0, campStart: start, boutIn: 56, baseCMJ: 42.0, refLoad: 3400, massAt: line(75.0, 0.03)},
		{key: "mateo", name: "Mateo Lindqvist", units: "lb", sex: "m", birthYear: 1994, class: "pro_welterweight", limitKg: lb(147), weighType: "day_before",
			startMass: 72.4, campStart: start, boutIn: 23, baseCMJ: 46.0, refLoad: 3400, massAt: line(72.4, 0.06)},
		{key: "p-okafor", name: "Dara Okonwe", units: "kg", sex: "f", birthYear: 1999, class: "wb2025_f_57", limitKg: 57, weighType: "same_day",
			startMass: 59.8, campStart: start, boutIn: 35, baseCMJ: 31.5, refLoad: 3200, massAt: line(59.8, 0.02)},
		{key: "p-vos", name: "Pim Vosberg", units: "kg", sex: "m", birthYear: 1997, class: "ol2024_m_71", limitKg: 71, weighType: "same_day",
			startMass: 73.6, campStart: start, boutIn: 49, baseCMJ: 43.0, refLoad: 3500, massAt: line(73.6, 0.02)},
		{key: "p-marchi", name: "Lio Marchenko", units: "lb", sex: "m", birthYear: 2000, class: "pro_lightweight", limitKg: lb(135), weighType: "day_before",
			startMass: 66.9, campStart: start, boutIn: 30, baseCMJ: 45.0, refLoad: 3300, massAt: line(66.9, 0.01)},
		{key: "p-amor", name: "Sefa Amoretti", units: "lb", sex: "m", birthYear: 1995, class: "pro_welterweight", limitKg: lb(147), weighType: "day_before",
			startMass: 70.1, campStart: start, boutIn: 44, baseCMJ: 47.0, refLoad: 3400, massAt: line(70.1, 0.02)},
	}
	feel := []string{"Legs fresh, sharp on the pads.", "Flat in the warm-up, better by round four.", "Slept badly; heavy in the last rounds.", "Good session, hands quick."}
	for _, f := range fs {
		first := len(g.out)
		g.fighter(f, start)
		aid := g.out[first].ID
		// What a season adds to the demo's weeks: a jump test and an
		// extra bike interval session on Tuesdays and Thursdays, an
		// early strength session on Mondays, Wednesdays and Fridays, the
		// fighter's own evening note and the coach's note on the day.
		for d := start; d <= 0; d++ {
			switch g.day(d).Weekday() {
			case time.Tuesday, time.Thursday:
				g.jump(f, aid, d)
				g.add(records.KindIntervals, aid, d, 17, 0, coachTablet, records.Intervals{
					Protocol: "rounds_3x1", Modality: "bike", WorkS: 30, RestS: 30, Reps: 8, Sets: 2, RPE: ptr(7.0), HRPeak: ptr(176 + g.rng.IntN(10)),
				})
			case time.Monday, time.Wednesday, time.Friday:
				g.session(aid, "demo-phone-"+f.key, d, 7, "strength", "", 40+float64(g.rng.IntN(20)), 6)
			}
			g.add(records.KindNote, aid, d, 20, 30, "demo-phone-"+f.key, records.Note{Text: feel[g.rng.IntN(len(feel))]})
			g.add(records.KindNote, aid, d, 18, 0, coachTablet, records.Note{Text: "Session as planned; watch the weight on Friday.", By: "S&C coach"})
		}
	}
	return g.out
}
