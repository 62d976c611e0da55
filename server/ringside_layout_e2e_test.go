package server_test

import (
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
)

// TestRingsideClockDoesNotMove: on a phone, ringside appears once the
// hub's stand-downs are in hand, so the round clock is drawn once, where
// it stays; the stand-down strip (Mateo's head knock in the demo) is above
// it from the first frame instead of pushing it down a moment later.
func TestRingsideClockDoesNotMove(t *testing.T) {
	h := startCoachHub(t)
	mateo := h.ids()["Mateo Lindqvist"]
	ctx := coachBrowser(t, h, "/")
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(360, 740)))
	// Every change to the page records where the clock is.
	require.NoError(t, pwatest.Eval(ctx, `(() => {
		window.__clockTops = [];
		window.__stripAtFirstClock = null;
		const look = () => {
			const c = document.querySelector('[data-testid="clock"]');
			if (!c) return;
			if (window.__stripAtFirstClock === null) window.__stripAtFirstClock = !!document.querySelector('[data-testid="ringside-restrictions"] [data-testid="restriction"]');
			window.__clockTops.push(Math.round(c.getBoundingClientRect().top + scrollY));
		};
		new MutationObserver(look).observe(document.body, { childList: true, subtree: true, attributes: true, characterData: true });
		return true })()`, nil))
	require.NoError(t, pwatest.Route(ctx, "/rounds"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="ringside-restrictions"] [data-testid="restriction"][data-athlete="`+mateo+`"]')`, 15*time.Second))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid^="ringside-spar-"] b.num')`, 15*time.Second), "the hub's numbers are in")
	time.Sleep(300 * time.Millisecond)
	var tops []int
	require.NoError(t, pwatest.Eval(ctx, `window.__clockTops`, &tops))
	require.NotEmpty(t, tops)
	var stripFirst bool
	require.NoError(t, pwatest.Eval(ctx, `window.__stripAtFirstClock`, &stripFirst))
	assert.True(t, stripFirst, "the stand-down strip is there when the clock first shows")
	for _, y := range tops {
		assert.Equal(t, tops[0], y, "the clock stays where it was first drawn (every position seen: %v)", tops)
	}
}
