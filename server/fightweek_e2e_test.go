package server_test

import (
	"context"
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	devsync "cornerbook/sync"
)

// The fight-week view of the demo's fighter in fight week, on a phone and
// on the laptop: day by day from 7 days before the weigh-in to the bout,
// the hours from the planned weigh-in to the bout, the 14-day check weight
// over its cap, the rule set with its source, the cautions; and a fighter
// on a return-to-sport ladder with the stand-down above everything.
func TestFightWeekViewOnPhoneAndLaptop(t *testing.T) {
	h := startCoachHub(t)
	ids := h.ids()
	sami, mateo := ids["Sami Arkwright"], ids["Mateo Lindqvist"]
	ctx := coachBrowser(t, h, "/")
	dir := pwatest.ShotDir(t)
	for _, size := range []struct {
		name string
		w, h int64
	}{{"phone", 360, 740}, {"laptop", 1280, 800}} {
		require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(size.w, size.h)))
		require.NoError(t, pwatest.Route(ctx, "/fightweek?athlete="+sami+"&day="+coachDay))
		ready := `document.querySelector('[data-testid="screen-fightweek"][data-ready="true"]') && document.querySelectorAll('[data-testid="fw-day"]').length === 9`
		require.NoError(t, pwatest.Poll(ctx, ready, 20*time.Second), size.name)
		hours, err := pwatest.Text(ctx, "fw-hours")
		require.NoError(t, err)
		assert.Equal(t, "32.0 h (planned)", hours, "weigh-in 13:00 the day before, bout 21:00")
		var over []string
		require.NoError(t, pwatest.Eval(ctx, `[...document.querySelectorAll('[data-testid="fw-check"][data-pass="false"]')].map((e) => e.textContent)`, &over))
		require.Len(t, over, 1, size.name)
		assert.Contains(t, over[0], "over the cap of")
		assert.Contains(t, over[0], "lb") // the fighter's units
		rules, _ := pwatest.Text(ctx, "fw-rules")
		assert.Contains(t, rules, "30 days out ≤ 10 % over the limit")
		preset, _ := pwatest.Text(ctx, "fw-preset")
		assert.Contains(t, preset, "current rules")
		cautions, _ := pwatest.Text(ctx, "fw-cautions")
		assert.Contains(t, cautions, "never a reason to cut faster")
		var wide bool
		require.NoError(t, pwatest.Eval(ctx, `document.documentElement.scrollWidth > window.innerWidth + 1`, &wide))
		assert.False(t, wide, "%s: the fight week scrolls sideways", size.name)
		var screen string
		require.NoError(t, pwatest.Eval(ctx, `document.querySelector('#screen').innerText`, &screen))
		for _, id := range []string{"check_weights", "over_limit", "fight_day", sami} {
			assert.NotContains(t, screen, id, "ids on screen")
		}
		shot(t, ctx, filepath.Join(dir, "fightweek-"+size.name+".png"))

		// The fighter on a return-to-sport ladder: the stand-down first, its steps.
		require.NoError(t, pwatest.Route(ctx, "/fightweek?athlete="+mateo+"&day="+coachDay))
		require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="screen-fightweek"][data-ready="true"]') && document.querySelector('[data-testid="fw-standdown"]')`, 20*time.Second), size.name)
		var done int
		require.NoError(t, pwatest.Eval(ctx, `document.querySelectorAll('[data-testid="fw-rts-steps"] li[data-done="true"]').length`, &done))
		assert.Equal(t, 3, done)
		var first string
		require.NoError(t, pwatest.Eval(ctx, `(() => { const s = document.querySelector('[data-testid="screen-fightweek"]'); const sd = s.querySelector('[data-testid="fw-standdowns"]'); const sum = s.querySelector('[data-testid="fw-summary"]'); return sd && sum && (sd.compareDocumentPosition(sum) & Node.DOCUMENT_POSITION_FOLLOWING) ? 'stand-down first' : 'not first'; })()`, &first))
		assert.Equal(t, "stand-down first", first)
		words, _ := pwatest.Text(ctx, "fw-rts-words")
		assert.Contains(t, words, "Step 3 of 6")
		assert.Contains(t, words, "step 4")
		shot(t, ctx, filepath.Join(dir, "fightweek-rts-"+size.name+".png"))
	}
}

// A return-to-sport step logged on a phone with the hub out of reach is
// saved there, waits, and reaches the hub when it is back; a step logged
// under 24 h after it is refused by the hub with its reason, on screen.
func TestRTSStepLoggedOfflineThenSynced(t *testing.T) {
	h := startCoachHub(t)
	mateo := h.ids()["Mateo Lindqvist"]
	ctx := coachBrowser(t, h, "/")
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(360, 740)))
	require.NoError(t, pwatest.WaitControlled(ctx))
	require.NoError(t, pwatest.Route(ctx, "/rts?athlete="+mateo))
	require.NoError(t, pwatest.WaitText(ctx, "rts-so-far", "Step 3 of 6"))

	h.srv.SetDown(true)
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q).getAttribute('aria-pressed') === 'true'`, pwatest.Q("rts-step-4")), 10*time.Second))
	require.NoError(t, pwatest.Type(ctx, "rts-symptoms", "None on the bag."))
	require.NoError(t, pwatest.Type(ctx, "rts-by", "Physio Ren Okafor"))
	require.NoError(t, pwatest.Click(ctx, "rts-save"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "Saved on this phone"))
	n, err := pwatest.Waiting(ctx)
	require.NoError(t, err)
	assert.Equal(t, 1, n, "the step waits on the phone")
	// The screen moves on to step 5 and says it is too soon.
	require.NoError(t, pwatest.WaitText(ctx, "rts-so-far", "Step 4 of 6"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="rts-too-soon"]')`, 10*time.Second))
	require.NoError(t, pwatest.Type(ctx, "rts-by", "Physio Ren Okafor"))
	require.NoError(t, pwatest.Click(ctx, "rts-save"))
	require.NoError(t, pwatest.Poll(ctx, `await import('/js/db.js').then(async (m) => (await m.counts()).waiting === 2)`, 10*time.Second))

	h.srv.SetDown(false)
	require.NoError(t, pwatest.Nudge(ctx))
	require.NoError(t, pwatest.Poll(ctx, `await import('/js/db.js').then(async (m) => { const c = await m.counts(); return c.waiting === 0 && c.rejected === 1; })`, 30*time.Second))
	var steps []int
	require.NoError(t, h.db.Range(mateo, "rts_step", "", "", func(r devsync.Record) error {
		var b struct{ Step int }
		if err := json.Unmarshal(r.Body, &b); err != nil {
			return err
		}
		steps = append(steps, b.Step)
		return nil
	}))
	assert.ElementsMatch(t, []int{1, 2, 3, 4}, steps, "step 4 reached the hub; step 5 under 24 h was refused")
	rows, err := pwatest.ReadIDB(ctx, "rejected")
	require.NoError(t, err)
	require.Len(t, rows, 1)
	assert.Contains(t, string(rows[0]), "each step takes at least 24 h")
}

func shot(t *testing.T, ctx context.Context, path string) {
	t.Helper()
	png, err := chromedp.Run(ctx, chromedp.FullScreenshot(100)) // 100: PNG (below it, JPEG)
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(path, png, 0o644))
}
