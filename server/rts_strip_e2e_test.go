package server_test

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"net"
	"path/filepath"
	"sort"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server"
	"cornerbook/server/auth"
	"cornerbook/server/demo"
	devsync "cornerbook/sync"
)

// startDemoPairingHub is the real hub with device pairing on the demo camp
// built up to now (so "today" on every screen is a day of the demo), on
// 127.0.0.1. The laptop's browser (loopback) is the coach; a phone reaches
// the hub by a LAN name and must join with a code.
func startDemoPairingHub(t testing.TB) (*coachHub, *auth.Store) {
	t.Helper()
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "hub.db"), nil)
	require.NoError(t, err)
	n, err := demo.SeedIfEmpty(db, time.Now().UTC())
	require.NoError(t, err)
	require.Greater(t, n, 1000)
	accounts, err := auth.Open(db.Bolt(), auth.Options{BcryptCost: 4})
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Auth: accounts, Location: time.UTC})
	require.NoError(t, err)
	require.NoError(t, srv.Open("127.0.0.1:0"))
	h := &e2eHub{t: t, db: db, srv: srv, addr: srv.Addr()}
	t.Cleanup(h.stop)
	return &coachHub{h}, accounts
}

// athletePhone joins the hub as the athlete's own phone (a LAN name, a
// join code, a phone-sized viewport) and waits for its first sync.
func athletePhone(t testing.TB, h *coachHub, accounts *auth.Store, athlete, name string) context.Context {
	t.Helper()
	join, err := accounts.NewJoin(auth.RoleAthlete, athlete, "coach", time.Now())
	require.NoError(t, err)
	_, port, _ := net.SplitHostPort(h.srv.Addr())
	log := &e2eLogBuf{}
	b := pwatest.Start(t, pwatest.Options{Log: log, Flags: map[string]any{"host-resolver-rules": "MAP camp.test 127.0.0.1"}})
	t.Cleanup(func() {
		if t.Failed() {
			t.Logf("%s's phone console:\n%s", name, log.String())
		}
	})
	ctx, cancel := context.WithTimeout(b.Ctx(), 120*time.Second)
	t.Cleanup(cancel)
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(360, 740)))
	base := "http://camp.test:" + port
	require.NoError(t, pwatest.Open(ctx, base+"/join?code="+auth.FormatCode(join.Code)))
	require.NoError(t, pwatest.Type(ctx, "join-name", name+"'s phone"))
	require.NoError(t, pwatest.Click(ctx, "join-submit"))
	require.NoError(t, pwatest.WaitText(ctx, "join-done", "joined"))
	require.NoError(t, pwatest.Click(ctx, "join-continue"))
	require.NoError(t, pwatest.WaitSynced(ctx))
	return ctx
}

// rtsExpect is what every stand-down strip must say of Mateo's return to
// sport, worked out here from his records, independently of the hub: the
// last step logged and its time, the next step no earlier than 24 h after
// it (Patricios et al. 2023: each step at least 24 h), and the early
// steps' heart-rate caps at 55 % and 70 % of 220 − age (Patricios et al.
// 2023, REFERENCES §14.6), read rounded down.
func rtsExpect(t *testing.T, h *coachHub, mateo string, today time.Time) []string {
	t.Helper()
	type step struct {
		n  int
		at time.Time
	}
	var steps []step
	require.NoError(t, h.db.Range(mateo, "rts_step", "", "", func(r devsync.Record) error {
		var b struct{ Step int }
		require.NoError(t, json.Unmarshal(r.Body, &b))
		at, err := time.Parse(time.RFC3339, r.At)
		require.NoError(t, err)
		steps = append(steps, step{b.Step, at})
		return nil
	}))
	require.NotEmpty(t, steps, "the demo's Mateo is on a return-to-sport ladder")
	sort.Slice(steps, func(i, j int) bool { return steps[i].at.Before(steps[j].at) })
	last := steps[len(steps)-1]
	names := map[int]string{3: "Individual sport-specific exercise", 4: "Non-contact training drills at high intensity"}
	require.Equal(t, 3, last.n, "the demo's ladder stands at step 3")
	next := last.at.Add(24 * time.Hour)
	var birth struct {
		BirthYear int `json:"birth_year"`
	}
	ath, err := h.db.Get(mateo)
	require.NoError(t, err)
	require.NoError(t, json.Unmarshal(ath.Body, &birth))
	age := today.Year() - birth.BirthYear
	hrMax := float64(220 - age) // Patricios et al. 2023
	stamp := func(t time.Time) string { return t.Format("Mon 2 Jan 2006") + " at " + t.Format("15:04") }
	return []string{
		fmt.Sprintf("Return to sport: step 3 of 6 (%s) done %s", names[3], stamp(last.at)),
		fmt.Sprintf("next: step 4 (%s), not before %s", names[4], stamp(next)),
		fmt.Sprintf("heart rate up to %.0f bpm (light), %.0f bpm (moderate), from 220 − age %d", math.Floor(hrMax*0.55), math.Floor(hrMax*0.70), age),
	}
}

