package server_test

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
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
	devsync "cornerbook/sync"
)

// TestCoachPlanTenWeeksWithTravelOnPhoneAndLaptop: on a 360 px phone and
// on the laptop, the coach sets up a 10-week camp, takes the starting
// plan, edits a week's strength emphasis and plans a flight (Lisbon →
// Tokyo in winter: +9 h by the zone data, 9 days to adjust at about a
// zone a day eastward, Janse van Rensburg et al. 2021), and saves. The
// hub's check names the flight in words, the hub keeps the week's
// content with the landing on Tokyo's clock, and the camp at a glance
// shows the journey; on the phone nothing scrolls sideways.
func TestCoachPlanTenWeeksWithTravelOnPhoneAndLaptop(t *testing.T) {
	for _, vp := range []struct {
		name string
		w, h int64
	}{{"phone", 360, 740}, {"laptop", 1280, 800}} {
		t.Run(vp.name, func(t *testing.T) {
			h := startCoachHub(t)
			kofi := h.ids()["Kofi Brandt"]
			ctx := coachBrowser(t, h, "/plan?athlete="+kofi)
			require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(vp.w, vp.h)))
			require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-bout"]')`, 10*time.Second))
			require.NoError(t, coachSet(ctx, "plan-bout", "new"))
			require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-bout-day"]').value === ''`, 5*time.Second))
			d := func(t time.Time) string { return t.Format("2006-01-02") }
			// A camp that starts on a Monday in January: both ends of the
			// flight on winter time.
			start := time.Date(2027, 1, 4, 0, 0, 0, 0, time.UTC)
			bout := start.AddDate(0, 0, 10*7-2)
			require.NoError(t, pwatest.Type(ctx, "plan-name", "Invented title eliminator"))
			require.NoError(t, coachSet(ctx, "plan-camp-start", d(start)))
			require.NoError(t, coachSet(ctx, "plan-bout-day", d(bout)))
			require.NoError(t, pwatest.Click(ctx, "plan-wi-day_before"))
			require.NoError(t, coachSet(ctx, "plan-wi-date", d(bout.AddDate(0, 0, -1))))
			require.NoError(t, coachSet(ctx, "plan-wi-time", "10:00"))
			require.NoError(t, coachSet(ctx, "plan-zone", "Asia/Tokyo"))
			require.NoError(t, coachSet(ctx, "plan-class", "ol2024_m_71"))
			require.NoError(t, pwatest.Type(ctx, "plan-start-mass", "74.0"))
			require.NoError(t, pwatest.Type(ctx, "plan-ref-load", "3400"))
			require.NoError(t, pwatest.Click(ctx, "plan-generate"))
			require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid^="plan-week-"][data-level]').length === 10`, 10*time.Second))

			// The starting plan says why each week is what it is.
			why, err := pwatest.Text(ctx, "plan-week-10-why")
			require.NoError(t, err)
			assert.Contains(t, why, "Taper, fight week")
			// Week 2 (medium–heavy): strength–speed with jumps, and the flight.
			wk2 := start.AddDate(0, 0, 7)
			require.NoError(t, coachSet(ctx, "plan-week-2-strength", "strength_speed"))
			require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-week-2-plyo"]').getAttribute('aria-pressed') === 'true'`, 5*time.Second))
			require.NoError(t, pwatest.Type(ctx, "plan-week-2-conditioning-label", "hill repeats"))
			require.NoError(t, pwatest.Click(ctx, "plan-week-2-travel-add"))
			require.NoError(t, coachSet(ctx, "plan-week-2-from-zone", "Europe/Lisbon"))
			require.NoError(t, coachSet(ctx, "plan-week-2-dep-date", d(wk2)))
			require.NoError(t, coachSet(ctx, "plan-week-2-dep-time", "08:00"))
			require.NoError(t, coachSet(ctx, "plan-week-2-to-zone", "Asia/Tokyo"))
			require.NoError(t, coachSet(ctx, "plan-week-2-arr-date", d(wk2.AddDate(0, 0, 1))))
			require.NoError(t, coachSet(ctx, "plan-week-2-arr-time", "12:00"))
			require.NoError(t, pwatest.Type(ctx, "plan-week-2-note", "Fly out early"))
			require.NoError(t, pwatest.Poll(ctx, `[...document.querySelectorAll('[data-testid="plan-issue"]')].some((e) => e.textContent.includes('shifts the clock +9 h (east); the body needs about 9 days') && e.textContent.includes('Week 2, travel'))`, 10*time.Second))
			if vp.w == 360 {
				var wide struct{ Scroll, Client int }
				require.NoError(t, pwatest.Eval(ctx, `({ Scroll: document.scrollingElement.scrollWidth, Client: document.scrollingElement.clientWidth })`, &wide))
				assert.LessOrEqual(t, wide.Scroll, wide.Client, "the plan scrolls sideways on a phone")
			}
			require.NoError(t, pwatest.Click(ctx, "plan-save"))
			require.NoError(t, pwatest.WaitText(ctx, "saved", "Plan saved on this device"))
			require.NoError(t, pwatest.WaitSynced(ctx))

			var got *devsync.Record
			require.NoError(t, h.db.Kind("bout", func(r devsync.Record) error {
				if r.Athlete == kofi && strings.Contains(string(r.Body), "Invented title eliminator") {
					rr := r
					got = &rr
				}
				return nil
			}))
			require.NotNil(t, got, "the plan reached the hub")
			var b struct {
				Weeks []struct {
					Level        string
					Strength     *struct{ IDs []string }
					Conditioning *struct {
						IDs   []string
						Label string
					}
					SparRounds *int `json:"spar_rounds"`
					HardRounds *int `json:"hard_rounds"`
					Note       string
					Travel     *struct {
						DepartAt string `json:"depart_at"`
						ArriveAt string `json:"arrive_at"`
						FromZone string `json:"from_zone"`
						ToZone   string `json:"to_zone"`
					}
				}
			}
			require.NoError(t, json.Unmarshal(got.Body, &b))
			require.Len(t, b.Weeks, 10)
			w2 := b.Weeks[1]
			assert.Equal(t, []string{"strength_speed", "plyometric"}, w2.Strength.IDs)
			assert.Equal(t, "hill repeats", w2.Conditioning.Label)
			assert.Equal(t, "Fly out early", w2.Note)
			require.NotNil(t, w2.Travel)
			tokyo, _ := time.LoadLocation("Asia/Tokyo")
			lisbon, _ := time.LoadLocation("Europe/Lisbon")
			arr, err := time.Parse(time.RFC3339, w2.Travel.ArriveAt)
			require.NoError(t, err)
			dep, err := time.Parse(time.RFC3339, w2.Travel.DepartAt)
			require.NoError(t, err)
			assert.Equal(t, d(wk2.AddDate(0, 0, 1))+" 12:00", arr.In(tokyo).Format("2006-01-02 15:04"))
			assert.Equal(t, d(wk2)+" 08:00", dep.In(lisbon).Format("2006-01-02 15:04"))
			for i, w := range b.Weeks {
				require.NotNil(t, w.SparRounds, "week %d plans its sparring", i+1)
				require.NotNil(t, w.HardRounds, "week %d plans its hard rounds", i+1)
			}
			assert.Equal(t, "taper", b.Weeks[9].Level)
			assert.Equal(t, "taper", b.Weeks[8].Level)

			// The camp at a glance shows the journey with its clock change.
			require.NoError(t, pwatest.Poll(ctx, `(document.querySelector('[data-testid="plan-done-2-travel"]') || {}).textContent?.includes('Europe/Lisbon → Asia/Tokyo') && document.querySelector('[data-testid="plan-done-2-travel"]').textContent.includes('clock +9 h')`, 10*time.Second))
			png, err := chromedp.Run(ctx, chromedp.FullScreenshot(100)) // 100: PNG (below it, JPEG)
			require.NoError(t, err)
			require.NoError(t, os.WriteFile(filepath.Join(pwatest.ShotDir(t), fmt.Sprintf("coach-plan-travel-%dx%d.png", vp.w, vp.h)), png, 0o644))
		})
	}
}

