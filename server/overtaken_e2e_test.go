package server_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/http"
	"path/filepath"
	"testing"
	"time"

	"cornerbook/pwa/pwatest"
	devsync "cornerbook/sync"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Two devices correct the same check-in offline; the later stamp wins. The
// device whose correction lost is told in words, with the other device's
// time, and can apply its correction again; the entry's history shows
// every version the hub received, the overtaken one too.
func TestE2EOvertakenCorrectionIsShownAndCanBeApplied(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	h.pushAthletes(map[string]string{"Dana Example": "kg"})
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(ctx))
	require.NoError(t, pwatest.LogCheckin(ctx, "Dana Example", 60.0))
	require.NoError(t, pwatest.WaitSynced(ctx))
	orig := h.all()["checkin"][0]

	// This device corrects to 60.2 while its sync is held back…
	require.NoError(t, pwatest.Eval(ctx, `(navigator.locks.request('cornerbook-sync', () => new Promise((r) => { window.__release = r; })), true)`, nil))
	require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`import('/js/db.js').then((m) => m.save({ id: %q, kind: 'checkin', athlete: %q, day: %q, body: { mass_kg: 60.2 } })).then(() => true)`,
		orig.ID, orig.Athlete, orig.Day), nil))
	// …and the tablet's correction to 61.0, stamped later, reaches the hub first.
	tablet := orig
	tablet.Device = "tablet-1"
	tablet.Stamp = devsync.HLC{L: time.Now().Add(20 * time.Second).UnixMilli()}
	tablet.Body = json.RawMessage(`{"mass_kg":61}`)
	b, _ := json.Marshal(devsync.PushRequest{Device: "tablet-1", Mutations: []devsync.Mutation{{N: 1, Op: "upsert", Record: tablet}}})
	res, err := http.Post(h.url("/api/push"), "application/json", bytes.NewReader(b))
	require.NoError(t, err)
	res.Body.Close()
	require.Equal(t, http.StatusOK, res.StatusCode)
	require.NoError(t, pwatest.Eval(ctx, `(window.__release(), true)`, nil))

	require.NoError(t, pwatest.Poll(ctx, `(await (await import('/js/db.js')).counts()).overtaken === 1`, 20*time.Second))
	require.NoError(t, pwatest.WaitText(ctx, "status-overtaken", "1 correction overtaken"))
	assert.InDelta(t, 61.0, e2eBody(t, h.all()["checkin"][0])["mass_kg"], 1e-9)

	// The history holds all three versions, the overtaken one marked.
	hr, err := http.Get(h.url("/api/records/" + orig.ID + "/history"))
	require.NoError(t, err)
	var hist struct {
		Received []struct {
			Device string          `json:"device"`
			Kept   bool            `json:"kept"`
			Body   json.RawMessage `json:"body"`
		} `json:"received"`
	}
	require.NoError(t, json.NewDecoder(hr.Body).Decode(&hist))
	hr.Body.Close()
	require.Len(t, hist.Received, 3)
	assert.JSONEq(t, `{"mass_kg":60.2}`, string(hist.Received[1].Body))
	assert.False(t, hist.Received[1].Kept, "this device's correction was overtaken")
	assert.Equal(t, "tablet-1", hist.Received[2].Device)
	assert.True(t, hist.Received[2].Kept)

	// The entry's history on Today shows both corrections, with device and time.
	require.NoError(t, pwatest.Route(ctx, "/today"))
	require.NoError(t, pwatest.Click(ctx, "history-open-"+orig.ID))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid="history-`+orig.ID+`"] li').length === 3`, 10*time.Second))
	hist2, err := pwatest.Text(ctx, "history-"+orig.ID)
	require.NoError(t, err)
	assert.Contains(t, hist2, "this device")
	assert.Contains(t, hist2, "overtaken")
	assert.Contains(t, hist2, time.UnixMilli(tablet.Stamp.L).Format("15:04"))

	// The device says so in words and applies its correction again.
	raw, err := pwatest.ReadIDB(ctx, "rejected")
	require.NoError(t, err)
	require.Len(t, raw, 1)
	var row struct{ N int }
	require.NoError(t, json.Unmarshal(raw[0], &row))
	require.NoError(t, pwatest.Route(ctx, "/settings"))
	at := time.UnixMilli(tablet.Stamp.L).Format("15:04")
	require.NoError(t, pwatest.WaitText(ctx, fmt.Sprintf("rejected-%d", row.N), "Your correction of check-in of Dana Example"))
	require.NoError(t, pwatest.WaitText(ctx, fmt.Sprintf("rejected-%d", row.N), "was overtaken by another device's correction at "+at))
	require.NoError(t, pwatest.Click(ctx, fmt.Sprintf("rejected-reapply-%d", row.N)))
	require.NoError(t, pwatest.Poll(ctx, `!document.querySelector('[data-testid="status-overtaken"]')`, 5*time.Second))
	require.NoError(t, pwatest.WaitSynced(ctx))
	assert.InDelta(t, 60.2, e2eBody(t, h.all()["checkin"][0])["mass_kg"], 1e-9, "applied again, it wins")
	assert.Equal(t, orig.At, h.all()["checkin"][0].At)
}
