package pwa_test

import (
	"encoding/json"
	"testing"
	"time"

	"cornerbook/pwa/pwatest"
	cbrecords "cornerbook/server/records"

	"github.com/stretchr/testify/require"
)

// TestAppRefusesWhatTheHubRefuses holds the app's checks to the hub's:
// for every kind, every limit of every field (both sides, and the limit
// itself) and every case of the registry, the app in Chromium refuses
// exactly what the hub's Prepare refuses, naming the same field in the
// same words, and keeps what the hub keeps. A refused entry is not saved.
func TestAppRefusesWhatTheHubRefuses(t *testing.T) {
	probes, err := cbrecords.Probes(time.Now())
	require.NoError(t, err)
	s := newAppServer(t)
	_, ctx, _ := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	in, err := json.Marshal(probes)
	require.NoError(t, err)
	var got []struct {
		Field  string `json:"field"`
		Reason string `json:"reason"`
	}
	require.NoError(t, pwatest.Eval(ctx, `import('/js/checks.js').then((m) => `+string(in)+`.map((p) => m.checkBody(p.kind, p.body) || {}))`, &got))
	require.Len(t, got, len(probes))
	refused := 0
	for i, p := range probes {
		if p.Field != "" {
			refused++
		}
		if got[i].Field != p.Field || got[i].Reason != p.Reason {
			t.Errorf("%s, %s:\n hub: %q %q\n app: %q %q", p.Kind, p.What, p.Field, p.Reason, got[i].Field, got[i].Reason)
		}
	}
	require.Greater(t, refused, 80, "the probes must exercise the refusals")

	// Saving what the hub would refuse leaves nothing behind.
	var res struct {
		Field string `json:"field"`
		Msg   string `json:"msg"`
		N     int    `json:"n"`
	}
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (db) => {
		let e = {};
		try { await db.save({ kind: 'checkin', athlete: 'a1', day: '2026-03-02', body: { mass_kg: 900 } }); } catch (err) { e = err; }
		return { field: e.field, msg: e.message, n: (await db.byKind('checkin')).length + (await db.outboxBatch(10)).length };
	})`, &res))
	require.Equal(t, "body.mass_kg", res.Field)
	require.Equal(t, "Body mass: must be between 25 and 250 kg; got 900", res.Msg)
	require.Zero(t, res.N, "a refused entry is neither stored nor queued")
}
