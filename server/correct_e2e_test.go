package server_test

import (
	"encoding/json"
	"fmt"
	"math"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// firstOf is an athlete's earliest record of a kind in the hub's store.
func firstOf(t *testing.T, h *coachHub, athlete, kind string, keep func(map[string]any) bool) devsync.Record {
	t.Helper()
	var out *devsync.Record
	require.NoError(t, h.db.Range(athlete, kind, "", "", func(r devsync.Record) error {
		var b map[string]any
		require.NoError(t, json.Unmarshal(r.Body, &b))
		if out == nil && keep(b) {
			x := r
			out = &x
		}
		return nil
	}))
	require.NotNil(t, out, "%s of %s", kind, athlete)
	return *out
}

// TestTodayCorrectsAWeighInAndAStep: "Edit" on the Today list opens a
// weigh-in and a return-to-sport step in their forms with that entry's
// values — type, mass in the fighter's units, day, time and offset; step,
// symptoms, who supervised, day and time — and saving corrects the same
// entry on the hub, keeping what was not touched.
func TestTodayCorrectsAWeighInAndAStep(t *testing.T) {
	h := startCoachHub(t)
	ids := h.ids()
	sami, mateo := ids["Sami Arkwright"], ids["Mateo Lindqvist"]
	wi := firstOf(t, h, sami, "weigh_in", func(b map[string]any) bool { return b["type"] == "check" })
	var wb records.WeighIn
	require.NoError(t, json.Unmarshal(wi.Body, &wb))
	step := firstOf(t, h, mateo, "rts_step", func(b map[string]any) bool { return b["step"] == 3.0 })
	var sb records.RTSStep
	require.NoError(t, json.Unmarshal(step.Body, &sb))

	ctx := coachBrowser(t, h, "/today?day="+wi.Day)
	value := func(testid string) string {
		var v string
		require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`document.querySelector(%q).value`, pwatest.Q(testid)), &v))
		return v
	}

	// The weigh-in: Sami weighs in lb; 1 lb = 0.45359237 kg (NIST SP 811).
	require.NoError(t, pwatest.Route(ctx, "/today?day="+wi.Day))
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, pwatest.Q("edit-"+wi.ID)), 15*time.Second))
	require.NoError(t, pwatest.Click(ctx, "edit-"+wi.ID))
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector('[data-testid="fw-weighin-form"][data-editing=%q]') && document.querySelector('[data-testid="fw-mass"]').value !== ''`, wi.ID), 15*time.Second))
	lb := wb.MassKg / 0.45359237
	assert.Equal(t, fmt.Sprintf("%.1f", lb), value("fw-mass"), "the mass in the fighter's units")
	assert.Equal(t, wi.At[:10], value("fw-date"))
	assert.Equal(t, wi.At[11:16], value("fw-time"))
	off := wi.At[19:]
	if off == "Z" {
		off = "+00:00"
	}
	assert.Equal(t, off, value("fw-offset"))
	require.NoError(t, pwatest.Poll(ctx, pwatest.Pressed("fw-type-check"), 5*time.Second))
	note, _ := pwatest.Text(ctx, "editing")
	assert.Contains(t, note, "Correcting the entry of "+wi.Day)
	newLb := math.Round(lb*10)/10 + 0.4
	require.NoError(t, coachSet(ctx, "fw-mass", fmt.Sprintf("%.1f", newLb)))
	require.NoError(t, pwatest.Click(ctx, "fw-save"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "Correction saved"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	got, err := h.db.Get(wi.ID)
	require.NoError(t, err)
	var gb records.WeighIn
	require.NoError(t, json.Unmarshal(got.Body, &gb))
	assert.InDelta(t, newLb*0.45359237, gb.MassKg, 0.0005, "the corrected mass, in kg")
	assert.Equal(t, "check", gb.Type)
	assert.Equal(t, wi.At, got.At, "the weigh-in's time is kept")
	assert.Equal(t, sami, got.Athlete)

	// The return-to-sport step.
	require.NoError(t, pwatest.Route(ctx, "/today?day="+step.Day))
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, pwatest.Q("edit-"+step.ID)), 15*time.Second))
	require.NoError(t, pwatest.Click(ctx, "edit-"+step.ID))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="rts-symptoms"]') && document.querySelector('[data-testid="rts-symptoms"]').value !== '' && document.querySelector('[data-testid="rts-date"]')`, 15*time.Second))
	require.NoError(t, pwatest.Poll(ctx, pwatest.Pressed("rts-step-3"), 5*time.Second))
	assert.Equal(t, sb.Symptoms, value("rts-symptoms"))
	assert.Equal(t, sb.SupervisedBy, value("rts-by"))
	assert.Equal(t, step.At[:10], value("rts-date"))
	assert.Equal(t, step.At[11:16], value("rts-time"))
	save, _ := pwatest.Text(ctx, "rts-save")
	assert.Equal(t, "Save correction (step 3)", save)
	var tooSoon bool
	require.NoError(t, pwatest.Eval(ctx, `!!document.querySelector('[data-testid="rts-too-soon"]')`, &tooSoon))
	assert.False(t, tooSoon, "the step itself is not counted as the one before it")
	require.NoError(t, coachSet(ctx, "rts-symptoms", "None; shadow boxing, skipping and footwork."))
	require.NoError(t, pwatest.Click(ctx, "rts-save"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "Correction saved"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	got, err = h.db.Get(step.ID)
	require.NoError(t, err)
	var gs records.RTSStep
	require.NoError(t, json.Unmarshal(got.Body, &gs))
	assert.Equal(t, "None; shadow boxing, skipping and footwork.", gs.Symptoms)
	assert.Equal(t, 3, gs.Step)
	assert.Equal(t, sb.SupervisedBy, gs.SupervisedBy)
	assert.Equal(t, sb.Incident, gs.Incident)
	assert.Equal(t, step.At, got.At, "the step's time is kept")
	// Still one step 3 on the hub: corrected, not added.
	n := 0
	require.NoError(t, h.db.Range(mateo, "rts_step", "", "", func(r devsync.Record) error { n++; return nil }))
	assert.Equal(t, 3, n)
}
