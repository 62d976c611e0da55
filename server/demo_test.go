package server_test

import (
	"encoding/json"
	"flag"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	"cornerbook/server/demo"
	"cornerbook/server/flags"
)

var update = flag.Bool("update", false, "rewrite golden files")

// demoToday is the fixed day the golden demo camp ends on.
var demoToday = time.Date(2026, 12, 1, 10, 30, 0, 0, time.UTC)

func demoHub(t *testing.T) *server.Server {
	t.Helper()
	now := func() time.Time { return demoToday }
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "demo.db"), now)
	require.NoError(t, err)
	t.Cleanup(func() { db.Close() })
	n, err := demo.SeedIfEmpty(db, demoToday)
	require.NoError(t, err)
	require.Greater(t, n, 1000)
	srv, err := server.New(server.Config{Store: db, Now: now, Location: time.UTC})
	require.NoError(t, err)
	// Closed before the store (cleanups run last first): its background
	// work ends with the test instead of outliving it.
	t.Cleanup(func() { srv.Close() })
	return srv
}

// TestDemoCamp_Golden: the flags of every demo day are stable, and every
// rule of the product has something to show somewhere in the demo.
func TestDemoCamp_Golden(t *testing.T) {
	srv := demoHub(t)
	type dayFlags struct {
		Day   string       `json:"day"`
		Flags []flags.Flag `json:"flags"`
	}
	var all []dayFlags
	seen := map[string]bool{}
	for i := demo.HistoryDays - 1; i >= 0; i-- {
		day := demoToday.AddDate(0, 0, -i).Format("2006-01-02")
		fl, err := srv.Flags(day, "")
		require.NoError(t, err)
		for _, f := range fl {
			if f.Status == flags.StatusFlag {
				seen[f.Rule] = true
			}
		}
		all = append(all, dayFlags{day, fl})
	}
	for _, rule := range flags.Rules {
		assert.True(t, seen[rule], "the demo camp never raises %s", rule)
	}
	got, err := json.MarshalIndent(all, "", " ")
	require.NoError(t, err)
	path := filepath.Join("..", "testdata", "golden", "demo-flags.json")
	if *update {
		require.NoError(t, os.WriteFile(path, append(got, '\n'), 0o644))
	}
	want, err := os.ReadFile(path)
	require.NoError(t, err, "run go test ./server -run TestDemoCamp_Golden -update to create it")
	assert.JSONEq(t, string(want), string(got), "demo flags changed; if intended, rerun with -update and review the diff")
}

// TestDemoCamp_Reproducible: the same day gives the same camp, record for record.
func TestDemoCamp_Reproducible(t *testing.T) {
	a, b := demo.Build(demoToday), demo.Build(demoToday)
	require.Equal(t, len(a), len(b))
	for i := range a {
		require.Equal(t, a[i], b[i])
	}
}

// TestBaselines_Demo: the numbers shown beside the jump grid and ringside
// are the flag rules' own: Kofi's CMJ baseline equals jump_drop's
// reference, and Mateo's stand-down shows as a hold.
func TestBaselines_Demo(t *testing.T) {
	srv := demoHub(t)
	ts := httptest.NewServer(srv.Handler())
	defer ts.Close()
	resp, err := http.Get(ts.URL + "/api/baselines?day=2026-12-01")
	require.NoError(t, err)
	defer resp.Body.Close()
	var out struct{ Athletes []server.Baseline }
	require.NoError(t, json.NewDecoder(resp.Body).Decode(&out))
	require.Len(t, out.Athletes, 5)
	fl, err := srv.Flags("2026-12-01", "")
	require.NoError(t, err)
	byName := map[string]server.Baseline{}
	for _, b := range out.Athletes {
		byName[b.Name] = b
	}
	kofi := byName["Kofi Brandt"]
	require.NotNil(t, kofi.CMJBaseline)
	for _, f := range fl {
		if f.Athlete == kofi.Athlete && f.Rule == flags.RuleJumpDrop && f.Status == flags.StatusFlag {
			require.NotNil(t, f.Reference)
			assert.InDelta(t, *f.Reference, *kofi.CMJBaseline, 1e-9, "the grid's baseline is jump_drop's reference")
		}
	}
	assert.GreaterOrEqual(t, kofi.CMJTestDays, 5)
	assert.True(t, byName["Mateo Lindqvist"].OnHold, "a head knock without clearance is a sparring hold")
	assert.False(t, byName["Ines Halloran"].OnHold)
	assert.Greater(t, kofi.SparRounds7d, 21, "the hard streak's rounds are counted")
}

// The demo camp never stamps ahead of the clock: a coach's edit of any
// demo entry, stamped after now, wins.
func TestDemoStampsNothingAheadOfTheClock(t *testing.T) {
	for _, hour := range []int{0, 7, 12, 23} {
		now := time.Date(2026, 12, 3, hour, 30, 0, 0, time.UTC)
		for _, r := range demo.Build(now) {
			if r.Stamp.L > now.UnixMilli() {
				t.Fatalf("at %s the demo stamps %s (%s) at %s", now.Format(time.Kitchen), r.ID, r.Kind, time.UnixMilli(r.Stamp.L).UTC())
			}
		}
	}
}
