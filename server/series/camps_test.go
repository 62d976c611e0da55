package series_test

import (
	"testing"

	"cornerbook/server/records"
	"cornerbook/server/series"
	devsync "cornerbook/sync"
)

// twoCamps: an earlier 4-week camp to a bout on d(27) at 63.5 kg, and this
// one, 8 weeks to a bout on d(200) at 66.68 kg, asked on d(180).
func twoCamps(t *testing.T) (*camp, devsync.Record, devsync.Record) {
	c := newCamp(t, "kg")
	past := c.record(records.KindBout, "", "08:00", records.Bout{Name: "Spring bout", CampStart: d(0), WeighIn: d(26) + "T10:00:00+01:00",
		WeighInType: "day_before", BoutDay: d(27), LimitKg: 63.5, StartMassKg: 67})
	now := c.record(records.KindBout, "", "08:00", records.Bout{Name: "Winter bout", CampStart: d(144), WeighIn: d(199) + "T10:00:00+01:00",
		WeighInType: "day_before", BoutDay: d(200), LimitKg: 66.68, StartMassKg: 70})
	// The earlier camp: 66.04 kg in its first week (4.0 % over 63.5 kg),
	// a CMJ of 40 and 42 cm in its week 3 out, and sparring.
	c.mass(d(2), "07:00", 66.04)
	c.jump(d(7), 40, 40, 40)
	c.jump(d(9), 42, 42, 42)
	c.session(d(7), 60, 5)  // 300 AU
	c.session(d(8), 90, 6)  // 540 AU
	c.session(d(13), 10, 5) // 50 AU: the same week out (days −20 … −14)
	c.session(d(14), 30, 5) // 150 AU: the next week (−13 … −7)
	c.rounds(d(8), "spar", 6, 3)
	c.rounds(d(8), "spar", 2, 1)
	c.rounds(d(8), "pads", 4, 2)
	// This camp: 69.35 kg on d(150), 4.0 % over 66.68 kg.
	c.mass(d(150), "07:00", 69.3472)
	c.session(d(180), 60, 7)
	return c, past, now
}

// camps draws the camps CampSpans picks, each from the camp's records.
func camps(c *camp, current, asked string, bouts ...devsync.Record) []series.Camp {
	var out []series.Camp
	for _, span := range series.CampSpans(bouts, current, asked) {
		in := c.input(nil)
		in.Bouts = bouts
		out = append(out, span.Camp(in))
	}
	return out
}

