// Browser tests of the coach's screens (day board, fighter charts, camp
// plan, wall sheet) against the real hub on loopback holding the demo
// camp, in headless Chromium through pwa/pwatest.
package server_test

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"io"
	"net/http"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"
	"github.com/google/uuid"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server/demo"
	"cornerbook/server/flags"
	devsync "cornerbook/sync"
)

// coachDay is the demo camp's last day (the golden demo day). The hub runs
// on the real clock so the browsers' stamps are never refused as skewed;
// the screens are opened on explicit days of the demo.
var coachDay = demoToday.Format("2006-01-02")

type coachHub struct{ *e2eHub }

func startCoachHub(t testing.TB) *coachHub { return &coachHub{startDemoHub(t, time.UTC)} }

// ids maps the demo athletes' names to their ids.
func (h *coachHub) ids() map[string]string {
	out := map[string]string{}
	for id, name := range h.srv.AthleteNames() {
		out[name] = id
	}
	return out
}

// coachBrowser opens the app in a fresh profile, at a laptop-sized
// viewport, and waits for the first sync (the whole demo camp) to land.
func coachBrowser(t testing.TB, h *coachHub, path string) context.Context {
	t.Helper()
	log := &e2eLogBuf{}
	b := pwatest.Start(t, pwatest.Options{Log: log})
	t.Cleanup(func() {
		if t.Failed() {
			t.Logf("page console:\n%s", log.String())
		}
	})
	ctx, cancel := context.WithTimeout(b.Ctx(), 120*time.Second)
	t.Cleanup(cancel)
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(1280, 800)))
	require.NoError(t, pwatest.Open(ctx, h.url(path)))
	require.NoError(t, pwatest.WaitSynced(ctx))
	return ctx
}

// e2eLogBuf collects a page's console.
type e2eLogBuf struct{ strings.Builder }

func (l *e2eLogBuf) Write(p []byte) (int, error) { return l.Builder.Write(p) }

// coachSet sets a form control's value as a user's pick does (date and
// time inputs, selects) and fires input and change.
func coachSet(ctx context.Context, testid, value string) error {
	sel := pwatest.Q(testid)
	if err := pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, sel), 10*time.Second); err != nil {
		return err
	}
	v, _ := json.Marshal(value)
	return pwatest.Eval(ctx, fmt.Sprintf(`(() => { const e = document.querySelector(%q);
		const proto = e.tagName === 'SELECT' ? HTMLSelectElement.prototype : e.tagName === 'TEXTAREA' ? HTMLTextAreaElement.prototype : HTMLInputElement.prototype;
		Object.getOwnPropertyDescriptor(proto, 'value').set.call(e, %s);
		e.dispatchEvent(new Event('input', { bubbles: true })); e.dispatchEvent(new Event('change', { bubbles: true })); return true })()`, sel, v), nil)
}

// allCharts: a fighter's charts page has drawn all of its charts — the
// six of the last six weeks and the camp plan against what was done,
// which the page loads together and shows at once — each with points.
const allCharts = `(() => { const f = [...document.querySelectorAll('figure.chart:not(.test-chart)')]; return f.length === 7 && f.every((e) => Number(e.dataset.points) > 0) })()`

// coachGet reads one JSON answer from the hub.
func coachGet(url string) ([]byte, error) {
	res, err := http.Get(url)
	if err != nil {
		return nil, err
	}
	defer res.Body.Close()
	if res.StatusCode != http.StatusOK {
		return nil, fmt.Errorf("GET %s: %s", url, res.Status)
	}
	return io.ReadAll(res.Body)
}

// levelOf is the card state a flag is shown in.
func levelOf(f flags.Flag) string {
	if f.Status == flags.StatusForming {
		return "forming"
	}
	return f.Level
}

// shownNumber is a flag number as the card shows it: masses in the
// athlete's units (1 lb = 0.45359237 kg exactly, by the 1959 definition),
// other units at the decimals the reasons use.
func shownNumber(v float64, unit, units string) string {
	switch unit {
	case "kg":
		if units == "lb" {
			return fmt.Sprintf("%.1f lb", v/0.45359237)
		}
		return fmt.Sprintf("%.1f kg", v)
	case "cm":
		return fmt.Sprintf("%.1f cm", v)
	case "%":
		return fmt.Sprintf("%.1f %%", v)
	case "%/week":
		return fmt.Sprintf("%.2f %%/week", v)
	case "ratio":
		return fmt.Sprintf("%.2f", v)
	case "USG":
		return fmt.Sprintf("%.3f", v)
	case "AU":
		return fmt.Sprintf("%.0f AU", v)
	}
	return ""
}

type shownCard struct {
	Rule, Athlete, Level, Reason, Numbers, Caution, Threshold string
	Decided                                                   string
}

func readCards(ctx context.Context) ([]shownCard, error) {
	var out []shownCard
	err := pwatest.Eval(ctx, `[...document.querySelectorAll('[data-testid="flag"]')].map((c) => ({
		Rule: c.dataset.rule, Athlete: c.dataset.athlete, Level: c.dataset.level, Decided: c.dataset.decided,
		Reason: (c.querySelector('[data-testid="flag-reason"]') || {}).textContent || '',
		Numbers: (c.querySelector('[data-testid="flag-numbers"]') || {}).textContent || '',
		Threshold: (c.querySelector('[data-testid="flag-threshold"]') || {}).textContent || '',
		Caution: (c.querySelector('[data-testid="flag-caution"]') || {}).textContent || '' }))`, &out)
	return out, err
}

