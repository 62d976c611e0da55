package server_test

import (
	"encoding/json"
	"fmt"
	"path/filepath"
	"testing"
	"time"

	"cornerbook/pwa/pwatest"
	devsync "cornerbook/sync"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// One crafted entry in a push never takes the others with it: the hub
// refuses the push as a whole (a generation no phone holds exactly), the
// app splits it, the three notes around it land, and the crafted entry is
// filed alone, named in words with its field.
func TestE2EOneBadEntryNeverTakesOthersWithIt(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(ctx))

	// Hold the sync and push locks so the four entries go in one push (a
	// save otherwise pushes at once under the push lock alone).
	require.NoError(t, pwatest.Eval(ctx, `(() => { const held = [];
		for (const name of ['cornerbook-sync', 'cornerbook-push']) navigator.locks.request(name, () => new Promise((r) => held.push(r)));
		window.__release = () => held.forEach((r) => r());
		return navigator.locks.query().then((q) => q.held.length) })()`, nil))
	require.NoError(t, pwatest.Poll(ctx, `navigator.locks.query().then((q) => ['cornerbook-sync', 'cornerbook-push'].every((n) => q.held.some((l) => l.name === n)))`, 5*time.Second))
	day := time.Now().Format("2006-01-02")
	note := func(text string) {
		require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.save({ kind: 'note', athlete: '`+ids["Ana Pereira"]+`', day: '`+day+`', body: { text: '`+text+`' } })).then(() => true)`, nil))
	}
	note("Left hand sore after pads.")
	note("Asked for an extra rest day.")
	bad, err := pwatest.QueueUnchecked(ctx, fmt.Sprintf(`{ kind: 'note', athlete: '%s', day: '%s', gen: %d, body: { text: 'crafted' } }`, ids["Ana Pereira"], day, devsync.MaxExact+1))
	require.NoError(t, err)
	note("Weight on track.")
	waiting, err := pwatest.Waiting(ctx)
	require.NoError(t, err)
	require.Equal(t, 4, waiting)
	require.NoError(t, pwatest.Eval(ctx, `(window.__release(), true)`, nil))

	require.NoError(t, pwatest.Poll(ctx, `await import('/js/db.js').then(async (m) => (await m.counts()).waiting === 0 && (await m.counts()).rejected === 1)`, 20*time.Second))
	notes := h.all()["note"]
	require.Len(t, notes, 3, "the three good notes are on the hub")
	for _, n := range notes {
		assert.NotEqual(t, bad, n.ID)
	}
	raw, err := pwatest.ReadIDB(ctx, "rejected")
	require.NoError(t, err)
	require.Len(t, raw, 1)
	var rej struct {
		N            int
		ID, Field    string
		Reason, Code string
	}
	require.NoError(t, json.Unmarshal(raw[0], &rej))
	assert.Equal(t, bad, rej.ID)
	assert.Equal(t, "gen", rej.Field)
	assert.Contains(t, rej.Reason, "2^53")
	require.NoError(t, pwatest.Route(ctx, "/settings"))
	require.NoError(t, pwatest.WaitText(ctx, fmt.Sprintf("rejected-field-%d", rej.N), "Restore counter"))
	txt, err := pwatest.Text(ctx, fmt.Sprintf("rejected-%d", rej.N))
	require.NoError(t, err)
	assert.Contains(t, txt, "Note of Ana Pereira")
	assert.NotContains(t, txt, "mutations[", "no JSON path on screen")
}
