package series_test

import (
	"encoding/json"
	"fmt"
	"math"
	"testing"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

const athleteID = "ath-1"

// d is the day offset days from 2026-03-02 (a Monday).
func d(off int) string { return (day.MustParse("2026-03-02") + day.Number(off)).String() }

// camp builds one athlete's validated records.
type camp struct {
	t       testing.TB
	athlete devsync.Record
	bout    *devsync.Record
	recs    []devsync.Record
	n       int
}

func newCamp(t testing.TB, units string) *camp {
	c := &camp{t: t}
	c.athlete = c.record(records.KindAthlete, "", "07:00", records.Athlete{Name: "Test Fighter", Units: units})
	return c
}

func (c *camp) record(kind, dayStr, clock string, body any) devsync.Record {
	c.t.Helper()
	c.n++
	raw, err := json.Marshal(body)
	if err != nil {
		c.t.Fatal(err)
	}
	at := "2026-03-02"
	if dayStr != "" {
		at = dayStr
	}
	id := fmt.Sprintf("%s-%03d", kind, c.n)
	r := devsync.Record{ID: id, Kind: kind, Athlete: athleteID, Day: dayStr, At: at + "T" + clock + ":00+01:00",
		Device: "dev-test", Stamp: devsync.HLC{L: int64(c.n)}, Body: raw}
	if kind == records.KindAthlete {
		r.ID = athleteID
	}
	if err := records.Prepare(&r); err != nil {
		c.t.Fatalf("test record %s does not validate: %v", id, err)
	}
	return r
}

func (c *camp) add(kind, dayStr, clock string, body any) {
	c.t.Helper()
	c.recs = append(c.recs, c.record(kind, dayStr, clock, body))
}

func (c *camp) setBout(b records.Bout) {
	c.t.Helper()
	r := c.record(records.KindBout, "", "08:00", b)
	c.bout = &r
}

func (c *camp) mass(dayStr, clock string, kg float64) {
	c.add(records.KindCheckin, dayStr, clock, records.Checkin{MassKg: &kg})
}

func (c *camp) session(dayStr string, minutes, rpe float64) {
	c.add(records.KindSession, dayStr, "18:00", records.Session{Type: "boxing", Minutes: minutes, RPE: rpe})
}

func (c *camp) jump(dayStr string, heights ...float64) {
	c.add(records.KindJump, dayStr, "09:30", records.Jump{Test: "cmj", Method: "mat", HeightsCm: heights})
}

func (c *camp) rounds(dayStr, activity string, n, intensity int) {
	for i := 0; i < n; i++ {
		c.add(records.KindRound, dayStr, "16:00", records.Round{Activity: activity, Seconds: 180, Intensity: intensity})
	}
}

func ip(v int) *int { return &v }

// wellness logs a complete check-in whose five items sum to total.
func (c *camp) wellness(dayStr, clock string, total int) {
	it := [5]int{1, 1, 1, 1, 1}
	for left, i := total-5, 0; left > 0; i = (i + 1) % 5 {
		if it[i] < 5 {
			it[i]++
			left--
		}
	}
	c.add(records.KindCheckin, dayStr, clock, records.Checkin{Fatigue: ip(it[0]), Sleep: ip(it[1]), Soreness: ip(it[2]), Stress: ip(it[3]), Mood: ip(it[4])})
}

func (c *camp) input(settings map[string]map[string]float64) flags.Input {
	return flags.Input{Athlete: c.athlete, Bout: c.bout, Records: c.recs, Settings: records.Resolve(settings)}
}

// val dereferences a series value, NaN for null.
func val(p *float64) float64 {
	if p == nil {
		return math.NaN()
	}
	return *p
}

func near(t *testing.T, what string, got *float64, want, tol float64) {
	t.Helper()
	if got == nil || math.Abs(*got-want) > tol {
		t.Fatalf("%s = %v, want %.6f ± %g", what, show(got), want, tol)
	}
}

func isNull(t *testing.T, what string, got *float64) {
	t.Helper()
	if got != nil {
		t.Fatalf("%s = %v, want null", what, *got)
	}
}

func show(p *float64) any {
	if p == nil {
		return "null"
	}
	return *p
}