// coveringDays picks demo days on which, together, every rule raises a flag.
func coveringDays(t *testing.T, h *coachHub) []string {
	need := map[string]bool{}
	for _, r := range flags.Rules {
		need[r] = true
	}
	days := []string{coachDay}
	for i := 0; i < demo.HistoryDays && len(need) > 0; i++ {
		day := demoToday.AddDate(0, 0, -i).Format("2006-01-02")
		fl, err := h.srv.Flags(day, "")
		require.NoError(t, err)
		added := false
		for _, f := range fl {
			if f.Status == flags.StatusFlag && need[f.Rule] {
				delete(need, f.Rule)
				added = true
			}
		}
		if added && day != coachDay {
			days = append(days, day)
		}
	}
	require.Empty(t, need, "the demo camp raises every rule")
	return days
}

func TestCoachReviewShowsEveryRuleWithItsNumbers(t *testing.T) {
	h := startCoachHub(t)
	ctx := coachBrowser(t, h, "/")
	require.NoError(t, pwatest.Click(ctx, "nav-review")) // the board is one tap from Home
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="screen-review"]')`, 10*time.Second))
	units := map[string]string{}
	for name, id := range h.ids() {
		units[id] = "kg"
		if name == "Tomas Varga" || name == "Mateo Lindqvist" || name == "Sami Arkwright" { // the demo's pound fighters
			units[id] = "lb"
		}
	}
	seen := map[string]bool{}
	for _, day := range coveringDays(t, h) {
		require.NoError(t, pwatest.Route(ctx, "/review?day="+day))
		all, err := h.srv.Flags(day, "")
		require.NoError(t, err)
		// A running stand-down is a restriction in the strip above the
		// board, not a card among the prompts.
		var want []flags.Flag
		held := 0
		for _, f := range all {
			if f.Rule == flags.RuleSparOnHold && f.Level == flags.LevelInfo && f.Status == flags.StatusFlag {
				held++
				seen[f.Rule] = true
				continue
			}
			want = append(want, f)
		}
		require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector('[data-testid="review-fresh"][data-live="true"]') && document.querySelector('[data-testid="review-day"]').value === %q && document.querySelectorAll('[data-testid="flag"]').length === %d && document.querySelectorAll('[data-testid="restriction"]').length === %d`, day, len(want), held), 10*time.Second), "day %s", day)
		cards, err := readCards(ctx)
		require.NoError(t, err)
		// Every flag has its card, in the hub's order within each athlete.
		byAthlete := map[string][]shownCard{}
		for _, c := range cards {
			byAthlete[c.Athlete] = append(byAthlete[c.Athlete], c)
		}
		wantBy := map[string][]flags.Flag{}
		for _, f := range want {
			wantBy[f.Athlete] = append(wantBy[f.Athlete], f)
		}
		for a, fs := range wantBy {
			got := byAthlete[a]
			require.Len(t, got, len(fs), "%s %s", day, a)
			for i, f := range fs {
				c := got[i]
				assert.Equal(t, f.Rule, c.Rule, "%s %s #%d", day, a, i)
				assert.Equal(t, levelOf(f), c.Level)
				assert.Equal(t, f.Reason, c.Reason, "the hub's reason, word for word")
				if f.Value != nil && shownNumber(*f.Value, f.Unit, units[a]) != "" {
					assert.Contains(t, c.Numbers, shownNumber(*f.Value, f.Unit, units[a]), "%s %s value", day, f.Rule)
				}
				if f.Threshold != nil && shownNumber(*f.Threshold, f.Unit, units[a]) != "" {
					assert.Contains(t, c.Numbers, shownNumber(*f.Threshold, f.Unit, units[a]), "%s %s threshold", day, f.Rule)
				}
				// The setting is said in words with its value, never by its key.
				if f.ThresholdName != "" {
					assert.NotContains(t, c.Threshold, f.ThresholdName)
				}
				if f.ThresholdName != "" && f.Threshold != nil && shownNumber(*f.Threshold, f.Unit, units[a]) != "" {
					assert.Contains(t, c.Threshold, shownNumber(*f.Threshold, f.Unit, units[a]), "%s %s threshold in words", day, f.Rule)
				}
				assert.Equal(t, f.Caution, c.Caution)
				if f.Status == flags.StatusFlag {
					seen[f.Rule] = true
				}
			}
		}
		// Athletes on a stand-down come first; then by their most serious
		// card: alert before watch before info before "not enough data yet".
		var order []int
		require.NoError(t, pwatest.Eval(ctx, `[...document.querySelectorAll('[data-testid^="review-athlete-"]')].map((b) => b.dataset.held === 'true' ? -1 : Math.min(9, ...[...b.querySelectorAll('[data-testid="flag"]')].map((c) => ['alert','watch','info','forming'].indexOf(c.dataset.level))))`, &order))
		for i := 1; i < len(order); i++ {
			assert.LessOrEqual(t, order[i-1], order[i], "%s: athletes most serious first", day)
		}
	}
	for _, r := range flags.Rules {
		assert.True(t, seen[r], "a card for %s", r)
	}

	// "Not enough data yet" is its own state, never a clean bill.
	require.NoError(t, pwatest.Route(ctx, "/review?day="+coachDay))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="flag"][data-level="forming"]')`, 10*time.Second))
	var formingText string
	require.NoError(t, pwatest.Eval(ctx, `document.querySelector('[data-testid="flag"][data-level="forming"]').textContent`, &formingText))
	assert.Contains(t, formingText, "Not enough data yet")

	// The inputs of a card open to the records themselves.
	kofi := h.ids()["Kofi Brandt"]
	fl, err := h.srv.Flags(coachDay, kofi)
	require.NoError(t, err)
	var jump flags.Flag
	for _, f := range fl {
		if f.Rule == "jump_drop" && f.Status == flags.StatusFlag {
			jump = f
		}
	}
	require.NotEmpty(t, jump.Inputs)
	card := fmt.Sprintf(`[data-testid="flag"][data-rule="jump_drop"][data-athlete=%q]`, kofi)
	require.NoError(t, chromedp.Do(ctx, chromedp.Click(chromedp.CSS(card+` [data-testid="flag-inputs"]`), chromedp.NodeVisible)))
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelectorAll(%q).length === %d && [...document.querySelectorAll(%q)].every((e) => e.textContent.includes('CMJ:'))`,
		card+` [data-testid="flag-input"]`, len(jump.Inputs), card+` [data-testid="flag-input"]`), 10*time.Second))

	// Filters: one athlete, one level.
	require.NoError(t, coachSet(ctx, "review-athlete", kofi))
	require.NoError(t, pwatest.Click(ctx, "review-level-alert"))
	var levels []string
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid^="review-athlete-"]').length === 1`, 5*time.Second))
	require.NoError(t, pwatest.Eval(ctx, `[...document.querySelectorAll('[data-testid="flag"]')].map((c) => c.dataset.level + ' ' + c.dataset.athlete)`, &levels))
	require.NotEmpty(t, levels)
	for _, l := range levels {
		assert.Equal(t, "alert "+kofi, l)
	}

	// Hub unreachable: the board opens from the device with the last copy
	// of the day's flags and says how old it is and why.
	require.NoError(t, pwatest.WaitControlled(ctx))
	require.NoError(t, pwatest.Route(ctx, "/review?day="+coachDay))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="review-fresh"][data-live="true"]')`, 10*time.Second))
	h.srv.SetDown(true)
	defer h.srv.SetDown(false)
	require.NoError(t, pwatest.Reload(ctx))
	if err := pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector('[data-testid="review-fresh"][data-live="false"]') && document.querySelectorAll('[data-testid="flag"], [data-testid="restriction"]').length === %d`, len(mustFlags(t, h, coachDay))), 15*time.Second); err != nil {
		var st string
		pwatest.Eval(ctx, `location.href + ' | ' + document.querySelector('#screen').innerText.slice(0, 100) + ' | ' + document.querySelectorAll('[data-testid="flag"]').length`, &st)
		t.Fatalf("%v\nscreen: %s", err, st)
	}
	stale, err := pwatest.Text(ctx, "review-fresh")
	require.NoError(t, err)
	assert.Contains(t, stale, "Showing the copy from")
	assert.Contains(t, stale, "cannot be reached")
}

func mustFlags(t *testing.T, h *coachHub, day string) []flags.Flag {
	fl, err := h.srv.Flags(day, "")
	require.NoError(t, err)
	return fl
}

func TestCoachDecisionIsSeenFromASecondDevice(t *testing.T) {
	h := startCoachHub(t)
	kofi := h.ids()["Kofi Brandt"]
	a := coachBrowser(t, h, "/review?day="+coachDay)
	b := coachBrowser(t, h, "/review?day="+coachDay)
	card := fmt.Sprintf(`[data-testid="flag"][data-rule="jump_drop"][data-athlete=%q]`, kofi)
	for _, ctx := range []context.Context{a, b} {
		require.NoError(t, pwatest.Poll(ctx, `document.querySelector('`+card+`')`, 10*time.Second))
	}
	require.NoError(t, chromedp.Do(a, chromedp.Click(chromedp.CSS(card+` [data-testid="flag-decide"]`), chromedp.NodeVisible)))
	require.NoError(t, pwatest.Poll(a, `document.querySelector('`+card+` [data-testid="decision-note"]')`, 5*time.Second))
	note := "No hard sparring today; technical pads only"
	require.NoError(t, chromedp.Do(a, chromedp.SendKeys(chromedp.CSS(card+` [data-testid="decision-note"]`), note, chromedp.NodeVisible)))
	require.NoError(t, chromedp.Do(a, chromedp.SendKeys(chromedp.CSS(card+` [data-testid="decision-by"]`), "S&C coach", chromedp.NodeVisible)))
	require.NoError(t, chromedp.Do(a, chromedp.Click(chromedp.CSS(card+` [data-testid="decision-save"]`), chromedp.NodeVisible)))

	// The second device shows it beside the flag, from the hub, without reload.
	require.NoError(t, pwatest.Eval(b, `(() => { window.__same = true; return true })()`, nil))
	require.NoError(t, pwatest.Poll(b, `(() => { const d = document.querySelector('`+card+` [data-testid="flag-decision"]'); return d && d.dataset.state === 'hub' && d.textContent.includes('`+note+`') && d.textContent.includes('S&C coach') })()`, 20*time.Second))
	var same bool
	require.NoError(t, pwatest.Eval(b, `window.__same === true`, &same))
	assert.True(t, same, "no reload on the second device")
	require.NoError(t, pwatest.Poll(a, `document.querySelector('`+card+` [data-testid="flag-decision"][data-state="hub"]')`, 10*time.Second))

	// An athlete's phone syncs a check-in: the board on the second device
	// shows the new finding by itself (poke, pull, flags fetched again).
	mateo := h.ids()["Mateo Lindqvist"]
	hyd := fmt.Sprintf(`[data-testid="flag"][data-rule="hydration"][data-athlete=%q]`, mateo)
	var before int
	require.NoError(t, pwatest.Eval(b, `document.querySelectorAll('`+hyd+`').length`, &before))
	require.Equal(t, 0, before)
	now := time.Now()
	cid, _ := uuid.NewV7()
	cb, _ := json.Marshal(map[string]any{"mass_kg": 66.5, "usg": 1.034})
	h.coachPush("demo-phone-mateo-2", devsync.Record{ID: cid.String(), Kind: "checkin", Athlete: mateo, Day: coachDay, At: now.Format(time.RFC3339),
		Device: "demo-phone-mateo-2", Stamp: devsync.HLC{L: now.UnixMilli()}, Body: cb})
	t0 := time.Now()
	require.NoError(t, pwatest.Poll(b, `(() => { const c = document.querySelector('`+hyd+`'); return c && c.dataset.level === 'alert' && c.textContent.includes('1.034') })()`, 15*time.Second))
	t.Logf("phone's check-in → alert on the coach's board: %s", time.Since(t0))
	require.NoError(t, pwatest.Eval(b, `window.__same === true`, &same))
	assert.True(t, same, "no reload on the second device")

	// On the hub: a decision record for that athlete and day, attached to the flag.
	fl, err := h.srv.Flags(coachDay, kofi)
	require.NoError(t, err)
	var dec *flags.DecisionRef
	for _, f := range fl {
		if f.Rule == "jump_drop" {
			dec = f.Decision
		}
	}
	require.NotNil(t, dec)
	assert.Equal(t, note, dec.Note)
	assert.Equal(t, "S&C coach", dec.By)
	rec, err := h.db.Get(dec.ID)
	require.NoError(t, err)
	assert.Equal(t, "decision", rec.Kind)
	assert.Equal(t, kofi, rec.Athlete)
	assert.Equal(t, coachDay, rec.Day)
	var body map[string]any
	require.NoError(t, json.Unmarshal(rec.Body, &body))
	assert.Equal(t, "jump_drop", body["rule"])
}

func TestCoachAthletePageDrawsAllFiveCharts(t *testing.T) {
	h := startCoachHub(t)
	tomas := h.ids()["Tomas Varga"]
	ctx := coachBrowser(t, h, "/athlete?id="+tomas+"&day="+coachDay)
	charts := []string{"chart-mass", "chart-jump", "chart-load", "chart-ratio", "chart-spar", "chart-wellness"}
	for _, c := range charts {
		require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`(() => { const e = document.querySelector(%q); if (!e) return false;
			const cv = e.querySelector('canvas'); return !!cv && cv.width > 0 && cv.height > 0 && Number(e.dataset.points) > 0 && Number(e.dataset.series) >= 3 })()`, pwatest.Q(c)), 15*time.Second), c)
		var title string
		require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`document.querySelector(%q).querySelector('h2').textContent`, pwatest.Q(c)), &title))
		assert.NotEmpty(t, title)
		sum, err := pwatest.Text(ctx, c+"-summary")
		require.NoError(t, err)
		assert.NotEmpty(t, sum, "%s has a text summary", c)
	}
	// Below them, each test's trend across camps and the interval sessions
	// done against prescribed, as the hub computed them: Tomas ran stages
	// 21 and 22 in his summer camp, 22 then 23 in this one.
	require.NoError(t, pwatest.Poll(ctx, `(() => { const e = document.querySelector('[data-testid="test-chart-ift_30_15"]');
		return !!e && Number(e.dataset.points) === 4 && !!e.querySelector('canvas') })()`, 15*time.Second))
	ift, err := pwatest.Text(ctx, "test-chart-ift_30_15-summary")
	require.NoError(t, err)
	assert.Contains(t, ift, "V_IFT 19.0 km/h (stage 23 from 8 km/h)")
	assert.Contains(t, ift, "+0.5 km/h since 18.5 — within the test's noise (±1.08 km/h at 90 %, Thomas et al. 2016)")
	require.NoError(t, pwatest.Poll(ctx, `(() => { const e = document.querySelector('[data-testid="test-chart-sessions"]'); return !!e && Number(e.dataset.points) >= 4 })()`, 15*time.Second))
	done, err := pwatest.Text(ctx, "test-chart-sessions-summary")
	require.NoError(t, err)
	assert.Contains(t, done, "1 prescribed, not logged yet")

	// uPlot is loaded on this page only: the app shell does not carry it.
	var scripts []string
	require.NoError(t, pwatest.Eval(ctx, `performance.getEntriesByType('resource').map((e) => new URL(e.name).pathname).filter((p) => p.includes('uplot'))`, &scripts))
	assert.Contains(t, scripts, "/vendor/uplot/uPlot.esm.js")

	// The mass summary speaks pounds for a pound fighter, converted exactly.
	in, err := coachGet(h.url("/api/athletes/" + tomas + "/series?from=" + demoToday.AddDate(0, 0, -41).Format("2006-01-02") + "&to=" + coachDay))
	require.NoError(t, err)
	var s struct {
		Units string
		Mass  struct {
			MorningKg  []*float64 `json:"morning_kg"`
			WeighInDay string     `json:"weigh_in_day"`
		}
	}
	require.NoError(t, json.Unmarshal(in, &s))
	require.Equal(t, "lb", s.Units)
	lastKg := *s.Mass.MorningKg[len(s.Mass.MorningKg)-1]
	sum, err := pwatest.Text(ctx, "chart-mass-summary")
	require.NoError(t, err)
	assert.Contains(t, sum, fmt.Sprintf("Latest morning mass %.1f lb", lastKg/0.45359237))
	assert.Contains(t, sum, "weigh-in")
	assert.Contains(t, sum, "Projected weigh-in mass")
	caution, err := pwatest.Text(ctx, "chart-mass-caution")
	require.NoError(t, err)
	assert.Contains(t, caution, "sports dietitian or physician")
}

func TestCoachPlanSetsUpANewBout(t *testing.T) {
	h := startCoachHub(t)
	kofi := h.ids()["Kofi Brandt"]
	ctx := coachBrowser(t, h, "/plan?athlete="+kofi)
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-bout"]')`, 10*time.Second))
	require.NoError(t, coachSet(ctx, "plan-bout", "new"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-bout-day"]').value === ''`, 5*time.Second))
	start := time.Now().AddDate(0, 0, 14)
	bout := start.AddDate(0, 0, 10*7)
	d := func(t time.Time) string { return t.Format("2006-01-02") }
	require.NoError(t, pwatest.Type(ctx, "plan-name", "Invented rematch"))
	require.NoError(t, coachSet(ctx, "plan-camp-start", d(start)))
	require.NoError(t, coachSet(ctx, "plan-bout-day", d(bout)))
	require.NoError(t, pwatest.Click(ctx, "plan-wi-day_before"))
	require.NoError(t, coachSet(ctx, "plan-wi-date", d(bout.AddDate(0, 0, -1))))
	require.NoError(t, coachSet(ctx, "plan-wi-time", "10:00"))
	require.NoError(t, coachSet(ctx, "plan-zone", "Europe/Lisbon"))
	require.NoError(t, coachSet(ctx, "plan-class", "ol2024_m_71"))
	require.NoError(t, pwatest.WaitText(ctx, "plan-class-limit", "71 kg"))
	require.NoError(t, pwatest.Type(ctx, "plan-start-mass", "74.0"))
	require.NoError(t, pwatest.Type(ctx, "plan-ref-load", "3400"))
	require.NoError(t, pwatest.Click(ctx, "plan-generate"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid^="plan-week-"][data-level]').length === 10`, 10*time.Second))
	var last string
	require.NoError(t, pwatest.Eval(ctx, `document.querySelector('[data-testid="plan-week-10"]').dataset.level`, &last))
	assert.Equal(t, "taper", last, "the final week is the taper")
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-taper-cut"]')`, 10*time.Second))
	var pct float64
	require.NoError(t, pwatest.Eval(ctx, `Number(document.querySelector('[data-testid="plan-taper-cut"]').dataset.pct)`, &pct))
	// Bosquet et al. 2007: a 41–60 % cut of training volume in the taper.
	assert.GreaterOrEqual(t, pct, 41.0)
	assert.LessOrEqual(t, pct, 60.0)
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid="plan-path-point"]').length >= 2`, 10*time.Second))

	// The weigh-in's offset comes from the venue's zone on that date,
	// daylight saving included: checked against Go's copy of the IANA
	// time-zone database.
	for _, c := range []struct{ zone, date, clock string }{
		{"Europe/Lisbon", "2027-03-27", "10:00"}, {"Europe/Lisbon", "2027-03-28", "10:00"},
		{"America/New_York", "2027-11-06", "18:30"}, {"America/New_York", "2027-11-07", "18:30"},
		{"Asia/Kolkata", "2027-01-05", "08:15"}, {"Australia/Adelaide", "2027-04-04", "12:00"},
	} {
		loc, err := time.LoadLocation(c.zone)
		require.NoError(t, err)
		wall, err := time.ParseInLocation("2006-01-02 15:04", c.date+" "+c.clock, loc)
		require.NoError(t, err)
		var got string
		require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`import('/js/coach/plan.js').then((m) => m.weighInRFC3339(%q, %q, %q))`, c.zone, c.date, c.clock), &got))
		assert.Equal(t, wall.Format(time.RFC3339), strings.Replace(got, "+00:00", "Z", 1), "%v", c)
	}

	// A start mass that needs more than 1.5 %/week is explained before the camp starts.
	require.NoError(t, pwatest.Type(ctx, "plan-start-mass", "84.0"))
	require.NoError(t, pwatest.Poll(ctx, `[...document.querySelectorAll('[data-testid="plan-issue"]')].some((e) => e.textContent.includes('fast-loss rule'))`, 10*time.Second))
	require.NoError(t, pwatest.Type(ctx, "plan-start-mass", "74.0"))
	require.NoError(t, pwatest.Poll(ctx, `![...document.querySelectorAll('[data-testid="plan-issue"]')].some((e) => e.textContent.includes('fast-loss rule'))`, 10*time.Second))

	// Edit the planned path: the default's points become editable knots.
	require.NoError(t, pwatest.Click(ctx, "plan-path-edit"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid^="plan-knot-"][data-testid$="-mass"]').length >= 2`, 5*time.Second))
	var knots int
	require.NoError(t, pwatest.Eval(ctx, `document.querySelectorAll('[data-testid^="plan-knot-"][data-testid$="-mass"]').length`, &knots))
	require.NoError(t, pwatest.Type(ctx, "plan-knot-2-mass", "73.1"))

	// Edit week 4 by hand, then save through the device's store.
	require.NoError(t, coachSet(ctx, "plan-week-4-level", "rest"))
	require.NoError(t, coachSet(ctx, "plan-week-4-spar", "0"))
	require.NoError(t, coachSet(ctx, "plan-week-4-hard", "0"))
	// Week 2 holds a flight: 9 h east (Lisbon → Tokyo in winter), read
	// from zone data.
	wk3 := start.AddDate(0, 0, 7)
	require.NoError(t, pwatest.Click(ctx, "plan-week-2-travel-add"))
	require.NoError(t, coachSet(ctx, "plan-week-2-from-zone", "Europe/Lisbon"))
	require.NoError(t, coachSet(ctx, "plan-week-2-dep-date", d(wk3)))
	require.NoError(t, coachSet(ctx, "plan-week-2-dep-time", "08:00"))
	require.NoError(t, coachSet(ctx, "plan-week-2-to-zone", "Asia/Tokyo"))
	require.NoError(t, coachSet(ctx, "plan-week-2-arr-date", d(wk3.AddDate(0, 0, 1))))
	require.NoError(t, coachSet(ctx, "plan-week-2-arr-time", "12:00"))
	require.NoError(t, coachSet(ctx, "plan-week-2-strength", "strength_speed"))
	require.NoError(t, pwatest.Type(ctx, "plan-week-2-note", "Fly out early"))
	// The hub's check names the flight in words: 9 days to adjust, heavy weeks after it.
	require.NoError(t, pwatest.Poll(ctx, `[...document.querySelectorAll('[data-testid="plan-issue"]')].some((e) => e.textContent.includes("the body needs about 9 days"))`, 10*time.Second))
	require.NoError(t, pwatest.Poll(ctx, `Number(document.querySelector('[data-testid="plan-path-chart"]').dataset.points) >= 2`, 5*time.Second))
	// What was typed first is still there (nothing reloaded the form).
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-name"]').value === 'Invented rematch'`, time.Second))
	require.NoError(t, pwatest.Click(ctx, "plan-save"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "Plan saved on this device"))
	require.NoError(t, pwatest.WaitSynced(ctx))

	var got *devsync.Record
	require.NoError(t, h.db.Kind("bout", func(r devsync.Record) error {
		if r.Athlete == kofi && strings.Contains(string(r.Body), "Invented rematch") {
			rr := r
			got = &rr
		}
		return nil
	}))
	if got == nil {
		rej, _ := pwatest.ReadIDB(ctx, "rejected")
		t.Fatalf("the new bout did not reach the hub; entries the hub rejected: %v", rej)
	}
	var b struct {
		CampStart   string  `json:"camp_start"`
		BoutDay     string  `json:"bout_day"`
		WeighIn     string  `json:"weigh_in"`
		WeighInZone string  `json:"weigh_in_zone"`
		WeighInType string  `json:"weigh_in_type"`
		WeightClass string  `json:"weight_class"`
		LimitKg     float64 `json:"limit_kg"`
		StartMassKg float64 `json:"start_mass_kg"`
		RefLoad     float64 `json:"reference_load_au"`
		Path        []struct {
			Day    string  `json:"day"`
			MassKg float64 `json:"mass_kg"`
		}
		Weeks []struct {
			Week   int
			Level  string
			Cap    *int `json:"spar_rounds"`
			Note   string
			Travel *struct {
				DepartAt string `json:"depart_at"`
				ArriveAt string `json:"arrive_at"`
				ToZone   string `json:"to_zone"`
			}
			Strength *struct{ IDs []string }
		}
	}
	require.NoError(t, json.Unmarshal(got.Body, &b))
	assert.Equal(t, d(start), b.CampStart)
	assert.Equal(t, d(bout), b.BoutDay)
	assert.Equal(t, "day_before", b.WeighInType)
	assert.Equal(t, "Europe/Lisbon", b.WeighInZone)
	wi, err := time.Parse(time.RFC3339, b.WeighIn)
	require.NoError(t, err)
	lis, _ := time.LoadLocation("Europe/Lisbon")
	assert.Equal(t, d(bout.AddDate(0, 0, -1))+" 10:00", wi.In(lis).Format("2006-01-02 15:04"), "weigh-in at 10:00 on the venue's clock")
	assert.Equal(t, "ol2024_m_71", b.WeightClass)
	assert.InDelta(t, 71.0, b.LimitKg, 1e-9)
	assert.InDelta(t, 74.0, b.StartMassKg, 1e-9)
	assert.InDelta(t, 3400, b.RefLoad, 1e-9)
	require.Len(t, b.Weeks, 10)
	require.NotNil(t, b.Weeks[1].Travel)
	tokyo, _ := time.LoadLocation("Asia/Tokyo")
	arr, err := time.Parse(time.RFC3339, b.Weeks[1].Travel.ArriveAt)
	require.NoError(t, err)
	assert.Equal(t, d(wk3.AddDate(0, 0, 1))+" 12:00", arr.In(tokyo).Format("2006-01-02 15:04"), "landing at 12:00 on Tokyo's clock")
	assert.Equal(t, "Asia/Tokyo", b.Weeks[1].Travel.ToZone)
	assert.Equal(t, "Fly out early", b.Weeks[1].Note)
	require.NotNil(t, b.Weeks[1].Strength)
	assert.Equal(t, "strength_speed", b.Weeks[1].Strength.IDs[0])
	assert.Equal(t, "rest", b.Weeks[3].Level)
	require.NotNil(t, b.Weeks[3].Cap)
	assert.Equal(t, 0, *b.Weeks[3].Cap)
	assert.Equal(t, "taper", b.Weeks[9].Level)
	require.Len(t, b.Path, knots, "the edited path is stored as knots")
	assert.InDelta(t, 73.1, b.Path[1].MassKg, 1e-9)
	assert.Equal(t, d(start), b.Path[0].Day, "the path starts at camp start")
	assert.InDelta(t, 74.0, b.Path[0].MassKg, 1e-9)
}

