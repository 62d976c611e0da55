package pwa_test

import (
	"testing"
	"time"

	"github.com/chromedp/chromedp"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
)

// With the app server down, the service worker serves the shell (also for
// a deep link), entries are saved, and they survive a browser restart on
// the same profile.
func TestOfflineShellAndRestartKeepTheOutbox(t *testing.T) {
	s := newAppServer(t)
	dir := t.TempDir()
	b, ctx, _ := start(t, dir)
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	require.NoError(t, pwatest.WaitControlled(ctx))
	seed(t, ctx, athlete(idAna, "Ana Pereira", "kg"))

	s.down()
	require.NoError(t, pwatest.Reload(ctx))
	require.NoError(t, pwatest.Open(ctx, s.URL("/checkin")), "a deep link opens offline")
	require.NoError(t, pwatest.WaitText(ctx, "screen-checkin", "Morning check-in"))
	require.NoError(t, pwatest.LogCheckin(ctx, "Ana Pereira", 64.2))
	require.NoError(t, pwatest.LogSession(ctx, "Ana Pereira", 4, 45))
	require.NoError(t, pwatest.WaitText(ctx, "status-waiting", "2 entries waiting to sync"))
	require.NoError(t, pwatest.WaitText(ctx, "status-unreachable", "Hub unreachable"))

	b.Close()
	_, ctx2, _ := start(t, dir)
	require.NoError(t, pwatest.Open(ctx2, s.URL("/today")), "the relaunched browser opens the app with the hub still down")
	n, err := pwatest.Waiting(ctx2)
	require.NoError(t, err)
	assert.Equal(t, 2, n)
	require.NoError(t, pwatest.WaitText(ctx2, "status-waiting", "2 entries waiting to sync"))
	require.NoError(t, pwatest.WaitText(ctx2, "today-athlete-"+idAna, "64.2 kg"))
	assert.Len(t, records(t, ctx2, "checkin"), 1)

	// /api is never answered from the cache.
	var status string
	require.NoError(t, pwatest.Eval(ctx2, `fetch('/api/pull?since=0').then(() => 'answered', () => 'network error')`, &status))
	assert.Equal(t, "network error", status)
}

// While the hub is out of reach the app retries, and each try shows in the
// status bar. On a phone at ringside the screen under the thumb must not
// move as it does: "Round done" stays where it was through every try.
func TestSyncTriesDoNotMoveTheScreen(t *testing.T) {
	s := newAppServer(t)
	_, ctx, _ := start(t, "")
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(360, 740)))
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	seed(t, ctx, athlete(idAna, "Ana Pereira", "kg"), athlete(idBeto, "Beto Lindqvist", "lb"))
	require.NoError(t, pwatest.LogRound(ctx, []string{"Ana Pereira"}, "pads", 2))
	require.NoError(t, pwatest.WaitText(ctx, "status-waiting", "1 entry waiting to sync"))
	require.NoError(t, pwatest.WaitText(ctx, "status-unreachable", "Hub unreachable"))

	// Every change to the page records whether a sync is running and
	// where "Round done" is, at the top of the screen as a phone shows it.
	require.NoError(t, pwatest.Eval(ctx, `(() => { scrollTo(0, 0); window.__seen = [];
		const note = () => { const s = document.querySelector('[data-testid="status"]'); const b = document.querySelector('[data-testid="round-done"]');
			window.__seen.push({ syncing: !!s && s.dataset.syncing === 'true', y: b ? b.getBoundingClientRect().y : null }); };
		note(); new MutationObserver(note).observe(document.body, { subtree: true, childList: true, attributes: true, characterData: true }); return true })()`, nil))
	for i := 0; i < 6; i++ {
		require.NoError(t, pwatest.Nudge(ctx))
		time.Sleep(250 * time.Millisecond)
	}
	var seen []struct {
		Syncing bool
		Y       *float64
	}
	require.NoError(t, pwatest.Eval(ctx, `window.__seen`, &seen))
	tries := 0
	ys := map[float64]int{}
	for i, s := range seen {
		if s.Syncing && (i == 0 || !seen[i-1].Syncing) {
			tries++
		}
		require.NotNil(t, s.Y, "Round done is on the screen")
		ys[*s.Y]++
	}
	require.GreaterOrEqual(t, tries, 3, "the status bar showed sync tries while the page was watched")
	assert.Len(t, ys, 1, "Round done moved while the app tried to sync: positions %v", ys)
}