// TestCoachPlanDoneFollowsASyncedSession: the demo's Tomas Varga has a
// plan with content and a travel week. While the plan is open, a session
// logged on another device reaches the hub; the current week's done
// figures take it (60 min at RPE 5 = 300 AU, Foster et al. 2001) without
// a reload. The camp prints on one A4 or Letter page.
func TestCoachPlanDoneFollowsASyncedSession(t *testing.T) {
	h := startCoachHub(t)
	tomas := h.ids()["Tomas Varga"]
	ctx := coachBrowser(t, h, "/plan?athlete="+tomas)
	// The fighter's bout opens by itself, with the camp at a glance on top.
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-done"] [aria-current="date"]')`, 15*time.Second))

	require.NoError(t, pwatest.Poll(ctx, `(document.querySelector('[data-testid="plan-done-8-travel"]') || {}).textContent?.includes('Europe/London → America/New_York')`, 5*time.Second))
	var before struct {
		Week          string
		Load          float64
		Sessions      int
		WeeksWithPlan int
	}
	require.NoError(t, pwatest.Eval(ctx, `(() => { const r = document.querySelector('[data-testid="plan-done"] [aria-current="date"]');
		return { Week: r.dataset.testid, Load: Number(r.dataset.load), Sessions: Number(r.dataset.sessions),
			WeeksWithPlan: [...document.querySelectorAll('[data-testid^="plan-done-"][data-load]')].filter((e) => e.textContent.includes('Jumps and throws')).length } })()`, &before))
	assert.Equal(t, 10, before.WeeksWithPlan, "every week shows its strength emphasis")

	today := time.Now().UTC()
	u, _ := uuid.NewV7()
	body, _ := json.Marshal(map[string]any{"type": "strength", "focus": "speed", "minutes": 60, "rpe": 5})
	h.coachPush("ringside-phone-plan", devsync.Record{ID: u.String(), Kind: "session", Athlete: tomas, Day: today.Format("2006-01-02"),
		At: today.Format(time.RFC3339), Device: "ringside-phone-plan", Stamp: devsync.HLC{L: today.UnixMilli()}, Body: body})
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`(() => { const r = document.querySelector('[data-testid=%q]');
		return Number(r.dataset.sessions) === %d && Math.abs(Number(r.dataset.load) - %f) < 0.01 })()`, before.Week, before.Sessions+1, before.Load+300), 20*time.Second))

	// The fighter's charts carry the plan against what was done, week by week.
	require.NoError(t, pwatest.Route(ctx, "/athlete?id="+tomas))
	require.NoError(t, pwatest.Poll(ctx, `(() => { const e = document.querySelector('[data-testid="chart-plan"]'); return !!e && Number(e.dataset.points) > 0 && Number(e.dataset.series) === 4 })()`, 15*time.Second))
	sum, err := pwatest.Text(ctx, "chart-plan-summary")
	require.NoError(t, err)
	assert.Contains(t, sum, "(this week)")
	assert.Contains(t, sum, "AU done of")
	require.NoError(t, pwatest.Route(ctx, "/plan?athlete="+tomas))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="plan-done"] [aria-current="date"]')`, 15*time.Second))

	// One printed page: the camp at a glance, the path and the checks.
	_, err = chromedp.Call(ctx, emulation.SetEmulatedMedia, emulation.SetEmulatedMediaParams{Media: "print"})
	require.NoError(t, err)
	var editHidden bool
	require.NoError(t, pwatest.Eval(ctx, `getComputedStyle(document.querySelector('.plan-edit')).display === 'none'`, &editHidden))
	assert.True(t, editHidden, "the printed page holds the plan, not its form")
	for _, paper := range []struct {
		name string
		w, h float64 // inches
	}{{"A4", 8.27, 11.69}, {"Letter", 8.5, 11}} {
		res, err := chromedp.Call(ctx, page.PrintToPDF, page.PrintToPDFParams{PaperWidth: paper.w, PaperHeight: paper.h})
		require.NoError(t, err)
		assert.Equal(t, 1, pdfPages(res.Data), "a 10-week camp fits one %s page", paper.name)
	}
	require.NoError(t, chromedp.Do(ctx, chromedp.EmulateViewport(718, 1000)))
	png, err := chromedp.Run(ctx, chromedp.FullScreenshot(100))
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(filepath.Join(pwatest.ShotDir(t), "coach-plan-print-A4.png"), png, 0o644))
}