// TestCoachScreensFitAPhoneAndWriteScreenshots: at 360×740 no coach
// screen scrolls sideways, every control is at least 44×44 CSS px
// (WCAG 2.2 target size) and axe-core finds nothing serious or critical;
// screenshots of each screen at 360×740 and
// 1280×800, light and dark, go to a temporary folder (or -screenshots DIR).
func TestCoachScreensFitAPhoneAndWriteScreenshots(t *testing.T) {
	h := startCoachHub(t)
	ids := h.ids()
	ctx := coachBrowser(t, h, "/review?day="+coachDay)
	dir := pwatest.ShotDir(t)
	// axe-core (the accessibility rules engine, run as in a11y_e2e_test.go).
	require.NoError(t, pwatest.Eval(ctx, "(() => { "+axeSource(t)+"\n; return typeof axe === 'object' })()", nil))
	screens := []struct{ name, path, ready, more string }{
		{"review", "/review?day=" + coachDay, `document.querySelector('[data-testid="review-fresh"][data-live="true"]') && document.querySelectorAll('[data-testid="flag"]').length > 5`, `[data-testid^="review-athlete-"]`},
		{"athlete", "/athlete?id=" + ids["Tomas Varga"] + "&day=" + coachDay, allCharts + ` && document.querySelector('[data-testid="test-charts"]')`, `[data-testid="chart-load"]`},
		{"plan", "/plan?athlete=" + ids["Ines Halloran"], `document.querySelector('[data-testid="plan-weeks"]') && (document.querySelector('[data-testid="plan-issues"]') || document.querySelector('[data-testid="plan-ok"]'))`, `[data-testid="plan-weeks"]`},
		{"camps", "/camps?athlete=" + ids["Tomas Varga"] + "&day=" + coachDay, campCharts, `[data-testid="camps-tests"]`},
		{"thresholds", "/thresholds?athlete=" + ids["Kofi Brandt"], `document.querySelector('[data-testid="screen-thresholds"][data-ready="true"] [data-testid="thresholds-save"]') && (document.querySelector('[data-testid="thresholds-rule-jump_drop"]').open = true)`, `[data-testid="thresholds-save"]`},
		{"sheet", "/sheet?day=" + coachDay, `document.querySelectorAll('[data-testid="sheet-keys"]').length === 5 && ![...document.querySelectorAll('[data-testid="sheet-keys"]')].some((e) => e.textContent.includes('unavailable')) && document.querySelectorAll('[data-testid="sheet-flag"]').length > 5`, ""},
	}
	sizes := []struct{ w, h int64 }{{360, 740}, {1280, 800}}
	for _, scheme := range []string{"light", "dark"} {
		_, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Features: []*emulation.MediaFeature{{Name: "prefers-color-scheme", Value: scheme}}})
		require.NoError(t, err)
		for _, sz := range sizes {
			require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(sz.w, sz.h)))
			for _, s := range screens {
				require.NoError(t, pwatest.Route(ctx, s.path))
				if err := pwatest.Poll(ctx, s.ready, 15*time.Second); err != nil {
					var st string
					_ = pwatest.Eval(ctx, `JSON.stringify({url: location.href, figs: [...document.querySelectorAll('figure.chart:not(.test-chart)')].map((e) => e.dataset.points + ':' + (e.getAttribute('aria-label') || '').slice(0, 40)), tests: !!document.querySelector('[data-testid="test-charts"]'), err: [...document.querySelectorAll('.error')].map((e) => e.textContent)})`, &st)
					t.Fatalf("%s %s %dx%d: %v; %s", s.name, scheme, sz.w, sz.h, err, st)
				}
				time.Sleep(150 * time.Millisecond) // charts settle to the new width
				if sz.w == 360 {
					checkPhoneScreen(t, ctx, s.name, scheme)
				}
				png, err := chromedp.Run(ctx, chromedp.CaptureScreenshot())
				require.NoError(t, err)
				require.NoError(t, os.WriteFile(filepath.Join(dir, fmt.Sprintf("coach-%s-%dx%d-%s.png", s.name, sz.w, sz.h, scheme)), png, 0o644))
				if s.more != "" { // a second view further down the screen
					require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`(() => { document.querySelector(%q).scrollIntoView(); return true })()`, s.more), nil))
					time.Sleep(100 * time.Millisecond)
					png, err := chromedp.Run(ctx, chromedp.CaptureScreenshot())
					require.NoError(t, err)
					require.NoError(t, os.WriteFile(filepath.Join(dir, fmt.Sprintf("coach-%s-more-%dx%d-%s.png", s.name, sz.w, sz.h, scheme)), png, 0o644))
					require.NoError(t, pwatest.Eval(ctx, `(() => { scrollTo(0, 0); return true })()`, nil))
				}
			}
		}
	}
}

