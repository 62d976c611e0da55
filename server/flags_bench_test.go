package server_test

import (
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"testing"
	"time"

	"github.com/google/uuid"

	"cornerbook/server"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// benchCamp fills a store with athletes × days of realistic records
// (about 8 a day: a check-in, a session or two, a CMJ test three days a
// week, rounds) and returns the hub and the last day.
func benchCamp(b *testing.B, athletes, days int) (*server.Server, *storage.DB, string, []string) {
	b.Helper()
	end := time.Date(2026, 11, 30, 0, 0, 0, 0, time.UTC)
	now := func() time.Time { return end.Add(11 * time.Hour) }
	db, err := server.OpenStore(filepath.Join(b.TempDir(), "bench.db"), now)
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { db.Close() })
	rng := rand.New(rand.NewPCG(1, 2))
	var ids []string
	var batch []devsync.Mutation
	n := uint64(0)
	flush := func() {
		if len(batch) == 0 {
			return
		}
		res, err := db.Push(devsync.PushRequest{Device: "bench", Mutations: batch}, nil)
		if err != nil || len(res.Rejected) > 0 {
			b.Fatalf("seed push: %v %+v", err, res.Rejected)
		}
		batch = batch[:0]
	}
	add := func(kind, athlete string, d time.Time, body any) string {
		raw, _ := json.Marshal(body)
		id, _ := uuid.NewV7()
		n++
		r := devsync.Record{ID: id.String(), Kind: kind, Athlete: athlete, Day: d.Format("2006-01-02"),
			At: d.Add(8 * time.Hour).Format(time.RFC3339), Device: "bench", Stamp: devsync.HLC{L: d.UnixMilli() + int64(n)}, Body: raw}
		if kind == "athlete" {
			r.Athlete = r.ID
		}
		batch = append(batch, devsync.Mutation{N: n, Op: "upsert", Record: r})
		if len(batch) == 500 {
			flush()
		}
		return r.ID
	}
	start := end.AddDate(0, 0, -days+1)
	for a := 0; a < athletes; a++ {
		id := add("athlete", "", start, map[string]any{"name": fmt.Sprintf("Bench Athlete %02d", a), "units": "kg"})
		ids = append(ids, id)
		flush()
		for d := start; !d.After(end); d = d.AddDate(0, 0, 1) {
			add("checkin", id, d, map[string]any{"mass_kg": 70 + rng.NormFloat64()*0.3, "sleep": 4, "fatigue": 3, "soreness": 3, "stress": 4, "mood": 4, "usg": 1.015})
			if d.Weekday() == time.Sunday {
				continue
			}
			add("session", id, d, map[string]any{"type": "boxing", "minutes": 60 + rng.IntN(30), "rpe": 5 + rng.IntN(3)})
			add("session", id, d, map[string]any{"type": "strength", "focus": "max_strength", "minutes": 45, "rpe": 7})
			if d.Weekday()%2 == 1 {
				add("jump", id, d, map[string]any{"test": "cmj", "heights_cm": []float64{40 + rng.Float64(), 41, 40.5}})
			}
			for r := 0; r < 4; r++ {
				add("round", id, d, map[string]any{"activity": "pads", "seconds": 180, "intensity": 2})
			}
		}
	}
	flush()
	srv, err := server.New(server.Config{Store: db, Now: now, Location: time.UTC})
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { srv.Close() }) // before the store's close (cleanups run last first)
	return srv, db, end.Format("2006-01-02"), ids
}

// BenchmarkFlagsCold: a day's flags for 50 athletes with a year of
// records, from the store with an empty cache; and, in the same run, the
// floor: reading and JSON-decoding the same records the rules read.
// ENGINEERING.md target: cold ≤ 1.5 × the floor.
func BenchmarkFlagsCold(b *testing.B) {
	for _, days := range []int{365, 730} {
		srv, db, day, ids := benchCamp(b, 50, days)
		b.Run(fmt.Sprintf("compute/days=%d", days), func(b *testing.B) {
			for b.Loop() {
				srv.DropFlagCache()
				if _, err := srv.Flags(day, ""); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(ids)), "ns/athlete-day")
		})
		b.Run(fmt.Sprintf("floor-read-decode/days=%d", days), func(b *testing.B) {
			from := mustDay(day, -server.FlagWindowDays)
			for b.Loop() {
				for _, id := range ids {
					for _, kind := range []string{"checkin", "jump", "round", "session", "intervals", "decision"} {
						db.Range(id, kind, from, day, func(r devsync.Record) error {
							var body map[string]any
							return json.Unmarshal(r.Body, &body)
						})
					}
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/float64(len(ids)), "ns/athlete-day")
		})
	}
}

// BenchmarkFlagsWarm: the day's flags for the whole camp right after one
// new record arrives for one athlete (target < 5 ms).
func BenchmarkFlagsWarm(b *testing.B) {
	srv, db, day, ids := benchCamp(b, 50, 365)
	srv.Flags(day, "")
	n := uint64(1 << 40)
	for b.Loop() {
		b.StopTimer()
		n++
		id, _ := uuid.NewV7()
		raw, _ := json.Marshal(map[string]any{"type": "boxing", "minutes": 30, "rpe": 4})
		r := devsync.Record{ID: id.String(), Kind: "session", Athlete: ids[int(n)%len(ids)], Day: day, At: "2026-11-30T10:00:00Z",
			Device: "bench", Stamp: devsync.HLC{L: time.Now().UnixMilli()}, Body: raw}
		res, err := db.Push(devsync.PushRequest{Device: "bench", Mutations: []devsync.Mutation{{N: n, Op: "upsert", Record: r}}}, nil)
		if err != nil || res.Applied != 1 {
			b.Fatalf("%v %+v", err, res)
		}
		b.StartTimer()
		srv.RecordsChanged(res.Changed)
		if _, err := srv.Flags(day, ""); err != nil {
			b.Fatal(err)
		}
	}
}

func mustDay(day string, n int) string {
	t, _ := time.Parse("2006-01-02", day)
	return t.AddDate(0, 0, n).Format("2006-01-02")
}
