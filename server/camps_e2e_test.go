package server_test

import (
	"fmt"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
)

// campCharts: the camp history has drawn its four charts, each with points.
const campCharts = `(() => { if (!document.querySelector('[data-testid="screen-camps"][data-ready="true"]')) return false;
	const f = [...document.querySelectorAll('[data-testid="screen-camps"] figure.chart')];
	return f.length === 4 && f.every((e) => Number(e.dataset.points) > 0) })()`

// TestE2ECampHistorySideBySide: from a fighter's charts the coach opens
// the camp history; Tomas's camp of the day and his summer camp are drawn
// on one axis of days to the bout, each a line of its own in every chart,
// with summaries that compare them at today's days out in numbers with
// units, the tests of each camp in a table, and the weight caution.
func TestE2ECampHistorySideBySide(t *testing.T) {
	h := startCoachHub(t)
	ids := h.ids()
	tomas := ids["Tomas Varga"]
	ctx := coachBrowser(t, h, "/athlete?id="+tomas+"&day="+coachDay)
	require.NoError(t, pwatest.Poll(ctx, allCharts, 20*time.Second))
	require.NoError(t, pwatest.Click(ctx, "athlete-to-camps"))
	if err := pwatest.Poll(ctx, campCharts, 20*time.Second); err != nil {
		var st string
		_ = pwatest.Eval(ctx, `JSON.stringify({url: location.href, figs: [...document.querySelectorAll('figure.chart')].map((e) => e.dataset.testid + ':' + e.dataset.points), err: [...document.querySelectorAll('.error')].map((e) => e.textContent)})`, &st)
		t.Fatalf("%v; %s", err, st)
	}
	hist, err := h.srv.Camps(tomas, coachDay)
	require.NoError(t, err)
	require.Len(t, hist.Camps, 2)
	cur, past := hist.Camps[0], hist.Camps[1]

	// Two camps listed, this one first.
	var camps []string
	require.NoError(t, pwatest.Eval(ctx, `[...document.querySelectorAll('[data-testid="camp"]')].map((e) => e.dataset.bout + ':' + e.dataset.current)`, &camps))
	assert.Equal(t, []string{cur.Bout + ":true", past.Bout + ":false"}, camps)
	title, _ := pwatest.Text(ctx, "screen-camps")
	assert.Contains(t, title, "Camp history — Tomas Varga")
	// Every chart draws both camps: a line per camp (the mass chart a
	// planned path per camp and the limit too).
	for _, c := range []struct {
		id    string
		lines []string
	}{
		{"camps-mass", []string{"this camp: morning mass", "this camp: planned path", "Jun 2026 camp: morning mass", "Jun 2026 camp: planned path", "the limit"}},
		{"camps-cmj", []string{"this camp: CMJ", "Jun 2026 camp: CMJ"}},
		{"camps-load", []string{"this camp", "Jun 2026 camp"}},
		{"camps-spar", []string{"this camp", "Jun 2026 camp"}},
	} {
		var lines string
		require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`document.querySelector(%q).dataset.lines`, pwatest.Q(c.id)), &lines))
		assert.Equal(t, c.lines, strings.Split(lines, "|"), c.id)
	}
	// The mass summary compares the camps at today's days out, in pounds
	// with the percentage over each camp's limit (1 lb = 0.45359237 kg,
	// NIST SP 811); the hub's own numbers.
	now := cur.DaysOut[len(cur.DaysOut)-1]
	sum, _ := pwatest.Text(ctx, "camps-mass-summary")
	i := len(cur.MorningKg) - 1
	for cur.MorningKg[i] == nil {
		i--
	}
	kg, lim := *cur.MorningKg[i], *cur.LimitKg
	assert.Contains(t, sum, fmt.Sprintf("This camp: %.1f lb, %.1f %% over the limit of %.1f lb at %d days out", kg/0.45359237, (kg-lim)/lim*100, lim/0.45359237, -cur.DaysOut[i]))
	j := -1
	for k, d := range past.DaysOut {
		if d == now && past.MorningKg[k] != nil {
			j = k
		}
	}
	require.GreaterOrEqual(t, j, 0, "the summer camp has a morning mass at %d days out", now)
	pkg, plim := *past.MorningKg[j], *past.LimitKg
	assert.Contains(t, sum, fmt.Sprintf("The Jun 2026 camp: %.1f lb, %.1f %% over the limit of %.1f lb at %d days out", pkg/0.45359237, (pkg-plim)/plim*100, plim/0.45359237, -now))
	caution, _ := pwatest.Text(ctx, "camps-mass")
	assert.Contains(t, caution, "never a reason to cut faster")
	// Weekly load in AU at the week of today, for both camps.
	load, _ := pwatest.Text(ctx, "camps-load-summary")
	week := -now / 7
	for _, c := range hist.Camps {
		for _, w := range c.Weeks {
			if w.WeeksOut == week {
				assert.Contains(t, load, fmt.Sprintf("%.0f AU", w.LoadAU))
			}
		}
	}
	// The 30-15 IFT of each camp in the table: stages 21 and 22 in the
	// summer (V_IFT 18.0 and 18.5 km/h: 8 km/h + 0.5 km/h per stage after
	// the first, Buchheit 2008), 22 and 23 now.
	var row []string
	require.NoError(t, pwatest.Eval(ctx, `[...document.querySelectorAll('[data-testid="camps-tests"] tr[data-series="ift_30_15"] td')].map((e) => e.textContent)`, &row))
	require.Len(t, row, 2)
	assert.Contains(t, row[0], "18.5 km/h")
	assert.Contains(t, row[0], "19.0 km/h")
	assert.Contains(t, row[1], "18.0 km/h")
	assert.Contains(t, row[1], "18.5 km/h")
	shot(t, ctx, filepath.Join(pwatest.ShotDir(t), "camps.png"))

	// A fighter with one camp: the one camp, and a line saying why.
	require.NoError(t, pwatest.Route(ctx, "/camps?athlete="+ids["Mateo Lindqvist"]+"&day="+coachDay))
	require.NoError(t, pwatest.Poll(ctx, campCharts+` && document.querySelector('[data-testid="camps-one"]')`, 20*time.Second))
	n := 0
	require.NoError(t, pwatest.Eval(ctx, `document.querySelectorAll('[data-testid="camp"]').length`, &n))
	assert.Equal(t, 1, n)
}
