package server_test

import (
	"context"
	"encoding/json"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	devsync "cornerbook/sync"
)

// boutOf reads an athlete's coming bout from the hub's store: the one
// with the latest bout day (the demo's earlier camps have bouts too).
func boutOf(t *testing.T, h *coachHub, athlete string) map[string]any {
	t.Helper()
	var out map[string]any
	require.NoError(t, h.db.Range(athlete, "bout", "", "", func(r devsync.Record) error {
		var b map[string]any
		require.NoError(t, json.Unmarshal(r.Body, &b))
		if out == nil || b["bout_day"].(string) > out["bout_day"].(string) {
			out = b
		}
		return nil
	}))
	require.NotNil(t, out, "a bout")
	return out
}

// savePlan saves the plan on screen and waits until the hub has it.
func savePlan(t *testing.T, ctx context.Context) {
	t.Helper()
	require.NoError(t, pwatest.Poll(ctx, `!document.querySelector('[data-testid="plan-missing"]') && !document.querySelector('[data-testid="plan-invalid"]')`, 10*time.Second))
	require.NoError(t, pwatest.Click(ctx, "plan-save"))
	if err := pwatest.WaitText(ctx, "saved", "Plan saved"); err != nil {
		var shown string
		_ = pwatest.Eval(ctx, `[...document.querySelectorAll('.error, [data-testid="plan-issues"]')].map((e) => e.textContent).join(' | ')`, &shown)
		t.Fatalf("not saved: %v; the screen says: %s", err, shown)
	}
	require.NoError(t, pwatest.WaitSynced(ctx))
}

