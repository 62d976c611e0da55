package server_test

import (
	"bytes"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"runtime/pprof"
	"strings"
	"testing"
	"time"

	"github.com/gorilla/websocket"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	"cornerbook/server/flags"
	devsync "cornerbook/sync"
)

func flagRules(t *testing.T, h *hub, day, athlete string) map[string]flags.Flag {
	var out struct{ Flags []flags.Flag }
	require.Equal(t, 200, h.get("/api/flags?day="+day+"&athlete="+athlete, &out))
	m := map[string]flags.Flag{}
	for _, f := range out.Flags {
		if f.Status == flags.StatusFlag {
			m[f.Rule] = f
		}
	}
	return m
}

// TestFlags_FollowPushes: flags follow what devices push — a new reading
// raises a flag, an edit changes its numbers, a delete removes it — with
// the hub's cached records patched rather than re-read.
func TestFlags_FollowPushes(t *testing.T) {
	h, a := seeded(t)
	day := "2026-11-20"
	assert.NotContains(t, flagRules(t, h, day, a.ID), "hydration")

	// USG 1.032 is above 1.030: an alert (PRODUCT.md hydration rule;
	// Hew-Butler et al. 2018 on urine markers).
	c := h.rec("checkin", a.ID, day, map[string]any{"usg": 1.032})
	h.push("phone-1", 10, c)
	f := flagRules(t, h, day, a.ID)["hydration"]
	assert.Equal(t, "alert", f.Level)
	assert.Contains(t, f.Inputs, c.ID)

	// Corrected to 1.022 (≥ 1.020): watch.
	c.Body = json.RawMessage(`{"usg":1.022}`)
	c.Stamp.L += 1000
	h.push("phone-1", 11, c)
	assert.Equal(t, "watch", flagRules(t, h, day, a.ID)["hydration"].Level)

	// Deleted: no hydration flag.
	c.Deleted = true
	c.Stamp.L += 1000
	h.push("phone-1", 12, c)
	assert.NotContains(t, flagRules(t, h, day, a.ID), "hydration")

	// A fresh hub over the same store agrees (nothing lives only in the cache).
	h.srv.DropFlagCache()
	assert.NotContains(t, flagRules(t, h, day, a.ID), "hydration")
}

// TestFlags_PokeWhenChanged: every winning push pokes with the new
// sequence; the flags counter moves only when the day's flags changed.
func TestFlags_PokeWhenChanged(t *testing.T) {
	h, a := seeded(t)
	day := "2026-11-20"
	flagRules(t, h, day, a.ID) // cache today's flags
	conn, _, err := websocket.DefaultDialer.Dial("ws"+strings.TrimPrefix(h.http.URL, "http")+"/api/ws", nil)
	require.NoError(t, err)
	defer conn.Close()
	type msg struct {
		T     string
		Seq   uint64
		Flags uint64
	}
	var hello msg
	require.NoError(t, conn.ReadJSON(&hello))
	require.Equal(t, "hello", hello.T)
	msgs := make(chan msg, 64)
	go func() {
		for {
			var m msg
			if conn.ReadJSON(&m) != nil {
				close(msgs)
				return
			}
			msgs <- m
		}
	}()
	// waitSeq reads pokes until one carries at least seq, then lets the
	// flag recomputation settle and returns the latest counters.
	waitSeq := func(seq uint64) msg {
		var last msg
		deadline := time.After(5 * time.Second)
		for {
			select {
			case m, ok := <-msgs:
				if !ok {
					t.Fatal("websocket closed")
				}
				last = m
			case <-time.After(300 * time.Millisecond):
				if last.Seq >= seq {
					return last
				}
			case <-deadline:
				t.Fatalf("no poke reached seq %d (last %+v)", seq, last)
			}
		}
	}
	// A note changes no flag: the sequence moves, the flags counter does not.
	resp := h.push("phone-1", 20, h.rec("note", a.ID, day, map[string]any{"text": "felt sharp"}))
	m := waitSeq(resp.MaxSeq)
	assert.Equal(t, hello.Flags, m.Flags, "a note does not change the day's flags")
	// A concentrated urine reading raises a flag: the counter moves.
	resp = h.push("phone-1", 21, h.rec("checkin", a.ID, day, map[string]any{"usg": 1.034}))
	m = waitSeq(resp.MaxSeq)
	for i := 0; i < 20 && m.Flags == hello.Flags; i++ {
		m = waitSeq(resp.MaxSeq)
	}
	assert.Greater(t, m.Flags, hello.Flags, "a new hydration flag pokes dashboards")
}

// TestFlags_TodayFollowsTheClock: today's flags depend on the time as well
// as on the records: a check-in missing at 09:00 is not yet a flag; at
// 10:30, past the default 10:00 hour, it is (PRODUCT.md missing_checkin),
// although no record arrived in between.
func TestFlags_TodayFollowsTheClock(t *testing.T) {
	h, a := seeded(t) // hub clock 2026-11-20 09:00 UTC; the last check-in was on 11-19
	day := "2026-11-20"
	assert.NotContains(t, flagRules(t, h, day, a.ID), "missing_checkin")
	h.now = h.now.Add(90 * time.Minute)
	f, ok := flagRules(t, h, day, a.ID)["missing_checkin"]
	require.True(t, ok, "missing_checkin raised once the hour has passed")
	assert.Equal(t, "info", f.Level)
}

