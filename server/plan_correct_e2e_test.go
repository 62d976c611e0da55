package server_test

import (
	"encoding/json"
	"testing"
	"time"

	"cornerbook/pwa/pwatest"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A correction of a bout that the hub refused (an older app sent a start
// mass of 900 kg) is named in Settings by its entry and field in words;
// "Correct" opens the camp plan on that bout with what was sent, the coach
// fixes the field, and the corrected plan is sent again and kept — the rest
// of the plan as it was, nothing else on the hub changed.
func TestE2EPlanCorrectsABoutTheHubRefused(t *testing.T) {
	h := startCoachHub(t)
	kofi := h.ids()["Kofi Brandt"]
	ctx := coachBrowser(t, h, "/settings")
	var bout struct {
		ID   string         `json:"id"`
		Body map[string]any `json:"body"`
	}
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (m) => (await m.byKind('bout')).filter((r) => r.athlete === '`+kofi+`' && !r.deleted)
		.sort((a, b) => b.body.bout_day.localeCompare(a.body.bout_day))[0])`, &bout))
	require.NotEmpty(t, bout.ID)
	hubBefore := h.all()

	// The refused version replaces the local copy, as an older app's save would.
	var local map[string]any
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.getRecord('`+bout.ID+`'))`, &local))
	refused := map[string]any{"id": bout.ID, "kind": "bout", "athlete": kofi, "at": local["at"], "body": map[string]any{}}
	for k, v := range bout.Body {
		refused["body"].(map[string]any)[k] = v
	}
	refused["body"].(map[string]any)["start_mass_kg"] = 900
	js, err := json.Marshal(refused)
	require.NoError(t, err)
	_, err = pwatest.QueueUnchecked(ctx, string(js))
	require.NoError(t, err)
	require.NoError(t, pwatest.Nudge(ctx))
	require.NoError(t, pwatest.WaitText(ctx, "status-rejected", "1 entry rejected"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid^="rejected-edit-"]')`, 10*time.Second))
	var row struct{ Text, Testid string }
	require.NoError(t, pwatest.Eval(ctx, `(() => { const e = document.querySelector('[data-testid^="rejected-edit-"]');
		return { Text: e.closest('.entry').textContent, Testid: e.dataset.testid } })()`, &row))
	assert.Contains(t, row.Text, "Bout and camp plan of Kofi Brandt — Start mass: must be between 25 and 250 kg; got 900")
	assert.NotContains(t, row.Text, "body.")

	require.NoError(t, pwatest.Click(ctx, row.Testid))
	require.NoError(t, pwatest.Poll(ctx, `location.pathname === '/plan' && Number((document.querySelector('[data-testid="plan-start-mass"]') || {}).value) === 900`, 15*time.Second),
		"the plan opens on the refused bout, as it was sent")
	var picked string
	require.NoError(t, pwatest.Eval(ctx, `document.querySelector('[data-testid="plan-bout"]').value`, &picked))
	assert.Equal(t, bout.ID, picked)
	// Saved at once after typing: the hub's check of the plan as it was
	// (900 kg) must not refuse the plan as it is now.
	require.NoError(t, pwatest.Type(ctx, "plan-start-mass", "71.5"))
	require.NoError(t, pwatest.Click(ctx, "plan-save"))
	if err := pwatest.WaitText(ctx, "saved", "Plan saved on this device"); err != nil {
		msg, _ := pwatest.Text(ctx, "save-error")
		t.Fatalf("the corrected plan was not saved: %q (%v)", msg, err)
	}
	require.NoError(t, pwatest.WaitSynced(ctx))

	var left int
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.rejectedList()).then((rs) => rs.length)`, &left))
	assert.Zero(t, left, "the correction was kept")
	hubAfter := h.all()
	var kept map[string]any
	for _, r := range hubAfter["bout"] {
		if r.ID == bout.ID {
			require.NoError(t, json.Unmarshal(r.Body, &kept))
		}
	}
	require.NotNil(t, kept)
	assert.Equal(t, 71.5, kept["start_mass_kg"])
	for _, k := range []string{"camp_start", "bout_day", "weight_class", "limit_kg", "weigh_in_type"} {
		assert.Equal(t, bout.Body[k], kept[k], "the rest of the plan as it was: %s", k)
	}
	was, err := time.Parse(time.RFC3339, bout.Body["weigh_in"].(string))
	require.NoError(t, err)
	now, err := time.Parse(time.RFC3339, kept["weigh_in"].(string))
	require.NoError(t, err)
	assert.True(t, was.Equal(now), "the same weigh-in: %s, %s", was, now)
	assert.Len(t, kept["weeks"], len(bout.Body["weeks"].([]any)), "every week kept")
	assert.Equal(t, len(hubBefore["bout"]), len(hubAfter["bout"]), "no bout added or lost")
	for kind, rs := range hubBefore {
		if kind != "bout" {
			assert.Len(t, hubAfter[kind], len(rs), "nothing else changed: %s", kind)
		}
	}
}