// TestPlanPicksTheBoutsRules: on the camp plan the coach picks a weigh-in
// rule preset for a bout that had none — shown with its source, how sure
// that source is and the caution to check the sanctioning body's current
// rules — and a stand-down rule set; saving stores them on the bout and
// the fight-week view follows. Changing a number makes the set the
// coach's own (custom). A bout that already had rules keeps them, its
// start and its stand-down sets when its plan is edited and saved.
func TestPlanPicksTheBoutsRules(t *testing.T) {
	h := startCoachHub(t)
	ids := h.ids()
	tomas, sami := ids["Tomas Varga"], ids["Sami Arkwright"]
	before := boutOf(t, h, tomas)
	require.Nil(t, before["rules"], "the demo's Tomas has a bout without rules")
	ctx := coachBrowser(t, h, "/plan?athlete="+tomas)
	ready := `document.querySelector('[data-testid="plan-rules-pick"]') && document.querySelector('[data-testid="plan-save"]') && document.querySelector('[data-testid="plan-bout-day"]').value !== ''`
	require.NoError(t, pwatest.Poll(ctx, ready, 20*time.Second))
	var mode string
	require.NoError(t, pwatest.Eval(ctx, `document.querySelector('[data-testid="plan-rules-pick"]').value`, &mode))
	assert.Equal(t, "none", mode, "a bout without rules: official weigh-in only, as before")

	// A preset that assumes another kind of weigh-in says so, and changes
	// nothing of the bout's own weigh-in.
	require.NoError(t, coachSet(ctx, "plan-rules-pick", "amateur_same_day"))
	require.NoError(t, pwatest.WaitText(ctx, "plan-rules-type", "assumes a weigh-in on the day of the bout"))
	require.NoError(t, pwatest.Poll(ctx, pwatest.Pressed("plan-wi-day_before"), 5*time.Second))

	// Pick the check-weight programme: its source, how sure, the caution.
	require.NoError(t, coachSet(ctx, "plan-rules-pick", "check_weights_30_14_7"))
	require.NoError(t, pwatest.WaitText(ctx, "plan-rules-source", "2019"))
	sure, _ := pwatest.Text(ctx, "plan-rules-sure")
	assert.Contains(t, sure, "How sure: read in the published rule")
	caution, _ := pwatest.Text(ctx, "plan-rules-caution")
	assert.Contains(t, caution, "Check the sanctioning body's current rules")
	// And the national board's stand-downs besides the ringside minimums.
	require.NoError(t, pwatest.Click(ctx, "plan-standdown-pro_board_28_45"))
	require.NoError(t, pwatest.Poll(ctx, pwatest.Pressed("plan-standdown-pro_board_28_45"), 5*time.Second))
	shot(t, ctx, filepath.Join(pwatest.ShotDir(t), "plan-rules.png"))
	sets, _ := pwatest.Text(ctx, "plan-standdown-sets")
	assert.Contains(t, sets, "always applied")
	assert.Contains(t, sets, "How sure:")
	savePlan(t, ctx)

	after := boutOf(t, h, tomas)
	rules, _ := after["rules"].(map[string]any)
	require.NotNil(t, rules, "the bout's rules are stored")
	assert.Equal(t, "check_weights_30_14_7", rules["preset"])
	assert.Equal(t, []any{
		map[string]any{"days_before": 30.0, "over_limit_pct": 10.0},
		map[string]any{"days_before": 14.0, "over_limit_pct": 5.0},
		map[string]any{"days_before": 7.0, "over_limit_pct": 3.0},
	}, rules["check_weights"])
	assert.Equal(t, map[string]any{"over_official_pct": 10.0}, rules["fight_day"])
	assert.Equal(t, []any{"pro_board_28_45"}, after["stand_down_sets"])
	sameWeeks(t, before["weeks"], after["weeks"])
	for _, k := range []string{"camp_start", "bout_day", "weight_class", "start_mass_kg"} {
		assert.Equal(t, before[k], after[k], "%s is kept", k)
	}
	sameInstant(t, before["weigh_in"], after["weigh_in"])

	// The fight-week view follows.
	require.NoError(t, pwatest.Route(ctx, "/fightweek?athlete="+tomas+"&day="+coachDay))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="screen-fightweek"][data-ready="true"]') && document.querySelector('[data-testid="fw-rules"]')`, 20*time.Second))
	fwRules, _ := pwatest.Text(ctx, "fw-rules")
	assert.Contains(t, fwRules, "30 days out ≤ 10 % over the limit; 14 days out ≤ 5 % over the limit; 7 days out ≤ 3 % over the limit; fight day ≤ 10 % over the official weigh-in mass")
	fwPreset, _ := pwatest.Text(ctx, "fw-preset")
	assert.Contains(t, fwPreset, "2019")
	assert.Contains(t, fwPreset, "current rules")

	// Custom: a number changed makes the set the coach's own.
	require.NoError(t, pwatest.Route(ctx, "/plan?athlete="+tomas))
	require.NoError(t, pwatest.Poll(ctx, ready+` && document.querySelector('[data-testid="plan-rules-pick"]').value === 'check_weights_30_14_7'`, 20*time.Second))
	require.NoError(t, coachSet(ctx, "plan-check-3-pct", "4"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-rules-pick"]').value === 'custom'`, 5*time.Second))
	require.NoError(t, pwatest.Click(ctx, "plan-fd-lb"))
	require.NoError(t, coachSet(ctx, "plan-fd-value", "10"))
	savePlan(t, ctx)
	rules, _ = boutOf(t, h, tomas)["rules"].(map[string]any)
	require.NotNil(t, rules)
	assert.Nil(t, rules["preset"], "an edited preset is a custom set")
	assert.Equal(t, map[string]any{"days_before": 7.0, "over_limit_pct": 4.0}, rules["check_weights"].([]any)[2])
	assert.Equal(t, map[string]any{"over_limit_lb": 10.0}, rules["fight_day"])
	require.NoError(t, pwatest.Route(ctx, "/fightweek?athlete="+tomas+"&day="+coachDay))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="screen-fightweek"][data-ready="true"]') && document.querySelector('[data-testid="fw-rules"]').textContent.includes('7 days out ≤ 4 %')`, 20*time.Second))
	fwRules, _ = pwatest.Text(ctx, "fw-rules")
	assert.Contains(t, fwRules, "fight day ≤ 10 lb over the limit")
	var presetShown bool
	require.NoError(t, pwatest.Eval(ctx, `!!document.querySelector('[data-testid="fw-preset"]')`, &presetShown))
	assert.False(t, presetShown, "a custom set names no preset's source")

	// A bout that had rules keeps them, its start and its stand-down sets
	// when its plan is edited and saved.
	samiBefore := boutOf(t, h, sami)
	require.NotNil(t, samiBefore["rules"])
	require.NotEmpty(t, samiBefore["bout_at"])
	require.NoError(t, pwatest.Route(ctx, "/plan?athlete="+sami))
	require.NoError(t, pwatest.Poll(ctx, ready+` && document.querySelector('[data-testid="plan-rules-pick"]').value === 'check_weights_30_14_7'`, 20*time.Second))
	require.NoError(t, pwatest.Poll(ctx, pwatest.Pressed("plan-standdown-pro_board_28_45"), 5*time.Second))
	require.NoError(t, coachSet(ctx, "plan-name", "Invented bout, renamed"))
	savePlan(t, ctx)
	samiAfter := boutOf(t, h, sami)
	assert.Equal(t, "Invented bout, renamed", samiAfter["name"])
	sameWeeks(t, samiBefore["weeks"], samiAfter["weeks"])
	for _, k := range []string{"rules", "stand_down_sets", "start_mass_kg"} {
		assert.Equal(t, samiBefore[k], samiAfter[k], "Sami's %s is kept", k)
	}
	sameInstant(t, samiBefore["weigh_in"], samiAfter["weigh_in"])
	sameInstant(t, samiBefore["bout_at"], samiAfter["bout_at"])
}

// sameInstant: two RFC 3339 times name the same instant ("Z" and "+00:00"
// are one).
func sameInstant(t *testing.T, a, b any) {
	t.Helper()
	as, _ := a.(string)
	bs, _ := b.(string)
	ta, err1 := time.Parse(time.RFC3339, as)
	tb, err2 := time.Parse(time.RFC3339, bs)
	require.NoError(t, err1)
	require.NoError(t, err2)
	assert.True(t, ta.Equal(tb), "%s and %s", as, bs)
}

// sameWeeks: the plan's weeks keep their number and levels (travel times
// are written again with their own offsets: the same instants).
func sameWeeks(t *testing.T, a, b any) {
	t.Helper()
	wa, _ := a.([]any)
	wb, _ := b.([]any)
	require.Len(t, wb, len(wa))
	for i := range wa {
		assert.Equal(t, wa[i].(map[string]any)["level"], wb[i].(map[string]any)["level"], "week %d", i+1)
	}
}