// TestFlags_MissingCheckinFromTheFirstRecordLongAgo: missing_checkin runs
// from the athlete's first record (settled reading), even when that record
// is older than the window of records the rules read; a note does not
// count as a first record.
func TestFlags_MissingCheckinFromTheFirstRecordLongAgo(t *testing.T) {
	h := newHub(t)
	a := h.athlete("Long Absent", "kg")
	b := h.athlete("Only Notes", "kg")
	c := h.rec("checkin", a.ID, "2026-05-02", map[string]any{"mass_kg": 70.2})
	n := h.rec("note", b.ID, "2026-05-02", map[string]any{"text": "joined"})
	resp := h.push("phone-1", 1, a, b, c, n)
	require.Equal(t, 4, resp.Applied, "rejected: %+v", resp.Rejected)
	day := "2026-11-19" // 201 days later, the hour long past (hub clock 2026-11-20)
	f, ok := flagRules(t, h, day, a.ID)["missing_checkin"]
	require.True(t, ok, "no missing_checkin 201 days after the first record")
	assert.Equal(t, "No morning check-in", f.Title)
	assert.NotContains(t, flagRules(t, h, day, b.ID), "missing_checkin", "a note is not a first record")
	assert.NotContains(t, flagRules(t, h, "2026-05-01", a.ID), "missing_checkin", "nothing before the first record")
}

// TestFlags_ArchivedAthleteKeepsARunningStandDown: archiving takes an
// athlete off the day board, but a stand-down in force stays on it with
// the athlete's name (restrictions outrank tidiness; PRODUCT.md
// "Restrictions come first"); nothing else of theirs is shown.
func TestFlags_ArchivedAthleteKeepsARunningStandDown(t *testing.T) {
	h := newHub(t)
	a := h.athlete("Rena Osei", "kg")
	b := h.athlete("Paulo Brisk", "kg")
	day := "2026-11-19"
	knock := h.rec("incident", a.ID, "2026-11-18", map[string]any{"type": "head_knock"})
	wet := h.rec("checkin", a.ID, day, map[string]any{"usg": 1.032})
	other := h.rec("checkin", b.ID, day, map[string]any{"usg": 1.032})
	resp := h.push("phone-1", 1, a, b, knock, wet, other)
	require.Equal(t, 5, resp.Applied, "rejected: %+v", resp.Rejected)

	board := func() (map[string][]string, map[string]string) {
		var out struct {
			Flags    []flags.Flag
			Athletes []struct{ ID, Name string }
		}
		require.Equal(t, 200, h.get("/api/flags?day="+day, &out))
		rules := map[string][]string{}
		for _, f := range out.Flags {
			if f.Status == flags.StatusFlag {
				rules[f.Athlete] = append(rules[f.Athlete], f.Rule)
			}
		}
		names := map[string]string{}
		for _, n := range out.Athletes {
			names[n.ID] = n.Name
		}
		return rules, names
	}
	rules, _ := board()
	require.Contains(t, rules[a.ID], flags.RuleSparOnHold)
	require.Contains(t, rules[a.ID], "hydration")

	// Archive both: the one under a stand-down keeps only the stand-down.
	for i, r := range []devsync.Record{a, b} {
		r.Body = json.RawMessage(`{"name":"` + map[int]string{0: "Rena Osei", 1: "Paulo Brisk"}[i] + `","units":"kg","active":false}`)
		r.Stamp.L += 1000
		h.push("phone-1", uint64(10+i), r)
	}
	rules, names := board()
	assert.Equal(t, []string{flags.RuleSparOnHold}, rules[a.ID], "only the running stand-down of an archived athlete")
	assert.Equal(t, "Rena Osei", names[a.ID], "the stand-down is named")
	assert.NotContains(t, rules, b.ID, "an archived athlete without a stand-down is off the board")
	assert.NotContains(t, names, b.ID)
}

// TestClose_WaitsForTheFlagsBackgroundWork: a push starts a recomputation
// of the athlete's flags off the request path, and a ticker refreshes
// today's; when Close returns, neither runs any more, so the store closed
// next is never read after its close.
func TestClose_WaitsForTheFlagsBackgroundWork(t *testing.T) {
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "cornerbook.db"), func() time.Time { return fixedNow })
	require.NoError(t, err)
	defer db.Close()
	srv, err := server.New(server.Config{Store: db, Now: func() time.Time { return fixedNow }, Location: time.UTC})
	require.NoError(t, err)
	ts := httptest.NewServer(srv.Handler())
	h := &hub{t: t, store: db, srv: srv, http: ts, now: fixedNow}
	a := h.athlete("Ana Pereira", "kg")
	day := fixedNow.Format("2006-01-02")
	h.push("tablet", 1, a, h.rec("checkin", a.ID, fixedNow.AddDate(0, 0, -1).Format("2006-01-02"), map[string]any{"mass_kg": 64.4}))
	// Today's flags cached, so the next push has something to recompute.
	var got map[string]any
	require.Equal(t, http.StatusOK, h.get("/api/flags?day="+day, &got))
	h.push("tablet", 3, h.rec("checkin", a.ID, day, map[string]any{"mass_kg": 64.2}))
	var pre bytes.Buffer
	pprof.Lookup("goroutine").WriteTo(&pre, 1)
	t.Log(strings.Count(pre.String(), "flagService"), pre.String())
	ts.Close()
	require.NoError(t, srv.Close())
	var stacks bytes.Buffer
	require.NoError(t, pprof.Lookup("goroutine").WriteTo(&stacks, 2))
	assert.NotContains(t, stacks.String(), "cornerbook/server.(*flagService)", "the flags' background work has ended when Close returns")
}
