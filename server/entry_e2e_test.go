package server_test

import (
	"path/filepath"
	"testing"
	"time"

	"cornerbook/pwa/pwatest"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A correction keeps when the entry was observed: the check-in's at stays,
// only its stamp moves. A second check-in of the same athlete on the same
// day is offered as a correction of the first, not saved beside it without
// a word.
func TestE2ECorrectionKeepsItsTimeAndASecondCheckinIsOffered(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(ctx))
	require.NoError(t, pwatest.LogCheckin(ctx, "Ana Pereira", 64.2))
	require.NoError(t, pwatest.WaitSynced(ctx))
	first := h.all()["checkin"]
	require.Len(t, first, 1)
	orig := first[0]

	time.Sleep(1100 * time.Millisecond) // a correction made later
	require.NoError(t, pwatest.Route(ctx, "/checkin?edit="+orig.ID))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="checkin-mass"]').value === '64.2'`, 5*time.Second))
	require.NoError(t, pwatest.Type(ctx, "checkin-mass", "64.0"))
	require.NoError(t, pwatest.SaveAndWait(ctx, "checkin-save"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	got := h.all()["checkin"]
	require.Len(t, got, 1)
	assert.Equal(t, orig.At, got[0].At, "the correction keeps the time the entry was observed")
	assert.Greater(t, got[0].Stamp.L, orig.Stamp.L, "the stamp records the edit")
	assert.InDelta(t, 64.0, e2eBody(t, got[0])["mass_kg"], 1e-9)

	// The same athlete again today: the app offers to correct today's.
	require.NoError(t, pwatest.Route(ctx, "/checkin"))
	require.NoError(t, pwatest.SelectAthlete(ctx, "Ana Pereira"))
	require.NoError(t, pwatest.Type(ctx, "checkin-mass", "63.8"))
	require.NoError(t, pwatest.Click(ctx, "checkin-save"))
	require.NoError(t, pwatest.WaitText(ctx, "checkin-existing", "already has a check-in today"))
	var n int
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (m) => (await m.byKind('checkin')).length)`, &n))
	require.Equal(t, 1, n, "nothing saved before the coach answers")
	require.NoError(t, pwatest.SaveAndWait(ctx, "checkin-correct-existing"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	got = h.all()["checkin"]
	require.Len(t, got, 1, "one check-in for the day")
	assert.Equal(t, orig.ID, got[0].ID)
	assert.Equal(t, orig.At, got[0].At)
	assert.InDelta(t, 63.8, e2eBody(t, got[0])["mass_kg"], 1e-9)
}

// Camp set-up refuses at entry what the hub would refuse, with the hub's
// words: a birth year of 1850 is never "added on this device".
func TestE2ECampSetUpRefusesWhatTheHubWould(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.Route(ctx, "/camp"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="camp-athlete-name"]')`, 10*time.Second))
	require.NoError(t, pwatest.Type(ctx, "camp-athlete-name", "Old Timer"))
	require.NoError(t, pwatest.Type(ctx, "camp-athlete-year", "1850"))
	require.NoError(t, pwatest.Click(ctx, "camp-athlete-save"))
	require.NoError(t, pwatest.WaitText(ctx, "save-error", "Birth year: must be between 1940 and"))
	msg, err := pwatest.Text(ctx, "save-error")
	require.NoError(t, err)
	assert.Contains(t, msg, "got 1850")
	assert.NotContains(t, msg, "body.", "words, not JSON paths")
	waiting, err := pwatest.Waiting(ctx)
	require.NoError(t, err)
	assert.Zero(t, waiting, "nothing queued for the hub")
	var n int
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (m) => (await m.byKind('athlete')).length)`, &n))
	assert.Zero(t, n, "nothing kept on the device")
}