func TestCampsLineUpByDaysToTheBout(t *testing.T) {
	c, past, now := twoCamps(t)
	cs := camps(c, now.ID, d(180), past, now)
	if len(cs) != 2 {
		t.Fatalf("%d camps, want 2", len(cs))
	}
	cur, old := cs[0], cs[1]
	if cur.Bout != now.ID || !cur.Current || old.Bout != past.ID || old.Current {
		t.Fatalf("order or current wrong: %s %v, %s %v", cur.Bout, cur.Current, old.Bout, old.Current)
	}
	// This camp runs from its start to the day asked: d(144) … d(180),
	// 56 … 20 days before its bout.
	if cur.Days[0] != d(144) || cur.Days[len(cur.Days)-1] != d(180) || cur.DaysOut[0] != -56 || cur.DaysOut[len(cur.DaysOut)-1] != -20 {
		t.Fatalf("this camp spans %s (%d) … %s (%d)", cur.Days[0], cur.DaysOut[0], cur.Days[len(cur.Days)-1], cur.DaysOut[len(cur.DaysOut)-1])
	}
	// The earlier camp in full: d(0) … d(27), 27 … 0 days out.
	if old.Days[0] != d(0) || old.DaysOut[0] != -27 || old.DaysOut[len(old.DaysOut)-1] != 0 {
		t.Fatalf("earlier camp spans %s (%d) … (%d)", old.Days[0], old.DaysOut[0], old.DaysOut[len(old.DaysOut)-1])
	}
	// Over the limit, (mass − limit) / limit × 100: 66.04 kg at a 63.5 kg
	// limit is 2.54 / 63.5 = 4.000 %, and 69.3472 kg at 66.68 kg is
	// 2.6672 / 66.68 = 4.000 % (arithmetic; the percentage-over-the-limit
	// form is how check weights are stated, REFERENCES §14.1).
	near(t, "earlier camp, 25 days out", old.OverLimitPct[2], 4.0, 1e-9)
	near(t, "this camp, 50 days out", cur.OverLimitPct[6], 4.0, 1e-9)
	if old.DaysOut[2] != -25 || cur.DaysOut[6] != -50 {
		t.Fatalf("days out %d, %d", old.DaysOut[2], cur.DaysOut[6])
	}
	// The planned path against the limit: the default path starts at the
	// start mass, 67 kg, 5.512 % over 63.5 kg.
	near(t, "earlier camp's path at its start", old.Path.OverLimitPct[0], (67-63.5)/63.5*100, 1e-9)
	// A camp still running has its path drawn on to the weigh-in, the day
	// before the bout.
	if n := len(cur.Path.DaysOut); n != 57 || cur.Path.DaysOut[0] != -56 || cur.Path.DaysOut[n-1] != 0 || cur.Path.Kg[n-2] == nil {
		t.Fatalf("this camp's path: %d days, %v", n, cur.Path.DaysOut)
	}
	if len(old.Path.DaysOut) != len(old.Days) {
		t.Fatalf("the earlier camp's path: %d days, its camp %d", len(old.Path.DaysOut), len(old.Days))
	}
	// Weeks back from the bout (week k: days −7k−6 … −7k): the earlier
	// camp's days −27 … 0 are weeks 3 (−27 … −21), 2, 1 and 0.
	if len(old.Weeks) != 4 || old.Weeks[0].WeeksOut != 3 || old.Weeks[3].WeeksOut != 0 {
		t.Fatalf("weeks %+v", old.Weeks)
	}
	w2 := old.Weeks[1] // 2 weeks out: days −20 … −14 = d(7) … d(13)
	if w2.WeeksOut != 2 || w2.From != d(7) || w2.To != d(13) || w2.Days != 7 {
		t.Fatalf("week 2 out: %+v", w2)
	}
	// Session load is rpe × minutes (Foster et al. 2001): 60 × 5 + 90 × 6
	// + 10 × 5 = 890 AU; the 30 × 5 on d(14) is the next week's.
	if w2.LoadAU != 890 || old.Weeks[2].LoadAU != 150 {
		t.Fatalf("weekly load %v and %v, want 890 and 150", w2.LoadAU, old.Weeks[2].LoadAU)
	}
	// 8 sparring rounds, 6 of them hard (intensity ≥ 3, the default of
	// spar_density); pads are not sparring.
	if w2.Rounds != 8 || w2.HardRounds != 6 {
		t.Fatalf("sparring %d rounds, %d hard; want 8 and 6", w2.Rounds, w2.HardRounds)
	}
	near(t, "week's mean CMJ", w2.MeanCMJCm, 41, 1e-9)
	// This camp starts 56 days out, so its furthest week (−62 … −56)
	// holds one day of it: a partial week says how many days it covers.
	if cw := cur.Weeks[0]; cw.WeeksOut != 8 || cw.Days != 1 {
		t.Fatalf("this camp's first week %+v, want 8 weeks out with 1 day", cw)
	}
}

// A later bout than the current one is not history yet, and a camp that
// has not started is not drawn.
func TestCampsLeaveOutLaterBouts(t *testing.T) {
	c, past, now := twoCamps(t)
	cs := camps(c, past.ID, d(20), past, now)
	if len(cs) != 1 || cs[0].Bout != past.ID || !cs[0].Current {
		t.Fatalf("asked inside the earlier camp: %+v", cs)
	}
	if got := cs[0].Days[len(cs[0].Days)-1]; got != d(20) {
		t.Fatalf("the running camp stops at the day asked, not %s", got)
	}
	// Asked before this camp starts (d(144)), with its bout current: only
	// the earlier camp is drawn.
	if cs := series.CampSpans([]devsync.Record{past, now}, now.ID, d(100)); len(cs) != 1 || cs[0].Bout.ID != past.ID || cs[0].Current {
		t.Fatalf("a camp starting after the day asked is drawn: %+v", cs)
	}
}
