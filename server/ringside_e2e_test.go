// Browser tests of ringside (the Rounds screen: chips with the hub's
// standing, the round clock, the hold gate, the incident button) and the
// jump grid's baselines, against the real hub on loopback holding the demo
// camp, in headless Chromium through pwa/pwatest.
package server_test

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	devsync "cornerbook/sync"
)

// holdText is the stand-down wording the screens show (screens.js HOLD_TEXT).
const holdText = "No sparring or contact until cleared in writing by a doctor."

// ringHub is the real hub on a bbolt file in a temp dir, seeded with the
// demo camp, on 127.0.0.1.
type ringHub struct {
	*e2eHub
	names map[string]string // name → athlete id
}

func startRingHub(t testing.TB) *ringHub {
	t.Helper()
	h := startDemoHub(t, time.Local)
	srv := h.srv
	names := map[string]string{}
	for id, name := range srv.AthleteNames() {
		names[name] = id
	}
	return &ringHub{e2eHub: h, names: names}
}

// ringBrowser opens the app at a phone's 360×740 and waits for the first
// sync (the whole demo camp) to land.
func ringBrowser(t testing.TB, h *ringHub, path string) context.Context {
	t.Helper()
	_, ctx, _ := e2eBrowser(t, "")
	ctx, cancel := context.WithTimeout(ctx, 90*time.Second)
	t.Cleanup(cancel)
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(360, 740)))
	require.NoError(t, pwatest.Open(ctx, h.url(path)))
	require.NoError(t, pwatest.WaitSynced(ctx))
	return ctx
}

type hubBaseline struct {
	Athlete     string   `json:"athlete"`
	Name        string   `json:"name"`
	CMJBaseline *float64 `json:"cmj_baseline_cm"`
	CMJNoisePct *float64 `json:"cmj_noise_pct"`
	SparRounds  int      `json:"spar_rounds_7d"`
	SparCap     int      `json:"spar_cap_rounds"`
	OnHold      bool     `json:"spar_on_hold"`
	HoldReason  string   `json:"spar_hold_reason"`
}

func (h *ringHub) baselines(t testing.TB, day string) map[string]hubBaseline {
	res, err := http.Get(h.url("/api/baselines?day=" + day))
	require.NoError(t, err)
	defer res.Body.Close()
	require.Equal(t, http.StatusOK, res.StatusCode)
	var out struct{ Athletes []hubBaseline }
	require.NoError(t, json.NewDecoder(res.Body).Decode(&out))
	m := map[string]hubBaseline{}
	for _, b := range out.Athletes {
		m[b.Name] = b
	}
	return m
}

// live returns the hub's live records of a kind for an athlete and day.
func (h *ringHub) live(kind, athlete, day string) []devsync.Record {
	var out []devsync.Record
	for _, r := range h.all()[kind] {
		if !r.Deleted && r.Athlete == athlete && r.Day == day {
			out = append(out, r)
		}
	}
	return out
}

// logTaps starts the page's record of where each tap landed (the listener
// is added once per page; the record starts afresh on each call), for a
// helper to print when a try did not take.
func logTaps(ctx context.Context) {
	pwatest.Eval(ctx, `(() => { window.__taps = []; if (!window.__tapsLogged) { window.__tapsLogged = true;
		document.addEventListener('click', (e) => { const t = e.target.closest('[data-testid]'); window.__taps.push((t ? t.dataset.testid : e.target.tagName) + '@' + Math.round(e.clientX) + ',' + Math.round(e.clientY)); }, true); } return true })()`, nil)
}

// tapsSeen is what the page looked like to the taps: where they landed,
// the toggles pressed, the scroll position and the screen's address.
func tapsSeen(ctx context.Context) string {
	var seen string
	pwatest.Eval(ctx, `JSON.stringify({ taps: window.__taps, pressed: [...document.querySelectorAll('[aria-pressed="true"]')].map((e) => e.dataset.testid), scrollY, address: document.querySelector('#screen').dataset.address })`, &seen)
	return seen
}

