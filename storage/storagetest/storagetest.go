// Package storagetest helps test code that uses storage: a store in a
// temporary directory that is checked before it closes, a conformance
// suite any store must pass, and a generator of realistic records.
package storagetest

import (
	"encoding/json"
	"errors"
	"fmt"
	"math/rand/v2"
	"path/filepath"
	"testing"
	"time"

	"github.com/google/uuid"
	berrors "go.etcd.io/bbolt/errors"

	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// MustOpen opens a fresh store in t.TempDir() (the first Options given, if
// any; Timeout defaults to 1 s). When the test ends it runs db.Check —
// bbolt's page checks plus the store's invariants — and fails the test on
// any problem, then closes the store. A test that closed the store itself
// is not checked again.
func MustOpen(t testing.TB, opts ...storage.Options) *storage.DB {
	t.Helper()
	var opt storage.Options
	if len(opts) > 0 {
		opt = opts[0]
	}
	db, err := storage.Open(filepath.Join(t.TempDir(), "cornerbook.db"), opt)
	if err != nil {
		t.Fatalf("open store: %v", err)
	}
	t.Cleanup(func() {
		if err := db.Check(); err != nil {
			if errors.Is(err, berrors.ErrDatabaseNotOpen) {
				return
			}
			t.Errorf("store check at the end of the test: %v", err)
		}
		if err := db.Close(); err != nil && !errors.Is(err, berrors.ErrDatabaseNotOpen) {
			t.Errorf("close store: %v", err)
		}
	})
	return db
}

// Gen makes realistic records from a seed: ids shaped like UUIDv7, HLC
// stamps from a clock that moves forward, check-in bodies of about 300
// bytes in all. The same seed gives the same records.
type Gen struct {
	Device string
	rnd    *rand.Rand
	clock  devsync.Clock
	pt     int64 // physical clock, Unix ms
}

// NewGen returns a generator for one device.
func NewGen(seed uint64, device string) *Gen {
	return &Gen{
		Device: device,
		rnd:    rand.New(rand.NewPCG(seed, 0x636f726e6572)),
		pt:     time.Date(2026, 3, 2, 6, 30, 0, 0, time.UTC).UnixMilli(),
	}
}

// ID is a new id in UUIDv7 layout (48-bit ms time, version 7, variant
// bits, random rest), made from the generator's clock and seed.
func (g *Gen) ID() string {
	var u uuid.UUID
	ms := uint64(g.pt)
	for i := 0; i < 6; i++ {
		u[i] = byte(ms >> (40 - 8*i))
	}
	for i := 6; i < 16; i++ {
		u[i] = byte(g.rnd.Uint32())
	}
	u[6] = u[6]&0x0f | 0x70
	u[8] = u[8]&0x3f | 0x80
	return u.String()
}

// Stamp advances the physical clock by 1–2000 ms and stamps an event.
func (g *Gen) Stamp() devsync.HLC {
	g.pt += 1 + g.rnd.Int64N(2000)
	return g.clock.Now(g.pt)
}

// Day is the calendar day of camp day i (0 = 2026-03-02).
func Day(i int) string {
	return time.Date(2026, 3, 2, 0, 0, 0, 0, time.UTC).AddDate(0, 0, i).Format(time.DateOnly)
}

// Checkin is a morning check-in of one athlete on one day.
func (g *Gen) Checkin(athlete, day string) devsync.Record {
	r := devsync.Record{
		ID:      g.ID(),
		Kind:    "checkin",
		Athlete: athlete,
		Day:     day,
		At:      day + "T07:" + fmt.Sprintf("%02d:%02d", g.rnd.IntN(60), g.rnd.IntN(60)) + "+02:00",
		Device:  g.Device,
		Stamp:   g.Stamp(),
	}
	r.Body = g.checkinBody()
	return r
}

func (g *Gen) checkinBody() json.RawMessage {
	notes := []string{"", "slept badly, noisy hotel", "left calf tight after roadwork", "felt sharp on the pads", "travel day tomorrow"}
	b, _ := json.Marshal(map[string]any{
		"mass_kg":  float64(6500+g.rnd.IntN(1500)) / 100,
		"sleep_h":  float64(50+g.rnd.IntN(40)) / 10,
		"sleep":    1 + g.rnd.IntN(5),
		"fatigue":  1 + g.rnd.IntN(5),
		"soreness": 1 + g.rnd.IntN(5),
		"stress":   1 + g.rnd.IntN(5),
		"mood":     1 + g.rnd.IntN(5),
		"rhr_bpm":  45 + g.rnd.IntN(20),
		"usg":      float64(1005+g.rnd.IntN(25)) / 1000,
		"note":     notes[g.rnd.IntN(len(notes))],
	})
	return b
}

// Edit returns a new version of r from this device: a fresh body and a
// stamp above r's (the device has seen r, so its clock applies the
// receive rule first).
func (g *Gen) Edit(r devsync.Record) devsync.Record {
	r.Device = g.Device
	r.Stamp = g.after(r.Stamp)
	if r.Kind == "checkin" {
		r.Body = g.checkinBody()
	}
	return r
}

// Delete returns the tombstone of r with a later stamp.
func (g *Gen) Delete(r devsync.Record) devsync.Record {
	r.Device = g.Device
	r.Stamp = g.after(r.Stamp)
	r.Deleted = true
	return r
}

// Restore returns r live again in the generation above its own.
func (g *Gen) Restore(r devsync.Record) devsync.Record {
	r.Device = g.Device
	r.Stamp = g.after(r.Stamp)
	r.Deleted = false
	r.Gen++
	return r
}

// after advances the physical clock and stamps an event that follows
// seeing stamp seen.
func (g *Gen) after(seen devsync.HLC) devsync.HLC {
	g.pt += 1 + g.rnd.Int64N(2000)
	return g.clock.Update(seen, g.pt)
}

// Records returns one check-in per athlete per day: athletes × days
// records, athlete ids included, from one seed.
func Records(seed uint64, athletes, days int) []devsync.Record {
	g := NewGen(seed, "dev-gen")
	ids := make([]string, athletes)
	for i := range ids {
		ids[i] = g.ID()
	}
	out := make([]devsync.Record, 0, athletes*days)
	for d := 0; d < days; d++ {
		for _, a := range ids {
			out = append(out, g.Checkin(a, Day(d)))
		}
	}
	return out
}

// Mutations numbers records as one device's mutations from n onwards,
// with the operation each record implies.
func Mutations(n uint64, recs ...devsync.Record) []devsync.Mutation {
	out := make([]devsync.Mutation, len(recs))
	for i, r := range recs {
		out[i] = devsync.Mutation{N: n + uint64(i), Op: devsync.OpOf(r), Record: r}
	}
	return out
}
