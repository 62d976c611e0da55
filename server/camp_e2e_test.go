package server_test

import (
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	devsync "cornerbook/sync"
)

// TestE2ECampSetUp: on the hub laptop's own screen the coach sets the
// passphrase, adds an athlete (it syncs to the hub), makes a join code
// shown with its QR, sees a device that joined with it in the device list
// (with its unsynced count) and removes it, which revokes its pass.
func TestE2ECampSetUp(t *testing.T) {
	h, accounts := startPairingHub(t)
	srv, db := h.srv, h.db

	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, "http://"+srv.Addr()+"/camp"))

	// First start: the passphrase, from the laptop itself.
	require.NoError(t, pwatest.Type(ctx, "camp-pass1", "gloves on the third hook"))
	require.NoError(t, pwatest.Type(ctx, "camp-pass2", "gloves on the third hook"))
	require.NoError(t, pwatest.Click(ctx, "camp-pass-save"))
	require.NoError(t, pwatest.Poll(ctx, `!document.querySelector('[data-testid="camp-passphrase"]')`, 10*time.Second))
	require.NoError(t, pwatest.WaitText(ctx, "camp-passphrase-set", "Only this laptop can change it"))
	assert.True(t, accounts.HasPassphrase())
	assert.NoError(t, accounts.CheckPassphrase("gloves on the third hook"))

	// An athlete, through the device's own write path, synced to the hub.
	require.NoError(t, pwatest.Type(ctx, "camp-athlete-name", "Noor Achterberg"))
	require.NoError(t, pwatest.Click(ctx, "camp-units-lb"))
	require.NoError(t, pwatest.Click(ctx, "camp-athlete-save"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "Noor Achterberg added"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	var athleteID string
	db.Kind("athlete", func(r devsync.Record) error {
		if strings.Contains(string(r.Body), "Noor Achterberg") {
			athleteID = r.ID
			assert.Equal(t, r.ID, r.Athlete)
			assert.JSONEq(t, `{"name":"Noor Achterberg","units":"lb"}`, string(r.Body))
		}
		return nil
	})
	require.NotEmpty(t, athleteID, "the athlete reached the hub")

	// A join code for her phone, shown with its QR.
	require.NoError(t, pwatest.Poll(ctx, `[...document.querySelectorAll('[data-testid="camp-join-athlete"] option')].some(o => o.textContent === 'Noor Achterberg')`, 10*time.Second))
	require.NoError(t, pwatest.Eval(ctx, `(() => { const s = document.querySelector('[data-testid="camp-join-athlete"]'); s.value = '`+athleteID+`'; s.dispatchEvent(new Event('change', {bubbles: true})); return true })()`, nil))
	require.NoError(t, pwatest.Click(ctx, "camp-join-make"))
	require.NoError(t, pwatest.Poll(ctx, `!!document.querySelector('[data-testid="camp-join-code"] img.qr') && document.querySelector('[data-testid="camp-join-code"] img.qr').naturalWidth > 100`, 10*time.Second))
	shown, err := pwatest.Text(ctx, "camp-join-codetext")
	require.NoError(t, err)
	dev, _, err := accounts.Redeem(shown, "Noor's phone", "192.0.2.7", time.Now())
	require.NoError(t, err, "the code on screen redeems")
	assert.Equal(t, athleteID, dev.Athlete)
	require.NoError(t, accounts.ReportSync(dev.ID, time.Now(), 3))

	// The device list shows it with its waiting entries; removing it revokes it.
	require.NoError(t, pwatest.Reload(ctx))
	require.NoError(t, pwatest.WaitText(ctx, "camp-device-"+dev.ID, "3 entries not yet synced"))
	require.NoError(t, pwatest.Eval(ctx, `(window.confirm = () => true, true)`, nil))
	require.NoError(t, pwatest.Click(ctx, "camp-revoke-"+dev.ID))
	require.NoError(t, pwatest.WaitText(ctx, "camp-device-"+dev.ID, "removed"))
	got, err := accounts.Device(dev.ID)
	require.NoError(t, err)
	assert.True(t, got.Revoked)
}