// openIncidentFor opens ringside's incident panel and picks the athlete.
// The rounds screen re-renders as a round syncs or a dialog closes, and a
// tap can land on a neighbour while the page shifts, as a finger would:
// it taps until the panel is open with the athlete picked (three tries),
// and prints the taps and page state of a try that did not take.
func openIncidentFor(ctx context.Context, athlete string) error {
	logTaps(ctx)
	button := "ringside-incident-athlete-" + athlete
	open := `document.querySelector('[data-testid="ringside-incident-panel"]')`
	for try := 1; try <= 3; try++ {
		if err := pwatest.ClickUntil(ctx, "ringside-incident", open, 20); err != nil {
			return err
		}
		if err := pwatest.ClickUntil(ctx, button, pwatest.Pressed(button), 3); err == nil {
			return nil
		}
		fmt.Printf("incident panel: try %d did not take: %s\n", try, tapsSeen(ctx))
	}
	return fmt.Errorf("the incident panel did not keep %s picked", athlete)
}

// askSparHold picks athlete (who must be on hold), picks sparring and taps
// "Round done" until the hold question opens. Each tap is checked by what
// it should change, since a chip row re-rendering under the finger (the
// standing arriving from the hub) can take a tap.
func askSparHold(ctx context.Context, athlete string) error {
	if err := pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, pwatest.Q("ringside-hold-"+athlete)), 10*time.Second); err != nil {
		return err
	}
	logTaps(ctx)
	chip := "round-athlete-" + athlete
	ask := `document.querySelector('[data-testid="round-hold-ask"]')`
	for try := 1; try <= 3; try++ {
		err := pwatest.ClickUntil(ctx, chip, pwatest.Pressed(chip), 3)
		if err == nil {
			err = pwatest.ClickUntil(ctx, "round-activity-spar", pwatest.Pressed("round-activity-spar"), 3)
		}
		if err == nil {
			// Stop tapping if the chip was let go: the round would log without the question.
			err = pwatest.ClickUntil(ctx, "round-done", ask+` || !`+pwatest.Pressed(chip), 3)
		}
		if err == nil && pwatest.Poll(ctx, ask, 0) == nil {
			return nil
		}
		fmt.Printf("hold question: try %d did not open (%v): %s\n", try, err, tapsSeen(ctx))
	}
	return fmt.Errorf("the hold question did not open for %s", athlete)
}

func attr(t testing.TB, ctx context.Context, testid, name string) string {
	var s string
	require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`(document.querySelector(%q) || { getAttribute: () => '' }).getAttribute(%q) || ''`, pwatest.Q(testid), name), &s))
	return s
}