// TestStandDownShowsItsReturnToSport: wherever Mateo's stand-down is shown
// — the coach's day board, the wall sheet, ringside and Mateo's own phone —
// its strip carries his return to sport: the last step done and when, the
// next step and the earliest time it may be taken, the early steps'
// heart-rate caps from his age, and "until cleared in writing by a
// doctor"; no id among the words.
func TestStandDownShowsItsReturnToSport(t *testing.T) {
	h, accounts := startDemoPairingHub(t)
	mateo := h.ids()["Mateo Lindqvist"]
	now := time.Now().UTC()
	today := now.Format("2006-01-02")
	want := rtsExpect(t, h, mateo, now)
	check := func(where, testid string, ctx context.Context) {
		t.Helper()
		strip, err := restrictionText(ctx, testid)
		require.NoError(t, err, where)
		txt := strip[mateo]
		require.NotEmpty(t, txt, "%s: Mateo's stand-down is shown", where)
		for _, w := range want {
			assert.Contains(t, txt, w, where)
		}
		assert.Contains(t, txt, "Until cleared in writing by a doctor", where)
		var hits []string
		require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`(%s)(document.querySelector(%q).innerText)`, idLike, pwatest.Q(testid)), &hits))
		assert.Empty(t, hits, "%s: ids among the words", where)
		// The return to sport is part of the strip, above every flag and fighter.
		var inside bool
		require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`!!document.querySelector('%s [data-testid="restriction"][data-athlete=%q] [data-testid="restriction-rts"]')`, pwatest.Q(testid), mateo), &inside))
		assert.True(t, inside, "%s: the return to sport sits in the stand-down's strip", where)
	}

	ctx := coachBrowser(t, h, "/review?day="+today)
	// The day board, on a laptop and on a phone.
	for _, w := range []int64{1280, 360} {
		require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(w, 800)))
		require.NoError(t, pwatest.Route(ctx, "/review?day="+today))
		require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="screen-review"][data-ready="true"]') && document.querySelector('[data-testid="review-restrictions"] [data-testid="restriction-rts"]')`, 20*time.Second))
		check(fmt.Sprintf("day board at %d px", w), "review-restrictions", ctx)
	}
	// The wall sheet.
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(1280, 800)))
	require.NoError(t, pwatest.Route(ctx, "/sheet?day="+today))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="sheet-restrictions"] [data-testid="restriction-rts"]') && document.querySelector('[data-testid^="sheet-athlete-"]')`, 20*time.Second))
	check("wall sheet", "sheet-restrictions", ctx)
	// Ringside, on a phone.
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(360, 740)))
	require.NoError(t, pwatest.Route(ctx, "/rounds"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="ringside-restrictions"] [data-testid="restriction-rts"]')`, 20*time.Second))
	check("ringside", "ringside-restrictions", ctx)

	// Mateo's own phone: the strip first on its home screen.
	phone := athletePhone(t, h, accounts, mateo, "Mateo")
	require.NoError(t, pwatest.Route(phone, "/"))
	require.NoError(t, pwatest.Poll(phone, `document.querySelector('[data-testid="screen-home"][data-ready="true"]') && document.querySelector('[data-testid="home-restrictions"] [data-testid="restriction-rts"]')`, 20*time.Second))
	check("Mateo's phone", "home-restrictions", phone)
	var first bool
	require.NoError(t, pwatest.Eval(phone, `(() => { const b = document.querySelector('[data-testid="home-restrictions"]').getBoundingClientRect().bottom;
		return [...document.querySelectorAll('[data-testid="athlete-option"], .tile')].every((e) => e.getBoundingClientRect().top >= b) })()`, &first))
	assert.True(t, first, "the stand-down comes before everything on the athlete's phone")
	var wide bool
	require.NoError(t, pwatest.Eval(phone, `document.documentElement.scrollWidth > window.innerWidth + 1`, &wide))
	assert.False(t, wide, "the athlete's home scrolls sideways")
	shot(t, phone, filepath.Join(pwatest.ShotDir(t), "home-athlete-standdown.png"))
	var body string
	require.NoError(t, pwatest.Eval(phone, `document.querySelector('#screen').innerText`, &body))
	assert.False(t, strings.Contains(body, "Sami"), "another fighter's name on Mateo's phone")

	// The hub out of reach: the phone still shows the stand-down it was
	// last told of, and says it is the last copy.
	h.srv.SetDown(true)
	require.NoError(t, pwatest.Route(phone, "/today"))
	require.NoError(t, pwatest.Poll(phone, `document.querySelector('[data-testid="screen-today"]')`, 10*time.Second))
	require.NoError(t, pwatest.Route(phone, "/"))
	require.NoError(t, pwatest.Poll(phone, `document.querySelector('[data-testid="home-standdowns-copy"]') && document.querySelector('[data-testid="home-restrictions"] [data-testid="restriction-rts"]')`, 20*time.Second))
	check("Mateo's phone with the hub out of reach", "home-restrictions", phone)
	copyNote, _ := pwatest.Text(phone, "home-standdowns-copy")
	assert.Contains(t, copyNote, "the hub cannot be reached now")
}