// coachPush sends records to the hub as the coach's laptop would.
func (h *coachHub) coachPush(device string, recs ...devsync.Record) {
	var ms []devsync.Mutation
	for i, r := range recs {
		ms = append(ms, devsync.Mutation{N: uint64(i + 1), Op: devsync.OpUpsert, Record: r})
	}
	b, _ := json.Marshal(devsync.PushRequest{Device: device, Mutations: ms})
	res, err := http.Post(h.url("/api/push"), "application/json", bytes.NewReader(b))
	require.NoError(h.t, err)
	defer res.Body.Close()
	var pr devsync.PushResponse
	require.NoError(h.t, json.NewDecoder(res.Body).Decode(&pr))
	require.Equal(h.t, http.StatusOK, res.StatusCode)
	require.Empty(h.t, pr.Rejected)
}

// pdfPages counts the page objects of a PDF Chromium printed.
func pdfPages(pdf []byte) int {
	return len(regexp.MustCompile(`/Type\s*/Page[^s]`).FindAll(pdf, -1))
}

// TestCoachWallSheetPrintsOnOnePage: eight fighters' flags, key numbers
// and cautions print on one A4 page and on one US Letter page.
func TestCoachWallSheetPrintsOnOnePage(t *testing.T) {
	h := startCoachHub(t)
	now := time.Now()
	var recs []devsync.Record
	for i, name := range []string{"Noor Castellan", "Pavel Ostrander", "Quinn Abara"} { // with the demo's five, eight
		u, _ := uuid.NewV7()
		id := u.String()
		at := now.Add(time.Duration(i) * time.Millisecond)
		body, _ := json.Marshal(map[string]any{"name": name, "units": "kg"})
		recs = append(recs, devsync.Record{ID: id, Kind: "athlete", Athlete: id, At: at.Format(time.RFC3339), Device: "coach-laptop-sheet", Stamp: devsync.HLC{L: at.UnixMilli()}, Body: body})
		c, _ := uuid.NewV7()
		cb, _ := json.Marshal(map[string]any{"mass_kg": 70.0 + float64(i), "sleep": 4, "fatigue": 3, "soreness": 3, "stress": 4, "mood": 4, "usg": 1.024})
		recs = append(recs, devsync.Record{ID: c.String(), Kind: "checkin", Athlete: id, Day: coachDay, At: at.Format(time.RFC3339), Device: "coach-laptop-sheet", Stamp: devsync.HLC{L: at.UnixMilli() + 1}, Body: cb})
	}
	h.coachPush("coach-laptop-sheet", recs...)
	ctx := coachBrowser(t, h, "/sheet?day="+coachDay)
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid^="sheet-athlete-"]').length === 8 && document.querySelectorAll('[data-testid="sheet-keys"]').length === 8 && ![...document.querySelectorAll('[data-testid="sheet-keys"]')].some((e) => e.textContent.includes('unavailable')) && document.querySelector('[data-testid="sheet-cautions"]')`, 15*time.Second))
	var cautions string
	require.NoError(t, pwatest.Eval(ctx, `document.querySelector('[data-testid="sheet-cautions"]').textContent`, &cautions))
	assert.Contains(t, cautions, "sports dietitian or physician")
	_, err := chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"})
	require.NoError(t, err)
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(718, 1000))) // A4 less 10 mm margins, at 96 px per inch
	var tall float64
	require.NoError(t, pwatest.Eval(ctx, `document.documentElement.scrollHeight`, &tall))
	t.Logf("printed sheet height %.0f px of 1047", tall)
	png, err := chromedp.Run(ctx, chromedp.FullScreenshot(100))
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(filepath.Join(pwatest.ShotDir(t), "coach-sheet-print-A4.png"), png, 0o644))
	for _, paper := range []struct {
		name string
		w, h float64 // inches
	}{{"A4", 8.27, 11.69}, {"Letter", 8.5, 11}} {
		res, err := chromedp.Call(ctx, page.PrintToPDF, page.PrintToPDFParams{PaperWidth: paper.w, PaperHeight: paper.h})
		require.NoError(t, err)
		assert.Equal(t, 1, pdfPages(res.Data), "the wall sheet for 8 fighters fits one %s page", paper.name)
		if paper.name == "A4" { // the printed sheet as the coach pins it up
			require.NoError(t, os.WriteFile(filepath.Join(pwatest.ShotDir(t), "coach-sheet-print-A4.pdf"), res.Data, 0o644))
		}
	}
}
