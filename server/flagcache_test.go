package server_test

import (
	"fmt"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
)

// TestFlags_RacingPushNeverCachesStale: a flags request that read the
// store just before a push committed answers with what it read, but that
// answer is not kept: the next request sees the pushed reading.
func TestFlags_RacingPushNeverCachesStale(t *testing.T) {
	h, a := seeded(t)
	day := "2026-11-18" // not the hub's today: no background refresh hides the race
	read := make(chan struct{})
	release := make(chan struct{})
	var once sync.Once
	defer server.SetFlagsReadHook(func(athlete, d string) {
		if athlete == a.ID && d == day {
			once.Do(func() { close(read); <-release })
		}
	})()
	done := make(chan map[string]bool)
	go func() {
		got := map[string]bool{}
		for r := range flagRules(t, h, day, a.ID) {
			got[r] = true
		}
		done <- got
	}()
	<-read // the request has read the store
	// USG 1.032 is above 1.030: an alert (PRODUCT.md hydration rule).
	h.push("phone-1", 10, h.rec("checkin", a.ID, day, map[string]any{"usg": 1.032}))
	close(release)
	assert.False(t, (<-done)["hydration"], "the racing request answers with what it read")
	assert.Contains(t, flagRules(t, h, day, a.ID), "hydration", "a stale answer was cached")
}

// TestFlags_ReadErrorsSurface: a store that cannot be read is an error
// for the caller, never "no such athlete" or default thresholds.
func TestFlags_ReadErrorsSurface(t *testing.T) {
	nowFn := func() time.Time { return fixedNow }
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "cornerbook.db"), nowFn)
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Now: nowFn, Location: time.UTC})
	require.NoError(t, err)
	defer srv.Close()
	h := &hub{t: t, store: db, srv: srv, now: fixedNow}
	h.http = httptest.NewServer(srv.Handler())
	defer h.http.Close()
	a := h.athlete("Test Fighter", "kg")
	h.push("phone-1", 1, a)
	db.Close()
	_, err = srv.Flags("2026-11-19", a.ID)
	require.Error(t, err)
	assert.NotContains(t, err.Error(), "no athlete")
	resp, err := http.Get(h.http.URL + "/api/flags?day=2026-11-19&athlete=" + a.ID)
	require.NoError(t, err)
	resp.Body.Close()
	assert.Equal(t, 500, resp.StatusCode)
}

// TestFlags_CacheIsBounded: days outside an athlete's records are answered
// without a cache entry, and the cache never holds more than its bound.
func TestFlags_CacheIsBounded(t *testing.T) {
	h, a := seeded(t) // one check-in on 2026-11-19
	for y := 1; y <= 9999; y += 97 {
		var out struct{ Flags []any }
		require.Equal(t, 200, h.get(fmt.Sprintf("/api/flags?day=%04d-06-15&athlete=%s", y, a.ID), &out))
	}
	assert.Equal(t, 0, h.srv.FlagCacheLen(), "days far from the records are not cached")
	flagRules(t, h, "2026-11-20", a.ID)
	flagRules(t, h, "2027-01-10", a.ID) // 52 days on: the window still holds the check-in
	assert.Equal(t, 2, h.srv.FlagCacheLen())
	// Every day whose window holds the check-in is cached, once.
	for d := 0; d < 120; d++ {
		flagRules(t, h, time.Date(2026, 11, 19, 0, 0, 0, 0, time.UTC).AddDate(0, 0, d).Format("2006-01-02"), a.ID)
	}
	assert.Equal(t, 120, h.srv.FlagCacheLen())
}