// TestAthletePhoneSeesOwnFightWeek: on Sami's own phone (360 × 740) the
// fight-week view is Sami's — day by day to the bout, the check weights,
// the hours to the bout, the cautions — with no choice of fighter and no
// weigh-in form (a coach's or staff's entry); asking it for another
// fighter still shows Sami's own, and nothing of the other fighter's.
func TestAthletePhoneSeesOwnFightWeek(t *testing.T) {
	h, accounts := startDemoPairingHub(t)
	ids := h.ids()
	sami, mateo := ids["Sami Arkwright"], ids["Mateo Lindqvist"]
	phone := athletePhone(t, h, accounts, sami, "Sami")
	for _, path := range []string{"/fightweek", "/fightweek?athlete=" + mateo} {
		require.NoError(t, pwatest.Route(phone, path))
		require.NoError(t, pwatest.Poll(phone, `document.querySelector('[data-testid="screen-fightweek"][data-ready="true"]') && document.querySelectorAll('[data-testid="fw-day"]').length >= 8`, 20*time.Second), path)
		var screen string
		require.NoError(t, pwatest.Eval(phone, `document.querySelector('#screen').innerText`, &screen))
		assert.Contains(t, screen, "Fight week — Sami Arkwright", path)
		assert.NotContains(t, screen, "Mateo", path)
		assert.NotContains(t, screen, "Stand-down", "%s: Sami has no stand-down; Mateo's is not shown", path)
		for _, id := range []string{sami, mateo, "check_weights", "over_limit"} {
			assert.NotContains(t, screen, id, "%s: ids on screen", path)
		}
		var parts map[string]bool
		require.NoError(t, pwatest.Eval(phone, `({ picker: !!document.querySelector('[data-testid="fw-athlete"]'), form: !!document.querySelector('[data-testid="fw-weighin-form"]'),
			checks: document.querySelectorAll('[data-testid="fw-check"]').length > 0, hours: !!document.querySelector('[data-testid="fw-hours"]'),
			cautions: !!document.querySelector('[data-testid="fw-cautions"]'), error: !!document.querySelector('[data-testid="fw-error"]'),
			plan: !!document.querySelector('[data-testid="fw-to-plan"]'),
			wide: document.documentElement.scrollWidth > window.innerWidth + 1 })`, &parts))
		assert.Equal(t, map[string]bool{"picker": false, "form": false, "checks": true, "hours": true, "cautions": true, "error": false, "plan": false, "wide": false}, parts, path)
		// The table's headings are whole words at 360 px: no heading is
		// taller than one line.
		var split []string
		require.NoError(t, pwatest.Eval(phone, `[...document.querySelectorAll('[data-testid="fw-days"] thead th')].filter((e) => e.getClientRects().length > 1 || e.querySelector('*') || (() => { const r = document.createRange(); r.selectNodeContents(e); return r.getClientRects().length > 1 })()).map((e) => e.innerText)`, &split))
		assert.Empty(t, split, "%s: headings broken over lines", path)
		rules, _ := pwatest.Text(phone, "fw-rules")
		assert.Contains(t, rules, "30 days out ≤ 10 % over the limit", path)
	}
	shot(t, phone, filepath.Join(pwatest.ShotDir(t), "fightweek-athlete-phone.png"))
}
