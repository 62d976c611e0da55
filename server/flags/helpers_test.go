package flags

import (
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"testing"
	"time"

	"cornerbook/server/flags/day"
	devsync "cornerbook/sync"
)

const athleteID = "ath-1"

// camp builds one athlete's records for a test.
type camp struct {
	recs []devsync.Record
	bout *devsync.Record
	n    int
}

// d is the day offset days from the reference day 2026-03-02 (a Monday).
func d(offset int) string { return (day.MustParse("2026-03-02") + day.Number(offset)).String() }

func (c *camp) add(kind, dayStr string, body any) string {
	c.n++
	id := fmt.Sprintf("%s-%03d", kind, c.n)
	b, err := json.Marshal(body)
	if err != nil {
		panic(err)
	}
	c.recs = append(c.recs, devsync.Record{
		ID: id, Kind: kind, Athlete: athleteID, Day: dayStr,
		At:     dayStr + fmt.Sprintf("T07:%02d:00+01:00", c.n%60),
		Device: "dev-test", Stamp: devsync.HLC{L: int64(c.n)}, Body: b,
	})
	return id
}

func (c *camp) last() *devsync.Record { return &c.recs[len(c.recs)-1] }

func (c *camp) mass(dayStr string, kg float64) string {
	return c.add(kindCheckin, dayStr, map[string]any{"mass_kg": kg})
}

// wellness logs a check-in with the five items (fatigue, sleep, soreness,
// stress, mood).
func (c *camp) wellness(dayStr string, f, s, so, st, m int) string {
	return c.add(kindCheckin, dayStr, map[string]any{"fatigue": f, "sleep": s, "soreness": so, "stress": st, "mood": m})
}

// wellnessTotal logs five items summing to total (each item ≥ 2).
func (c *camp) wellnessTotal(dayStr string, total int) string {
	it := [5]int{2, 2, 2, 2, 2}
	left := total - 10
	for i := 0; left > 0; i = (i + 1) % 5 {
		if it[i] < 5 {
			it[i]++
			left--
		}
	}
	return c.wellness(dayStr, it[0], it[1], it[2], it[3], it[4])
}

func (c *camp) jump(dayStr string, heights ...float64) string {
	return c.add(kindJump, dayStr, map[string]any{"test": "cmj", "heights_cm": heights, "method": "mat"})
}

func (c *camp) rounds(dayStr string, n, intensity int) {
	for i := 0; i < n; i++ {
		c.add(kindRound, dayStr, map[string]any{"activity": "spar", "seconds": 180, "intensity": intensity})
	}
}

func (c *camp) session(dayStr string, minutes, rpe float64, focus string) string {
	return c.add(kindSession, dayStr, map[string]any{"type": "other", "minutes": minutes, "rpe": rpe, "focus": focus})
}

// load logs one session of the given load (rpe 5).
func (c *camp) load(dayStr string, au float64) string { return c.session(dayStr, au/5, 5, "") }

func (c *camp) setBout(body map[string]any) {
	b, _ := json.Marshal(body)
	c.bout = &devsync.Record{ID: "bout-1", Kind: kindBout, Athlete: athleteID, At: d(0) + "T08:00:00+01:00", Body: b}
}

// standardBout: camp starts d(0), day-before weigh-in on d(56), bout d(57),
// start mass 70 kg, limit 63.5 kg.
func (c *camp) standardBout(extra map[string]any) {
	body := map[string]any{
		"camp_start": d(0), "weigh_in": d(56) + "T10:00:00+01:00", "weigh_in_type": "day_before",
		"bout_day": d(57), "limit_kg": 63.5, "start_mass_kg": 70.0,
	}
	for k, v := range extra {
		body[k] = v
	}
	c.setBout(body)
}

func (c *camp) input(dayStr string) Input {
	return Input{
		Day: dayStr, Location: time.UTC,
		Athlete: devsync.Record{ID: athleteID, Kind: kindAthlete},
		Bout:    c.bout, Records: c.recs,
	}
}

func (c *camp) run(dayStr string) []Flag { return Compute(c.input(dayStr)) }

// rule returns the flags of one rule.
func rule(fs []Flag, id string) []Flag {
	var out []Flag
	for _, f := range fs {
		if f.Rule == id {
			out = append(out, f)
		}
	}
	return out
}

// one asserts exactly one flag of the rule and returns it.
func one(t *testing.T, fs []Flag, id string) Flag {
	t.Helper()
	got := rule(fs, id)
	if len(got) != 1 {
		t.Fatalf("%s: want 1 flag, got %d: %s", id, len(got), describe(got))
	}
	return got[0]
}

func none(t *testing.T, fs []Flag, id string) {
	t.Helper()
	if got := rule(fs, id); len(got) != 0 {
		t.Fatalf("%s: want no flag, got %s", id, describe(got))
	}
}

func describe(fs []Flag) string {
	var b strings.Builder
	for _, f := range fs {
		fmt.Fprintf(&b, "\n  [%s %s] %s", f.Level, f.Status, f.Reason)
	}
	return b.String()
}

func wantLevel(t *testing.T, f Flag, level, status string) {
	t.Helper()
	if f.Level != level || f.Status != status {
		t.Fatalf("%s: want %s/%s, got %s/%s: %s", f.Rule, level, status, f.Level, f.Status, f.Reason)
	}
}

func approx(t *testing.T, name string, got *float64, want, tol float64) {
	t.Helper()
	if got == nil {
		t.Fatalf("%s: nil, want %.6f", name, want)
	}
	if math.Abs(*got-want) > tol {
		t.Fatalf("%s = %.6f, want %.6f ± %g", name, *got, want, tol)
	}
}

func approxV(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	approx(t, name, &got, want, tol)
}
