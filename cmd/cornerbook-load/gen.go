package main

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"time"

	"github.com/google/uuid"

	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// The generated camp is invented: numbered athletes with plausible,
// random values inside the record rules, nothing taken from anywhere.

// sim is one simulated device and its offline backlog.
type sim struct {
	index   int
	role    string // "athlete" (the fighter's phone) or "staff" (a tablet at ringside)
	athlete string // the athlete it logs for
	name    string
	id      string // device id given by the hub at join
	token   string
	muts    []devsync.Mutation
}

// newAthletes makes the athlete records the coach creates first.
func newAthletes(n int, device string, now time.Time, rng *rand.Rand) []devsync.Record {
	out := make([]devsync.Record, n)
	var clock devsync.Clock
	for i := range out {
		id := newID()
		at := now.Add(-time.Duration(n-i) * time.Second)
		body := map[string]any{"name": fmt.Sprintf("Load Athlete %03d", i+1), "units": []string{"kg", "lb"}[rng.IntN(2)]}
		out[i] = devsync.Record{ID: id, Kind: records.KindAthlete, Athlete: id, At: at.Format(time.RFC3339),
			Device: device, Stamp: clock.Now(at.UnixMilli()), Body: mustJSON(body)}
	}
	return out
}

func newID() string {
	id, err := uuid.NewV7()
	if err != nil {
		panic(err) // crypto/rand does not fail on supported platforms
	}
	return id.String()
}

func mustJSON(v any) json.RawMessage {
	b, err := json.Marshal(v)
	if err != nil {
		panic(err)
	}
	return b
}

// backlog fills d.muts with days of entries before today, in the order the
// device recorded them: n counts from 1, each stamped by the device's own
// hybrid logical clock at the moment it was recorded. An athlete's phone
// logs a check-in, the session RPE and a note each day (the kinds an
// athlete may write); a staff tablet logs a jump test, six rounds and an
// interval session: about 8 entries a day on average over a camp.
func (d *sim) backlog(today time.Time, days int, rng *rand.Rand) {
	var clock devsync.Clock
	n := uint64(0)
	add := func(kind string, day time.Time, at time.Time, body any) {
		n++
		d.muts = append(d.muts, devsync.Mutation{N: n, Op: devsync.OpUpsert, Record: devsync.Record{
			ID: newID(), Kind: kind, Athlete: d.athlete, Day: day.Format(time.DateOnly),
			At: at.Format(time.RFC3339), Device: d.id, Stamp: clock.Now(at.UnixMilli()), Body: mustJSON(body),
		}})
	}
	mass := 60 + rng.Float64()*25
	for k := days; k >= 1; k-- {
		day := today.AddDate(0, 0, -k)
		at := func(h, m int) time.Time {
			return time.Date(day.Year(), day.Month(), day.Day(), h, m, rng.IntN(60), 0, day.Location())
		}
		if d.role == "athlete" {
			mass += (rng.Float64() - 0.6) * 0.4
			add(records.KindCheckin, day, at(7, rng.IntN(30)), map[string]any{
				"mass_kg": round1(mass), "sleep_h": round1(5 + rng.Float64()*4), "sleep": 1 + rng.IntN(5),
				"fatigue": 1 + rng.IntN(5), "soreness": 1 + rng.IntN(5), "stress": 1 + rng.IntN(5), "mood": 1 + rng.IntN(5),
				"rhr_bpm": 45 + rng.IntN(25), "usg": 1.005 + float64(rng.IntN(25))/1000,
			})
			add(records.KindSession, day, at(18, rng.IntN(60)), map[string]any{
				"type": records.SessionTypes[rng.IntN(len(records.SessionTypes))], "minutes": 30 + rng.IntN(90), "rpe": 1 + rng.IntN(10),
			})
			add(records.KindNote, day, at(21, rng.IntN(60)), map[string]any{"text": fmt.Sprintf("day %d: felt %s", days-k+1, []string{"fresh", "flat", "sharp", "heavy"}[rng.IntN(4)])})
			continue
		}
		flights := make([]float64, 3)
		for i := range flights {
			flights[i] = float64(480 + rng.IntN(120))
		}
		add(records.KindJump, day, at(10, rng.IntN(20)), map[string]any{"flight_ms": flights, "method": "mat"})
		for r := range 6 {
			add(records.KindRound, day, at(15, r*4+rng.IntN(3)), map[string]any{
				"activity": records.Activities[rng.IntN(len(records.Activities))], "seconds": 180, "intensity": 1 + rng.IntN(3),
			})
		}
		add(records.KindIntervals, day, at(16, 30+rng.IntN(20)), map[string]any{
			"modality": "bike", "work_s": 30, "rest_s": 30, "reps": 8, "sets": 1 + rng.IntN(3), "rpe": 5 + rng.IntN(5),
		})
	}
}

func round1(v float64) float64 { return math.Round(v*10) / 10 }

// expected is the version the hub must store for a sent record: the same
// record with its body in the hub's canonical form and derived fields
// (records.Prepare, the hub's own rules).
func expected(r devsync.Record) (devsync.Record, error) {
	e := r
	e.Body = append(json.RawMessage(nil), r.Body...)
	if err := records.Prepare(&e); err != nil {
		return e, fmt.Errorf("generated record %s (%s) breaks the record rules: %w", r.ID, r.Kind, err)
	}
	return e, nil
}