// TestRingsideSixTapsOneUndoFiveStored: six rounds tapped ringside and one
// undone leave five rounds on the hub; the chip counts them, and the 7-day
// sparring count beside each chip is the hub's own.
func TestRingsideSixTapsOneUndoFiveStored(t *testing.T) {
	h := startRingHub(t)
	ctx := ringBrowser(t, h, "/rounds")
	var day string
	require.NoError(t, pwatest.Eval(ctx, `import('/js/record.js').then((m) => m.localDay())`, &day))
	ines := h.names["Ines Halloran"]
	before := len(h.live("round", ines, day))

	b := h.baselines(t, day)["Ines Halloran"]
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q) && document.querySelector(%q).dataset.rounds !== undefined`, pwatest.Q("ringside-spar-"+ines), pwatest.Q("ringside-spar-"+ines)), 10*time.Second))
	assert.Equal(t, fmt.Sprint(b.SparRounds), attr(t, ctx, "ringside-spar-"+ines, "data-rounds"), "7-day sparring rounds beside the chip are the hub's")
	assert.Equal(t, fmt.Sprint(b.SparCap), attr(t, ctx, "ringside-spar-"+ines, "data-cap"))

	require.NoError(t, pwatest.Click(ctx, "round-athlete-"+ines))
	require.NoError(t, pwatest.Click(ctx, "round-activity-pads"))
	require.NoError(t, pwatest.Click(ctx, "round-intensity-2"))
	for i := 0; i < 6; i++ {
		require.NoError(t, pwatest.SaveAndWait(ctx, "round-done"), "tap %d", i+1)
	}
	require.NoError(t, pwatest.Click(ctx, "round-undo"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "Last round removed"))
	require.NoError(t, pwatest.WaitSynced(ctx))

	got := h.live("round", ines, day)
	require.Len(t, got, before+5, "six taps, one undone")
	var device string
	require.NoError(t, pwatest.Meta(ctx, "deviceId", &device))
	require.NotEmpty(t, device)
	n := 0
	for _, r := range got {
		if r.Device != device {
			continue
		}
		body := e2eBody(t, r)
		if body["activity"] == "pads" {
			n++
			assert.EqualValues(t, 2, body["intensity"])
		}
	}
	assert.Equal(t, 5, n, "five pads rounds from this device")
	require.NoError(t, pwatest.WaitText(ctx, "round-count-"+ines, fmt.Sprint(before+5)))
}

// TestRingsideClockRingsAndOffersTheRound: a 5 s round set in the clock's
// settings runs, rings, reaches the rest, offers to log the round, and the
// rest runs into round 2; the lengths are kept for the next visit.
func TestRingsideClockRingsAndOffersTheRound(t *testing.T) {
	h := startRingHub(t)
	ctx := ringBrowser(t, h, "/rounds")
	var day string
	require.NoError(t, pwatest.Eval(ctx, `import('/js/record.js').then((m) => m.localDay())`, &day))
	tomas := h.names["Tomas Varga"]
	before := len(h.live("round", tomas, day))

	require.NoError(t, pwatest.Click(ctx, "clock-settings"))
	require.NoError(t, pwatest.Type(ctx, "clock-round-s", "5"))
	require.NoError(t, pwatest.Type(ctx, "clock-rest-s", "3"))
	require.NoError(t, pwatest.WaitText(ctx, "clock-time", "0:05"))
	var kept string
	require.NoError(t, pwatest.Eval(ctx, `localStorage.getItem('cb.ringside.clock')`, &kept))
	assert.JSONEq(t, `{"round_s":5,"rest_s":3}`, kept)

	require.NoError(t, pwatest.Click(ctx, "round-athlete-"+tomas))
	require.NoError(t, pwatest.Click(ctx, "round-activity-bag"))
	require.NoError(t, pwatest.Click(ctx, "clock-start"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="clock"]').dataset.phase === 'round' && document.querySelector('[data-testid="clock"]').dataset.round === '1'`, 2*time.Second))
	assert.Equal(t, "start", attr(t, ctx, "clock", "data-sound"), "the bell rings at the round's start")
	assert.Contains(t, []string{"5", "4"}, attr(t, ctx, "clock", "data-left"))

	start := time.Now()
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="clock"]').dataset.phase === 'rest'`, 8*time.Second))
	assert.InDelta(t, 5, time.Since(start).Seconds(), 1.5, "the round lasts its 5 s")
	assert.Equal(t, "end", attr(t, ctx, "clock", "data-sound"), "the bell rings at the round's end")
	require.NoError(t, pwatest.WaitText(ctx, "clock-phase", "Rest"))
	require.NoError(t, pwatest.WaitText(ctx, "clock-log", "Log round 1"))
	require.NoError(t, pwatest.WaitText(ctx, "clock-log", "Tomas Varga"))
	require.NoError(t, pwatest.SaveAndWait(ctx, "clock-log"))
	require.NoError(t, pwatest.Poll(ctx, `!document.querySelector('[data-testid="clock-offer"]')`, 2*time.Second))

	// The rest runs out into round 2 with the bell.
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="clock"]').dataset.phase === 'round' && document.querySelector('[data-testid="clock"]').dataset.round === '2'`, 6*time.Second))
	require.NoError(t, pwatest.Click(ctx, "clock-pause"))
	left := attr(t, ctx, "clock", "data-left")
	time.Sleep(1200 * time.Millisecond)
	assert.Equal(t, left, attr(t, ctx, "clock", "data-left"), "a paused clock stands still")
	require.NoError(t, pwatest.Click(ctx, "clock-reset"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="clock"]').dataset.phase === 'ready'`, 2*time.Second))

	// The sounds themselves, rendered offline: audible, not clipped, and
	// gone before the next one (the bell dies away, the pips are short).
	for _, c := range []struct {
		kind        string
		seconds, at float64 // render length; where the tail is measured
	}{{"start", 3.5, 3.3}, {"end", 3.5, 3.3}, {"warn", 1.0, 0.7}} {
		var snd struct{ Peak, Head, Tail float64 }
		require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`import('/js/ringside/bell.js').then(async (m) => {
			const x = await m.render(%q, %g, 22050);
			const rms = (a, b) => { let s = 0; for (let i = a; i < b; i++) s += x[i] * x[i]; return Math.sqrt(s / (b - a)); };
			let peak = 0; for (const v of x) peak = Math.max(peak, Math.abs(v));
			const at = Math.round(%g * 22050);
			return { Peak: peak, Head: rms(0, 4410), Tail: rms(at, Math.min(x.length, at + 2205)) }; })`, c.kind, c.seconds, c.at), &snd))
		assert.Greater(t, snd.Peak, 0.2, "%s is loud enough", c.kind)
		assert.LessOrEqual(t, snd.Peak, 1.0, "%s does not clip", c.kind)
		assert.Less(t, snd.Tail, snd.Head/100, "%s dies away", c.kind)
	}

	// A 12 s round pips its warning 10 s before the end.
	require.NoError(t, pwatest.Type(ctx, "clock-round-s", "12"))
	require.NoError(t, pwatest.WaitText(ctx, "clock-time", "0:12"))
	require.NoError(t, pwatest.Click(ctx, "clock-start"))
	warnAt := time.Now()
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="clock"]').dataset.sound === 'warn' && document.querySelector('[data-testid="clock"]').dataset.warn === 'true'`, 5*time.Second))
	assert.InDelta(t, 2, time.Since(warnAt).Seconds(), 1, "the warning comes 10 s before the end")
	assert.Equal(t, "round", attr(t, ctx, "clock", "data-phase"))
	require.NoError(t, pwatest.Click(ctx, "clock-reset"))

	require.NoError(t, pwatest.WaitSynced(ctx))
	got := h.live("round", tomas, day)
	require.Len(t, got, before+1, "the offered round was logged once")

	require.NoError(t, pwatest.Reload(ctx))
	require.NoError(t, pwatest.WaitText(ctx, "clock-time", "0:12"), "the clock's lengths are kept on the device")
}

