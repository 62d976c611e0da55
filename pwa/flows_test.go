package pwa_test

import (
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
)

func TestFlightTimesIntervalsAndTheSparringHold(t *testing.T) {
	s := newAppServer(t)
	_, ctx, _ := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	seed(t, ctx, athlete(idAna, "Ana Pereira", "kg"), athlete(idBeto, "Beto Lindqvist", "lb"))

	// Flight time: the grid shows the height it implies while typing.
	require.NoError(t, pwatest.Route(ctx, "/jumps"))
	require.NoError(t, pwatest.Click(ctx, "jump-mode-flight"))
	require.NoError(t, pwatest.Type(ctx, "jump-"+idAna+"-0", "500"))
	require.NoError(t, pwatest.Type(ctx, "jump-"+idAna+"-1", "520"))
	// h = g·t²/8, g = 9.81: 0.510 s → 31.9 cm (flight-time method; REFERENCES.md).
	require.NoError(t, pwatest.WaitText(ctx, "jump-mean-"+idAna, "510 ms (≈ 31.9 cm)"))
	require.NoError(t, pwatest.WaitText(ctx, "jump-best-"+idAna, "520 ms (≈ 33.2 cm)"))
	require.NoError(t, pwatest.Type(ctx, "jump-"+idAna+"-2", "1500"))
	require.NoError(t, pwatest.Click(ctx, "jumps-save"))
	require.NoError(t, pwatest.WaitText(ctx, "save-error", "Ana Pereira: each attempt must be between 200 and 1000 ms"))
	assert.Empty(t, records(t, ctx, "jump"))
	require.NoError(t, pwatest.Type(ctx, "jump-"+idAna+"-2", "490"))
	require.NoError(t, pwatest.SaveAndWait(ctx, "jumps-save"))
	js := records(t, ctx, "jump")
	require.Len(t, js, 1)
	assert.Equal(t, []any{500.0, 520.0, 490.0}, js[0].Body["flight_ms"])
	assert.Nil(t, js[0].Body["heights_cm"], "the hub derives heights from flight time")

	// Intervals: a template fills the protocol; with no hub in reach the
	// prescription is saved without targets, and what was done is logged
	// against it.
	require.NoError(t, pwatest.Route(ctx, "/intervals"))
	require.NoError(t, pwatest.ClickUntil(ctx, "intervals-protocol-shuttle_30_15", pwatest.Pressed("intervals-protocol-shuttle_30_15"), 3))
	require.NoError(t, pwatest.WaitText(ctx, "intervals-summary", "16 reps, about 15 min in all")) // 16 × 45 s + 1 × 180 s = 900 s
	require.NoError(t, pwatest.ClickUntil(ctx, "intervals-athlete-"+idBeto, pwatest.Pressed("intervals-athlete-"+idBeto), 3))
	require.NoError(t, pwatest.Click(ctx, "intervals-prescribe"))
	if err := pwatest.WaitText(ctx, "saved", "Prescribed for 1 fighter"); err != nil {
		msg, _ := pwatest.Text(ctx, "screen-intervals")
		t.Fatalf("%v: %s", err, msg)
	}
	require.NoError(t, pwatest.Click(ctx, "intervals-log-done"))
	require.NoError(t, pwatest.Type(ctx, "done-done_reps", "15"))
	require.NoError(t, pwatest.Type(ctx, "done-hr_peak", "188"))
	require.NoError(t, pwatest.Type(ctx, "done-rpe", "8"))
	require.NoError(t, pwatest.SaveAndWait(ctx, "intervals-done-save"))
	require.NoError(t, pwatest.WaitText(ctx, "intervals-done", "Done: 15 of 16 reps · peak 188 bpm · RPE 8"))
	iv := records(t, ctx, "intervals")
	require.Len(t, iv, 1)
	b := iv[0].Body
	assert.Equal(t, "shuttle_30_15", b["protocol"])
	assert.EqualValues(t, 30, b["work_s"])
	assert.EqualValues(t, 15, b["rest_s"])
	assert.EqualValues(t, 8, b["reps"])
	assert.EqualValues(t, 2, b["sets"])
	assert.EqualValues(t, 180, b["set_rest_s"])
	assert.EqualValues(t, 15, b["done_reps"])
	assert.EqualValues(t, 188, b["hr_peak"])
	assert.EqualValues(t, 8, b["rpe"])
	assert.Nil(t, b["pct_vift"], "no hub, no test: no target")

	// Incident: a confirm step, then the hold in plain words.
	require.NoError(t, pwatest.Route(ctx, "/incident"))
	require.NoError(t, pwatest.SelectAthlete(ctx, "Ana Pereira"))
	require.NoError(t, pwatest.Click(ctx, "incident-type-head_knock"))
	require.NoError(t, pwatest.Type(ctx, "incident-note", "Caught with a right hand, round 4"))
	require.NoError(t, pwatest.Click(ctx, "incident-next"))
	require.NoError(t, pwatest.WaitText(ctx, "screen-incident-confirm", "This starts a sparring hold for Ana Pereira"))
	assert.Empty(t, records(t, ctx, "incident"), "nothing is saved before the confirmation")
	require.NoError(t, pwatest.Click(ctx, "incident-confirm"))
	require.NoError(t, pwatest.WaitText(ctx, "incident-hold", "No sparring or contact until cleared in writing by a doctor"))
	inc := records(t, ctx, "incident")
	require.Len(t, inc, 1)
	assert.Equal(t, "head_knock", inc[0].Body["type"])

	// The incident stays open until a clearance names it.
	var open int
	require.NoError(t, pwatest.Eval(ctx, `import('/js/screens.js').then((m) => m.openIncidents('`+idAna+`')).then((x) => x.length)`, &open))
	assert.Equal(t, 1, open)

	// A clearance names the incident and who cleared; the hold ends.
	require.NoError(t, pwatest.Route(ctx, "/clearance"))
	require.NoError(t, pwatest.SelectAthlete(ctx, "Ana Pereira"))
	require.NoError(t, pwatest.Click(ctx, "clearance-incident-"+inc[0].ID))
	require.NoError(t, pwatest.Click(ctx, "clearance-save"))
	require.NoError(t, pwatest.WaitText(ctx, "save-error", "Say who gave the written clearance"))
	require.NoError(t, pwatest.Type(ctx, "clearance-by", "Dr. A. Example"))
	require.NoError(t, pwatest.SaveAndWait(ctx, "clearance-save"))
	cl := records(t, ctx, "clearance")
	require.Len(t, cl, 1)
	assert.Equal(t, inc[0].ID, cl[0].Body["incident"])
	assert.Equal(t, "Dr. A. Example", cl[0].Body["by"])
	require.NoError(t, pwatest.WaitText(ctx, "clearance-none", "No open incident"))
	require.NoError(t, pwatest.Eval(ctx, `import('/js/screens.js').then((m) => m.openIncidents('`+idAna+`')).then((x) => x.length)`, &open))
	assert.Equal(t, 0, open)
}
