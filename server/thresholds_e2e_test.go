package server_test

import (
	"encoding/json"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server/flags"
	devsync "cornerbook/sync"
)

// todaysFlags is the hub's flags of one athlete for today.
func todaysFlags(t *testing.T, h *coachHub, athlete string) []flags.Flag {
	t.Helper()
	body, err := coachGet(h.url("/api/flags?athlete=" + athlete))
	require.NoError(t, err)
	var out struct {
		Flags []flags.Flag `json:"flags"`
	}
	require.NoError(t, json.Unmarshal(body, &out))
	return out.Flags
}

func hasThreshold(fs []flags.Flag, name string) bool {
	for _, f := range fs {
		if f.ThresholdName == name {
			return true
		}
	}
	return false
}

// TestE2EThresholdsAreSetPerFighter: the coach opens a fighter's flag
// thresholds from the fighter's charts, sees what an empty box means (the
// camp's check-in hour, the default elsewhere), is refused a number out of
// a threshold's range in the hub's words with nothing stored, and saves a
// higher hard-round cap for Kofi — whose 21 hard rounds in 7 days were
// over the default cap of 15 (a sparring cap is common practice, no
// source) — after which the hub no longer raises that flag for him and
// still raises his other ones.
func TestE2EThresholdsAreSetPerFighter(t *testing.T) {
	h := startCoachHub(t)
	kofi := h.ids()["Kofi Brandt"]
	require.NotEmpty(t, kofi)
	before := todaysFlags(t, h, kofi)
	require.True(t, hasThreshold(before, "spar_density.hard_cap_rounds"), "the demo's Kofi is over the default hard-round cap today: %+v", before)
	require.True(t, hasThreshold(before, "spar_spacing.max_hard_days"))

	ctx := coachBrowser(t, h, "/athlete?id="+kofi)
	require.NoError(t, pwatest.Click(ctx, "athlete-to-thresholds"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="screen-thresholds"]')?.dataset.ready === 'true'`, 20*time.Second))
	who, _ := pwatest.Text(ctx, "thresholds-who")
	assert.Contains(t, who, "Kofi Brandt")
	caution, _ := pwatest.Text(ctx, "thresholds-caution")
	assert.Contains(t, caution, "prompt for your judgement")
	assert.Contains(t, caution, "never shorter")
	hour, _ := pwatest.Text(ctx, "threshold-missing_checkin-hour-fallback")
	assert.Contains(t, hour, "Empty: camp-wide 10 h", "the camp's own check-in hour applies to an empty box")
	hardCap, _ := pwatest.Text(ctx, "threshold-spar_density-hard_cap_rounds-fallback")
	assert.Contains(t, hardCap, "Empty: default 15 rounds")

	// Out of range: refused in the hub's words, the box marked, nothing kept.
	require.NoError(t, pwatest.Click(ctx, "thresholds-open-spar_density"))
	require.NoError(t, coachSet(ctx, "threshold-spar_density-hard_cap_rounds", "300"))
	require.NoError(t, pwatest.Click(ctx, "thresholds-save"))
	require.NoError(t, pwatest.WaitText(ctx, "save-error", "Sparring volume over the cap: hard sparring rounds in the window: must be between 0 and 200 rounds; got 300"))
	var marked bool
	require.NoError(t, pwatest.Eval(ctx, `document.querySelector('[data-testid="threshold-spar_density-hard_cap_rounds"]').getAttribute('aria-invalid') === 'true'`, &marked))
	assert.True(t, marked, "the refused box is marked")
	var stored int
	require.NoError(t, h.db.Range(kofi, "settings", "", "", func(devsync.Record) error { stored++; return nil }))
	require.Zero(t, stored, "a refused threshold is not stored")

	// A cap of 25: saved, synced, and the hub's flags follow.
	require.NoError(t, coachSet(ctx, "threshold-spar_density-hard_cap_rounds", "25"))
	require.NoError(t, pwatest.Click(ctx, "thresholds-save"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "The hub recomputes Kofi Brandt's flags"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	var body struct {
		Thresholds map[string]map[string]float64 `json:"thresholds"`
	}
	require.NoError(t, h.db.Range(kofi, "settings", "", "", func(r devsync.Record) error {
		stored++
		return json.Unmarshal(r.Body, &body)
	}))
	require.Equal(t, 1, stored, "one settings record for Kofi")
	assert.Equal(t, map[string]map[string]float64{"spar_density": {"hard_cap_rounds": 25}}, body.Thresholds)
	// The hub drops the fighter's cached flags before it answers the push.
	assert.False(t, hasThreshold(todaysFlags(t, h, kofi), "spar_density.hard_cap_rounds"), "21 hard rounds are under Kofi's own cap of 25")
	assert.True(t, hasThreshold(todaysFlags(t, h, kofi), "spar_spacing.max_hard_days"), "his other flags stay")
	shot(t, ctx, filepath.Join(pwatest.ShotDir(t), "thresholds.png"))

	// Opened again, the box holds his number and his rule is open.
	require.NoError(t, pwatest.Open(ctx, h.url("/thresholds?athlete="+kofi)))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="threshold-spar_density-hard_cap_rounds"]')?.value === '25'`, 20*time.Second))
	who, _ = pwatest.Text(ctx, "thresholds-who")
	assert.Contains(t, who, "Kofi Brandt: 1 threshold of their own")

	// The whole camp's: the check-in hour camp set-up keeps, a camp-wide
	// cap under Kofi's own, and the camp's other settings kept.
	require.NoError(t, pwatest.Click(ctx, "thresholds-to-camp"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="threshold-missing_checkin-hour"]')?.value === '10'`, 20*time.Second))
	who, _ = pwatest.Text(ctx, "thresholds-who")
	assert.Contains(t, who, "the whole camp")
	require.NoError(t, coachSet(ctx, "threshold-missing_checkin-hour", "11"))
	require.NoError(t, pwatest.Click(ctx, "thresholds-open-spar_density"))
	require.NoError(t, coachSet(ctx, "threshold-spar_density-hard_cap_rounds", "12"))
	require.NoError(t, pwatest.Click(ctx, "thresholds-save"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "every fighter's flags"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	var campBody map[string]any
	n := 0
	require.NoError(t, h.db.Range("", "settings", "", "", func(r devsync.Record) error {
		n++
		return json.Unmarshal(r.Body, &campBody)
	}))
	require.Equal(t, 1, n, "the camp's one settings record, edited in place")
	assert.Equal(t, 11.0, campBody["checkin_hour"], "the hour stays where camp set-up keeps it")
	assert.NotEmpty(t, campBody["gym_name"], "the camp's other settings are kept")
	assert.Equal(t, map[string]any{"spar_density": map[string]any{"hard_cap_rounds": 12.0}}, campBody["thresholds"])
	assert.False(t, hasThreshold(todaysFlags(t, h, kofi), "spar_density.hard_cap_rounds"), "Kofi's own 25 wins over the camp's 12")
	require.NoError(t, pwatest.Open(ctx, h.url("/thresholds?athlete="+kofi)))
	require.NoError(t, pwatest.WaitText(ctx, "threshold-missing_checkin-hour-fallback", "Empty: camp-wide 11 h"))

	// On a staff device the thresholds are shown, not offered for change.
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((db) => db.setMeta('role', 'staff')).then(() => true)`, nil))
	require.NoError(t, pwatest.Open(ctx, h.url("/thresholds?athlete="+kofi)))
	require.NoError(t, pwatest.WaitText(ctx, "thresholds-read-only", "Only a coach's device changes thresholds"))
	var offered bool
	require.NoError(t, pwatest.Eval(ctx, `!!document.querySelector('[data-testid="thresholds-save"]') || !document.querySelector('[data-testid="threshold-spar_density-hard_cap_rounds"]').disabled`, &offered))
	assert.False(t, offered, "no save and no editable box on a staff device")
}
