package server_test

import (
	"bytes"
	"fmt"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	"cornerbook/server/dataio"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// fightWeekCamp: a welterweight (147 lb) under the 2019 check-weight
// programme, weighed in on 2026-11-13 13:00−07:00, bout 2026-11-14
// 20:30−07:00 (REFERENCES §14.1's worked numbers, moved to this camp).
func fightWeekCamp(t *testing.T) (*hub, devsync.Record, map[string]devsync.Record) {
	h := newHub(t)
	a := h.athlete("Invented Welter", "lb")
	bout := h.rec("bout", a.ID, "", map[string]any{"camp_start": "2026-09-20", "weigh_in": "2026-11-13T13:00:00-07:00",
		"weigh_in_type": "day_before", "bout_day": "2026-11-14", "bout_at": "2026-11-14T20:30:00-07:00",
		"weight_class": "pro_welterweight", "start_mass_kg": 72.0,
		"rules": map[string]any{"preset": "check_weights_30_14_7",
			"check_weights": []any{map[string]any{"days_before": 30, "over_limit_pct": 10}, map[string]any{"days_before": 14, "over_limit_pct": 5},
				map[string]any{"days_before": 7, "over_limit_pct": 3}},
			"fight_day": map[string]any{"over_official_pct": 10}}})
	bout.Day = ""
	m7 := h.rec("checkin", a.ID, "2026-11-06", map[string]any{"mass_kg": 70.0})
	w := func(typ, at string, kg float64) devsync.Record {
		r := h.rec("weigh_in", a.ID, at[:10], map[string]any{"type": typ, "mass_kg": kg})
		r.At = at
		return r
	}
	recs := map[string]devsync.Record{
		"c30":      w("check", "2026-10-14T09:00:00-07:00", 73.0),
		"c14":      w("check", "2026-10-30T09:00:00-07:00", 70.2),
		"official": w("official", "2026-11-13T13:00:00-07:00", 66.6),
		"fightday": w("fight_day", "2026-11-14T09:00:00-07:00", 71.5),
	}
	resp := h.push("phone-1", 1, a, bout, m7, recs["c30"], recs["c14"], recs["official"], recs["fightday"])
	require.Empty(t, resp.Rejected)
	return h, a, recs
}

// The numbers of REFERENCES §14.1 [D] through the hub: 70.0 → 66.6 kg is a
// 4.8571 % acute loss, 66.6 → 71.5 kg a 7.3574 % regain,
// 2026-11-13T13:00−07:00 → 2026-11-14T20:30−07:00 is 31.5 h; the 14-day
// check weight of 70.2 kg is over its cap of 70.0120 kg (limit + 5 %).
func TestFightWeek_API(t *testing.T) {
	h, a, recs := fightWeekCamp(t)
	var v server.FightWeekView
	require.Equal(t, 200, h.get("/api/athletes/"+a.ID+"/fightweek?day=2026-11-14", &v))
	require.NotNil(t, v.Official)
	assert.Equal(t, 66.6, v.Official.MassKg)
	assert.True(t, v.Official.Made)
	near := func(what string, got *float64, want, tol float64) {
		t.Helper()
		if assert.NotNil(t, got, what) {
			assert.InDelta(t, want, *got, tol, what)
		}
	}
	near("acute loss", v.AcuteLossPct, 4.8571, 0.00005)              // REFERENCES §14.1 [D]
	near("regain", v.RegainPct, 7.3574, 0.00005)                     // REFERENCES §14.1 [D]
	near("hours weigh-in to bout", v.HoursWeighInToBout, 31.5, 1e-9) // REFERENCES §14.1 [D]
	require.Len(t, v.Checks, 3)
	byID := map[string]int{}
	for i, c := range v.Checks {
		byID[c.ID] = i
	}
	c14 := v.Checks[byID[recs["c14"].ID]]
	require.NotNil(t, c14.Pass)
	assert.False(t, *c14.Pass)
	near("14-day cap", c14.CapKg, 70.0120, 0.00005) // REFERENCES §14.1 [V rule, D value]
	assert.Contains(t, c14.Reason, "154.8 lb, 0.4 lb over the cap of 154.4 lb")
	fd := v.Checks[byID[recs["fightday"].ID]]
	near("fight-day cap", fd.CapKg, 73.26, 1e-9) // REFERENCES §14.1 [D]
	assert.True(t, *fd.Pass)
	assert.Equal(t, "check_weights_30_14_7", v.Preset.ID)
	assert.Contains(t, v.Preset.Caution, "current rules")
	assert.NotEmpty(t, v.Cautions)
	assert.Len(t, v.Days, 9)
	for _, line := range v.Words {
		assert.NotContains(t, line, "_")
	}

	// The check weight's day carries the weigh-in alert.
	fl, err := h.srv.Flags("2026-10-30", a.ID)
	require.NoError(t, err)
	found := false
	for _, f := range fl {
		if f.Rule == "weigh_in" && f.Level == "alert" {
			found = true
			assert.Contains(t, f.Reason, "over the cap")
		}
	}
	assert.True(t, found, "no weigh-in alert on the check weight's day")
}

// Bad weigh-ins and return-to-sport steps are refused with the field named,
// one bad entry never takes the others with it, and nothing stored changes.
func TestFightWeek_RefusedInOrder(t *testing.T) {
	h, a, _ := fightWeekCamp(t)
	inc := h.rec("incident", a.ID, "2026-11-01", map[string]any{"type": "knockout", "seen_by": "Dr. A. Example"})
	inc.At = "2026-11-01T21:00:00-07:00"
	step := func(n int, at string) devsync.Record {
		r := h.rec("rts_step", a.ID, at[:10], map[string]any{"incident": inc.ID, "step": n, "supervised_by": "Physio B. Example"})
		r.At = at
		return r
	}
	s1, s2, s3 := step(1, "2026-11-02T09:00:00-07:00"), step(2, "2026-11-03T09:00:00-07:00"), step(3, "2026-11-04T09:00:00-07:00")
	require.Equal(t, 4, h.push("phone-1", 20, inc, s1, s2, s3).Applied)
	before := h.export()

	w := func(typ, at string, kg float64) devsync.Record {
		r := h.rec("weigh_in", a.ID, at[:10], map[string]any{"type": typ, "mass_kg": kg})
		r.At = at
		return r
	}
	bad := []struct {
		name  string
		rec   devsync.Record
		field string
		words string
	}{
		{"fight-day weigh-in before the official one", w("fight_day", "2026-11-13T09:00:00-07:00", 70.0), "at", "before the official weigh-in recorded at 2026-11-13 13:00"},
		{"check weight after the bout", w("check", "2026-11-14T22:00:00-07:00", 71.0), "at", "after the bout on 2026-11-14 20:30"},
		{"step 5 with no step 4", step(5, "2026-11-06T09:00:00-07:00"), "body.step", "step 4 is not recorded"},
		{"step 4 under 24 h after step 3", step(4, "2026-11-04T20:00:00-07:00"), "at", "11.0 h after step 3"},
		{"step for an incident not recorded", func() devsync.Record {
			r := step(4, "2026-11-06T09:00:00-07:00")
			r.Body = []byte(`{"incident":"0190a0b0-0000-7000-8000-000000000009","step":4,"supervised_by":"Physio B. Example"}`)
			return r
		}(), "body.incident", "no incident"},
	}
	good := h.rec("checkin", a.ID, "2026-11-12", map[string]any{"mass_kg": 68.1})
	recs := []devsync.Record{}
	for _, b := range bad {
		recs = append(recs, b.rec)
	}
	recs = append(recs, good)
	resp := h.push("phone-1", 100, recs...)
	require.Len(t, resp.Rejected, len(bad), "%+v", resp.Rejected)
	for i, b := range bad {
		rj := resp.Rejected[i]
		assert.Equal(t, b.rec.ID, rj.ID, b.name)
		assert.Equal(t, b.field, rj.Field, b.name)
		assert.Contains(t, rj.Reason, b.words, b.name)
		assert.Equal(t, devsync.CodeValidation, rj.Code, b.name)
	}
	after := h.export()
	// Only the good check-in was added; every earlier record is as it was.
	for _, line := range bytes.Split(bytes.TrimSpace(before), []byte("\n")) {
		assert.True(t, bytes.Contains(after, line), "stored record changed: %s", line)
	}
	assert.Equal(t, len(bytes.Split(bytes.TrimSpace(before), []byte("\n")))+1, len(bytes.Split(bytes.TrimSpace(after), []byte("\n"))))
	for _, b := range bad {
		assert.False(t, bytes.Contains(after, []byte(b.rec.ID)), "refused %s was stored", b.name)
	}

	// The ladder: step 3 done, step 4 from 24 h later (Patricios et al. 2023).
	var m server.MedicalView
	require.Equal(t, 200, h.get("/api/athletes/"+a.ID+"/medical", &m))
	require.Len(t, m.StandDowns, 1)
	sd := m.StandDowns[0]
	assert.Equal(t, 3, sd.Ladder.Current)
	assert.Equal(t, 4, sd.Ladder.Next)
	assert.Equal(t, "2026-11-05T09:00:00-07:00", sd.Ladder.NextFrom)
	// A knockout on 2026-11-01: ARP's 60 days (Neidecker et al. 2019).
	assert.Equal(t, "2026-12-31", sd.EarliestEnd)
	assert.True(t, sd.InForce)
	assert.Equal(t, "Dr. A. Example", sd.SeenBy)
	assert.Len(t, sd.Steps, 3)
}

// An export whose return-to-sport steps were corrected out of order (step
// 3's note edited after step 4 was logged) imports into an empty hub.
func TestFightWeek_ExportImportsAgain(t *testing.T) {
	h, a, _ := fightWeekCamp(t)
	inc := h.rec("incident", a.ID, "2026-11-01", map[string]any{"type": "head_knock"})
	inc.At = "2026-11-01T21:00:00-07:00"
	var steps []devsync.Record
	for n := 1; n <= 4; n++ {
		at := fmt.Sprintf("2026-11-0%dT09:00:00-07:00", n+1)
		r := h.rec("rts_step", a.ID, at[:10], map[string]any{"incident": inc.ID, "step": n, "supervised_by": "Physio B. Example"})
		r.At = at
		steps = append(steps, r)
	}
	require.Equal(t, 5, h.push("phone-1", 20, append([]devsync.Record{inc}, steps...)...).Applied)
	fix := steps[2]
	fix.Body = []byte(`{"incident":"` + inc.ID + `","step":3,"supervised_by":"Physio B. Example","symptoms":"none"}`)
	fix.Stamp.L += 1000
	require.Equal(t, 1, h.push("phone-1", 40, fix).Applied)
	// The incident corrected after its steps (the clinician's date added).
	inc2 := inc
	inc2.Body = []byte(`{"type":"head_knock","seen_by":"Dr. A. Example","clinician_day":"2026-11-20"}`)
	inc2.Stamp.L += 2000
	require.Equal(t, 1, h.push("phone-1", 41, inc2).Applied)
	exp := h.export()
	for i := 1; i < len(steps); i++ {
		require.Less(t, bytes.Index(exp, []byte(steps[i-1].ID)), bytes.Index(exp, []byte(steps[i].ID)), "steps in the order they happened")
	}

	h2 := newHub(t)
	_, err := dataio.ImportJSONL(h2.store, bytes.NewReader(exp), records.PrepareAt(h2.now), nil)
	require.NoError(t, err)
	assert.Equal(t, strings.Count(string(exp), "\n"), strings.Count(string(h2.export()), "\n"))
	// Sent again as a file written by another tool, in the order the
	// records last changed (step 3 after step 4, the incident last), it
	// imports all the same.
	lines := strings.Split(strings.TrimSpace(string(exp)), "\n")
	var shuffled []string
	for _, l := range lines {
		if !strings.Contains(l, steps[2].ID) && !strings.Contains(l, inc.ID+`","kind":"incident`) {
			shuffled = append(shuffled, l)
		}
	}
	for _, l := range lines {
		if strings.Contains(l, steps[2].ID) || strings.Contains(l, inc.ID+`","kind":"incident`) {
			shuffled = append(shuffled, l)
		}
	}
	h3 := newHub(t)
	_, err = dataio.ImportJSONL(h3.store, strings.NewReader(strings.Join(shuffled, "\n")+"\n"), records.PrepareAt(h3.now), nil)
	require.NoError(t, err)
}
