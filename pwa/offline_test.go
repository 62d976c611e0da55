package pwa_test

import (
	"testing"

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
