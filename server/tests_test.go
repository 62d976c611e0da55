package server_test

import (
	"encoding/json"
	"fmt"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	devsync "cornerbook/sync"
)

// TestTests_BadInputStoresNothing: a test the hub would refuse — a bar
// speed that rises with the load, a set of 0 reps, a 30-15 IFT stage the
// protocol does not have — is refused with its field named, the entries
// around it are stored, and what was stored before is unchanged, even when
// the refused entry is a correction of a stored one.
func TestTests_BadInputStoresNothing(t *testing.T) {
	h := newHub(t)
	a := h.athlete("Rafa Inventado", "kg")
	squat := h.rec("strength", a.ID, "2026-11-18", map[string]any{"exercise": "bench press", "sets": []any{
		map[string]any{"load_kg": 40, "reps": 5, "mpv_ms": 1.0}, map[string]any{"load_kg": 60, "reps": 4, "mpv_ms": 0.75}, map[string]any{"load_kg": 80, "reps": 3, "mpv_ms": 0.5}}})
	ift := h.rec("fitness_test", a.ID, "2026-11-18", map[string]any{"protocol": "ift_30_15", "stage": 23})
	require.Equal(t, 3, h.push("phone-1", 1, a, squat, ift).Applied)

	later := func(r devsync.Record, body map[string]any) devsync.Record {
		r.Body, _ = json.Marshal(body)
		r.Stamp.L += 1000
		return r
	}
	cases := []struct {
		name   string
		bad    devsync.Record
		field  string
		reason string
	}{
		{"a velocity that rises with load", later(squat, map[string]any{"exercise": "bench press", "sets": []any{
			map[string]any{"load_kg": 40, "reps": 5, "mpv_ms": 1.0}, map[string]any{"load_kg": 60, "reps": 4, "mpv_ms": 0.75}, map[string]any{"load_kg": 80, "reps": 3, "mpv_ms": 0.9}}}),
			"body.sets[2].mpv_ms", "bar speed falls as the load rises"},
		{"0 reps", h.rec("strength", a.ID, "2026-11-19", map[string]any{"exercise": "back squat", "sets": []any{map[string]any{"load_kg": 100, "reps": 0}}}),
			"body.sets[0].reps", "got 0"},
		{"a stage the protocol does not have", later(ift, map[string]any{"protocol": "ift_30_15", "stage": 40}),
			"body.stage", "got 40"},
	}
	n := uint64(10)
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) {
			before := h.export()
			okA := h.rec("note", a.ID, "2026-11-20", map[string]any{"text": "before"})
			okB := h.rec("note", a.ID, "2026-11-20", map[string]any{"text": "after"})
			c.bad.Device = "phone-1"
			resp := h.push("phone-1", n, okA, c.bad, okB)
			n += 3
			require.Len(t, resp.Rejected, 1)
			assert.Equal(t, c.field, resp.Rejected[0].Field)
			assert.Contains(t, resp.Rejected[0].Reason, c.reason)
			assert.Equal(t, 2, resp.Applied, "the entries around the refused one are stored")
			after := h.export()
			for _, line := range strings.Split(strings.TrimSpace(string(before)), "\n") {
				assert.Contains(t, string(after), line, "a stored entry changed")
			}
		})
	}
	got, err := h.store.Get(squat.ID)
	require.NoError(t, err)
	assert.Contains(t, string(got.Body), `"lv_1rm_kg":106.4`, "the stored test still holds its own numbers")
}