// TestRingsideHoldAndIncident: an athlete on a stand-down shows "No
// sparring — on hold" beside the chip; a sparring round for them asks
// first and still records; the incident button asks, stores the incident
// and shows the stand-down.
func TestRingsideHoldAndIncident(t *testing.T) {
	h := startRingHub(t)
	ctx := ringBrowser(t, h, "/rounds")
	var day string
	require.NoError(t, pwatest.Eval(ctx, `import('/js/record.js').then((m) => m.localDay())`, &day))
	mateo, kofi := h.names["Mateo Lindqvist"], h.names["Kofi Brandt"]
	bl := h.baselines(t, day)
	require.True(t, bl["Mateo Lindqvist"].OnHold)
	require.False(t, bl["Kofi Brandt"].OnHold)

	require.NoError(t, pwatest.WaitText(ctx, "ringside-hold-"+mateo, "No sparring — on hold:"))
	txt, err := pwatest.Text(ctx, "ringside-hold-"+mateo)
	require.NoError(t, err)
	assert.Contains(t, txt, bl["Mateo Lindqvist"].HoldReason, "the hub's reason is shown")
	var kofiHold bool
	require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`!!document.querySelector(%q)`, pwatest.Q("ringside-hold-"+kofi)), &kofiHold))
	assert.False(t, kofiHold)

	// Sparring for Mateo: asked first; cancel writes nothing, confirm writes one.
	before := len(h.live("round", mateo, day))
	require.NoError(t, askSparHold(ctx, mateo))
	require.NoError(t, pwatest.WaitText(ctx, "round-hold-ask", holdText))
	require.NoError(t, pwatest.Click(ctx, "round-hold-cancel"))
	n, err := pwatest.Waiting(ctx)
	require.NoError(t, err)
	assert.Zero(t, n, "cancel writes nothing")
	require.NoError(t, pwatest.Click(ctx, "round-done"))
	require.NoError(t, pwatest.SaveAndWait(ctx, "round-hold-confirm"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	assert.Len(t, h.live("round", mateo, day), before+1, "the coach decides: the round is recorded")

	// The incident button, for Kofi.
	incBefore := len(h.live("incident", kofi, day))
	require.NoError(t, pwatest.Click(ctx, "round-athlete-"+mateo)) // deselect
	require.NoError(t, openIncidentFor(ctx, kofi))
	// The rounds list re-renders as the round syncs: tap until the tap
	// has taken (a tap can land on a neighbour while the page shifts).
	require.NoError(t, pwatest.ClickUntil(ctx, "ringside-incident-type-knockdown", pwatest.Pressed("ringside-incident-type-knockdown"), 10))
	require.NoError(t, pwatest.Click(ctx, "ringside-incident-next"))
	require.NoError(t, pwatest.WaitText(ctx, "ringside-incident-summary", "Kofi Brandt"))
	n, err = pwatest.Waiting(ctx)
	require.NoError(t, err)
	assert.Zero(t, n, "nothing is written before the confirmation")
	require.NoError(t, pwatest.SaveAndWait(ctx, "ringside-incident-confirm"))
	require.NoError(t, pwatest.WaitText(ctx, "ringside-standdown", "Kofi Brandt: "+holdText))
	require.NoError(t, pwatest.WaitSynced(ctx))
	inc := h.live("incident", kofi, day)
	require.Len(t, inc, incBefore+1)
	var found bool
	for _, r := range inc {
		if e2eBody(t, r)["type"] == "knockdown" {
			found = true
		}
	}
	assert.True(t, found, "a knockdown incident is stored")
	require.NoError(t, pwatest.Click(ctx, "ringside-incident-close"))
	require.NoError(t, pwatest.WaitText(ctx, "ringside-hold-"+kofi, "No sparring — on hold:"))
	assert.True(t, h.baselines(t, day)["Kofi Brandt"].OnHold, "the hub now holds Kofi too")
}

// TestRingsideJumpGridShowsBaseline: beside each athlete the hub's CMJ
// baseline with its noise, and today's mean against it in % as typed.
func TestRingsideJumpGridShowsBaseline(t *testing.T) {
	h := startRingHub(t)
	ctx := ringBrowser(t, h, "/jumps")
	var day string
	require.NoError(t, pwatest.Eval(ctx, `import('/js/record.js').then((m) => m.localDay())`, &day))
	kofi := h.names["Kofi Brandt"]
	b := h.baselines(t, day)["Kofi Brandt"]
	require.NotNil(t, b.CMJBaseline)
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q) && document.querySelector(%q).dataset.baseline`, pwatest.Q("jump-baseline-"+kofi), pwatest.Q("jump-baseline-"+kofi)), 10*time.Second))
	assert.Equal(t, fmt.Sprint(*b.CMJBaseline), attr(t, ctx, "jump-baseline-"+kofi, "data-baseline"))
	txt, err := pwatest.Text(ctx, "jump-baseline-"+kofi)
	require.NoError(t, err)
	assert.Contains(t, txt, fmt.Sprintf("%.1f cm", *b.CMJBaseline))
	if b.CMJNoisePct != nil {
		assert.Contains(t, txt, fmt.Sprintf("± %.1f %%", *b.CMJNoisePct))
	}
	require.NoError(t, pwatest.Click(ctx, "jump-mode-height"))
	for i, v := range []string{"30.2", "31.0", "29.6"} {
		require.NoError(t, pwatest.Type(ctx, fmt.Sprintf("jump-%s-%d", kofi, i), v))
	}
	// (mean − baseline) / baseline, mean of the three attempts: the
	// jump_drop definition (PRODUCT.md), sign kept.
	mean := (30.2 + 31.0 + 29.6) / 3
	want := (mean - *b.CMJBaseline) / *b.CMJBaseline * 100
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, pwatest.Q("jump-rel-"+kofi)), 5*time.Second))
	var pct float64
	require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`Number(document.querySelector(%q).dataset.pct)`, pwatest.Q("jump-rel-"+kofi)), &pct))
	assert.InDelta(t, math.Round(want*10)/10, pct, 1e-9)
	rel, err := pwatest.Text(ctx, "jump-rel-"+kofi)
	require.NoError(t, err)
	sign := "+"
	if want < 0 {
		sign = "−"
	}
	assert.Contains(t, rel, fmt.Sprintf("%s%.1f %%", sign, math.Abs(want)))

	// Flight time: each attempt's height is h = g·t²/8 (flight-time method,
	// Bosco et al. 1983; g = 9.81 m/s², as the hub derives heights), and
	// the mean of those heights is set against the baseline.
	ines := h.names["Ines Halloran"]
	bi := h.baselines(t, day)["Ines Halloran"]
	require.NotNil(t, bi.CMJBaseline)
	require.NoError(t, pwatest.Click(ctx, "jump-mode-flight"))
	flights := []float64{500, 520, 490}
	for i, v := range flights {
		require.NoError(t, pwatest.Type(ctx, fmt.Sprintf("jump-%s-%d", ines, i), fmt.Sprint(v)))
	}
	sum := 0.0
	for _, ms := range flights {
		tt := ms / 1000
		sum += 9.81 * tt * tt / 8 * 100
	}
	wantI := (sum/3 - *bi.CMJBaseline) / *bi.CMJBaseline * 100
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, pwatest.Q("jump-rel-"+ines)), 5*time.Second))
	require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`Number(document.querySelector(%q).dataset.pct)`, pwatest.Q("jump-rel-"+ines)), &pct))
	assert.InDelta(t, math.Round(wantI*10)/10, pct, 1e-9)
}

// TestRingsideOfflineSaysWhatItKnows: with the hub gone, ringside keeps
// the copy it fetched this session ("as of"); opened afresh offline it
// says the hold status is unknown, and still warns from the incidents on
// the device.
func TestRingsideOfflineSaysWhatItKnows(t *testing.T) {
	h := startRingHub(t)
	ctx := ringBrowser(t, h, "/rounds")
	require.NoError(t, pwatest.WaitControlled(ctx))
	mateo, kofi := h.names["Mateo Lindqvist"], h.names["Kofi Brandt"]
	require.NoError(t, pwatest.WaitText(ctx, "ringside-hold-"+mateo, "No sparring — on hold: Stand-down"))

	h.stop()
	require.NoError(t, pwatest.Route(ctx, "/jumps"))
	require.NoError(t, pwatest.WaitText(ctx, "jump-baseline-"+kofi, "as of"))
	require.NoError(t, pwatest.Route(ctx, "/rounds"))
	require.NoError(t, pwatest.WaitText(ctx, "ringside-spar-"+kofi, "as of"))
	require.NoError(t, pwatest.WaitText(ctx, "ringside-hold-"+mateo, "Stand-down"))

	require.NoError(t, pwatest.Reload(ctx))
	require.NoError(t, pwatest.WaitText(ctx, "ringside-offline", "hold status unknown offline"))
	require.NoError(t, pwatest.WaitText(ctx, "ringside-spar-"+kofi, "unknown offline"))
	require.NoError(t, pwatest.WaitText(ctx, "ringside-hold-"+mateo, "an open incident on this device"))
	require.NoError(t, pwatest.Route(ctx, "/jumps"))
	require.NoError(t, pwatest.WaitText(ctx, "jump-baseline-"+kofi, "baseline unknown offline"))
}
