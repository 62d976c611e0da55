package pwa_test

import (
	"testing"
	"time"

	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
)

// TestCoachScreensWarmOnAStaffDevice: the coach's screens (camp set-up
// among them) an athlete's
// phone never opens are left out of the install; a device paired as staff
// (or coach) has the worker keep them all, so they open offline there.
func TestCoachScreensWarmOnAStaffDevice(t *testing.T) {
	s := newAppServer(t)
	_, ctx, _ := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	require.NoError(t, pwatest.WaitControlled(ctx))
	var has bool
	for _, p := range []string{"/js/coach/intervals.js", "/js/camp.js"} {
		require.NoError(t, pwatest.Eval(ctx, pwatest.Cached(p), &has))
		require.False(t, has, "%s not fetched at install", p)
	}

	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.setMeta('role', 'staff')).then(() => true)`, nil))
	require.NoError(t, pwatest.Reload(ctx))
	for _, p := range []string{"/js/coach/intervals.js", "/js/coach/tests.js", "/js/coach/plan.js", "/js/camp.js", "/vendor/uplot/uPlot.esm.js"} {
		require.NoError(t, pwatest.Poll(ctx, pwatest.Cached(p), 10*time.Second), p)
	}
}
