package server_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/http"
	"strings"
	"testing"
	"time"

	"github.com/google/uuid"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	devsync "cornerbook/sync"
)

// TestLongTextFitsAPhone: an athlete named with 80 characters and no
// space, and a 2,000-character note holding a 400-character unbroken
// word, wrap on every screen at a phone's 360 px: no screen scrolls
// sideways, and the screen's buttons stay within it.
func TestLongTextFitsAPhone(t *testing.T) {
	h := startRingHub(t)
	id := h.names["Mateo Lindqvist"]
	long := strings.Repeat("Lindqvistberg", 7)[:80]
	h.pushAthletesAs(map[string]string{long: "kg"}, map[string]string{long: id})
	day := demoToday.Format("2006-01-02")
	note := strings.Repeat("Felt heavy in the second round, ", 40) + strings.Repeat("x", 400) + strings.Repeat(" and better after", 30)
	note = string([]rune(note)[:2000])
	u, _ := uuid.NewV7()
	now := time.Now()
	body, _ := json.Marshal(map[string]any{"text": note, "by": long})
	b, _ := json.Marshal(devsync.PushRequest{Device: "coach-laptop", Mutations: []devsync.Mutation{{N: 100, Op: devsync.OpUpsert,
		Record: devsync.Record{ID: u.String(), Kind: "note", Athlete: id, Day: day, At: now.Format(time.RFC3339), Device: "coach-laptop",
			Stamp: devsync.HLC{L: now.UnixMilli()}, Body: body}}}})
	res, err := http.Post(h.url("/api/push"), "application/json", bytes.NewReader(b))
	require.NoError(t, err)
	var pr devsync.PushResponse
	require.NoError(t, json.NewDecoder(res.Body).Decode(&pr))
	res.Body.Close()
	require.Equal(t, 1, pr.Applied, "%+v", pr.Rejected)

	ctx := ringBrowser(t, h, "/")
	shown := fmt.Sprintf("document.body.innerText.includes(%q)", long[:40])
	for _, s := range []struct{ path, ready string }{
		{"/", shown},
		{"/today?day=" + day + "&athlete=" + id, `document.body.innerText.includes("xxxxxxxxxxxxxxxxxxxx")`},
		{"/jumps", shown},
		{"/rounds", shown},
		{"/checkin", `!!document.querySelector('[data-testid="screen-checkin"]')`},
		{"/review?day=" + day, shown},
		{"/sheet?day=" + day, shown},
		{"/session", `document.body.innerText.length > 80`},
		{"/plan", `document.body.innerText.length > 80`},
	} {
		require.NoError(t, pwatest.Route(ctx, s.path))
		require.NoError(t, pwatest.Poll(ctx, s.ready, 15*time.Second), s.path)
		time.Sleep(150 * time.Millisecond) // layout settles
		var wide struct {
			Scroll, Client int
			Off            []string
		}
		require.NoError(t, pwatest.Eval(ctx, `({ Scroll: document.scrollingElement.scrollWidth, Client: document.scrollingElement.clientWidth,
			Off: [...document.querySelectorAll('button')].filter((e) => { const r = e.getBoundingClientRect(); return r.width > 0 && (r.right > innerWidth + 1 || r.left < -1) })
				.map((e) => (e.dataset.testid || e.textContent.slice(0, 20))) })`, &wide))
		assert.LessOrEqual(t, wide.Scroll, wide.Client, "%s scrolls sideways at 360 px", s.path)
		assert.Empty(t, wide.Off, "%s: buttons off-screen", s.path)
	}
}