// TestTests_HistoryAndPrescription: the hub lists a fighter's tests with
// their derived values and changes, and draws a prescription per fighter
// from the latest: 19.0 km/h at 90 % for 15 s → 71.25 m (REFERENCES §14.2
// [D]); HRmax by Tanaka 2001 at 24 years → 191.2 bpm, 90–95 % → 172.08–
// 181.64 bpm [D]; a measured maximum replaces it; a fighter with no test is
// named as missing one.
func TestTests_HistoryAndPrescription(t *testing.T) {
	h := newHub(t)
	mk := func(name string, birth int) devsync.Record {
		r := h.rec("athlete", "", "2026-11-01", map[string]any{"name": name, "units": "kg", "birth_year": birth})
		r.Athlete = r.ID
		return r
	}
	ana, ben, cy := mk("Ana Ficticia", 2002), mk("Ben Madeup", 1996), mk("Cy Notreal", 2000)
	recs := []devsync.Record{ana, ben, cy,
		h.rec("fitness_test", ana.ID, "2026-10-20", map[string]any{"protocol": "ift_30_15", "stage": 21}),
		h.rec("fitness_test", ana.ID, "2026-11-17", map[string]any{"protocol": "ift_30_15", "stage": 23}),
		h.rec("fitness_test", ben.ID, "2026-11-17", map[string]any{"protocol": "ift_30_15", "stage": 24}),
		h.rec("fitness_test", ben.ID, "2026-11-17", map[string]any{"protocol": "hr_max", "hr_max_bpm": 197}),
		h.rec("fitness_test", ana.ID, "2026-11-18", map[string]any{"protocol": "repeated_sprint", "sprint_s": []float64{4.00, 4.05, 4.10, 4.12, 4.20, 4.25}}),
		h.rec("strength", ana.ID, "2026-11-18", map[string]any{"exercise": "back squat", "sets": []any{map[string]any{"load_kg": 100, "reps": 5}}}),
		h.rec("jump", ana.ID, "2026-11-18", map[string]any{"test": "dj", "drop_cm": 40, "flight_ms": []float64{500}, "contact_ms": []float64{200}}),
		h.rec("jump", ana.ID, "2026-11-18", map[string]any{"test": "cmj", "flight_ms": []float64{500, 505, 510}}),
	}
	require.Equal(t, len(recs), h.push("phone-1", 1, recs...).Applied)

	var rep server.TestsReport
	require.Equal(t, 200, h.get("/api/athletes/"+ana.ID+"/tests", &rep))
	require.Len(t, rep.Tests, 5, "IFT twice, sprints, squat, drop jump; the CMJ is monitoring, not a test")
	second := rep.Tests[1]
	require.NotNil(t, second.Change)
	assert.InDelta(t, 1.0, second.Change.Delta, 1e-9)
	assert.Equal(t, "Thomas et al. 2016", second.Change.Source)
	assert.InDelta(t, 19.0, rep.Latest.VIFTKmh, 0)
	assert.InDelta(t, 191.2, rep.Latest.HRMaxBpm, 1e-9)
	assert.Equal(t, "age", rep.Latest.HRMaxFrom)

	var pr struct{ Targets []server.Target }
	q := fmt.Sprintf("/api/prescription?pct_vift=90&work_s=15&hr_lo_pct=90&hr_hi_pct=95&exercise=back%%20squat&pct_1rm=80&athletes=%s,%s,%s", ana.ID, ben.ID, cy.ID)
	require.Equal(t, 200, h.get(q, &pr))
	require.Len(t, pr.Targets, 3)
	by := map[string]server.Target{}
	for _, tg := range pr.Targets {
		by[tg.Name] = tg
	}
	assert.InDelta(t, 71.25, by["Ana Ficticia"].TargetRepM, 1e-9)
	assert.InDelta(t, 172.08, by["Ana Ficticia"].TargetHRLo, 1e-9)
	assert.InDelta(t, 181.64, by["Ana Ficticia"].TargetHRHi, 1e-9)
	assert.InDelta(t, 93.33, by["Ana Ficticia"].TargetKg, 1e-9, "80 % of Epley 116.6667 kg")
	// 19.5 km/h at 90 % for 15 s = 73.125 m (REFERENCES §9 [D]); 90 % of a measured 197 bpm = 177.3.
	assert.InDelta(t, 73.13, by["Ben Madeup"].TargetRepM, 1e-9)
	assert.InDelta(t, 177.3, by["Ben Madeup"].TargetHRLo, 1e-9)
	assert.Equal(t, "measured", by["Ben Madeup"].HRMaxFrom)
	assert.Contains(t, by["Cy Notreal"].Missing, "no 30-15 IFT yet")
	assert.Contains(t, by["Cy Notreal"].Missing, "no back squat test yet")
	assert.Zero(t, by["Cy Notreal"].TargetRepM)

	var e struct{ Field string }
	assert.Equal(t, 400, h.get("/api/prescription?pct_vift=300&work_s=15", &e))
	assert.Equal(t, "pct_vift", e.Field)
}
