package server_test

import (
	"testing"
	"time"

	"cornerbook/pwa/pwatest"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// The camp plan refuses at entry what the hub would refuse — a bout day
// before camp start, a start mass of 900 kg — in words, and keeps nothing:
// no "Plan saved" for a plan the hub would turn away.
func TestE2EPlanRefusesWhatTheHubWould(t *testing.T) {
	h := startCoachHub(t)
	kofi := h.ids()["Kofi Brandt"]
	ctx := coachBrowser(t, h, "/plan?athlete="+kofi)
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-bout"]')`, 10*time.Second))
	require.NoError(t, coachSet(ctx, "plan-bout", "new"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-bout-day"]').value === ''`, 5*time.Second))
	var before int
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (m) => (await m.byKind('bout')).length)`, &before))

	try := func(want string) {
		t.Helper()
		require.NoError(t, pwatest.Click(ctx, "plan-save"))
		require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="save-error"]')`, 5*time.Second))
		msg, err := pwatest.Text(ctx, "save-error")
		require.NoError(t, err)
		assert.Contains(t, msg, want)
		assert.NotContains(t, msg, "body.", "words, not paths")
		assert.NotContains(t, msg, "_kg", "words, not field ids")
		var saved bool
		require.NoError(t, pwatest.Eval(ctx, `!!document.querySelector('[data-testid="saved"]')`, &saved))
		assert.False(t, saved, "never “Plan saved” for a plan the hub would refuse")
		var n, waiting int
		require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (m) => (await m.byKind('bout')).length)`, &n))
		assert.Equal(t, before, n, "nothing kept on the device")
		waiting, err = pwatest.Waiting(ctx)
		require.NoError(t, err)
		assert.Zero(t, waiting)
	}
	require.NoError(t, pwatest.Type(ctx, "plan-name", "Invented opener"))
	require.NoError(t, coachSet(ctx, "plan-camp-start", "2027-01-04"))
	require.NoError(t, coachSet(ctx, "plan-bout-day", "2026-12-20"))
	require.NoError(t, pwatest.Click(ctx, "plan-wi-day_before"))
	require.NoError(t, coachSet(ctx, "plan-wi-date", "2026-12-19"))
	require.NoError(t, coachSet(ctx, "plan-wi-time", "10:00"))
	require.NoError(t, coachSet(ctx, "plan-class", "ol2024_m_71"))
	require.NoError(t, pwatest.Type(ctx, "plan-start-mass", "74.0"))
	try("before the camp starts on Mon 4 Jan 2027")

	require.NoError(t, coachSet(ctx, "plan-bout-day", "2027-03-12"))
	require.NoError(t, coachSet(ctx, "plan-wi-date", "2027-03-11"))
	require.NoError(t, pwatest.Type(ctx, "plan-start-mass", "900"))
	try("must be between 25 and 250 kg; got 900")
}
