package main

import (
	"bufio"
	"encoding/json"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestCommands_Plan: `cornerbook plan` prints the demo fighter's camp week
// by week; --json has the documented shape, and each week's done figures
// equal the sums of the exported sessions and rounds of that week (load =
// RPE × minutes, Foster et al. 2001).
func TestCommands_Plan(t *testing.T) {
	m := mustRunMain(t, true)
	dir := m.Config.DataDir
	require.NoError(t, m.Close())

	code, export, stderr := runCmd(t, "", "export", "--data", dir)
	require.Equal(t, 0, code, stderr)
	type rec struct {
		ID, Kind, Athlete, Day string
		Body                   json.RawMessage
	}
	var recs []rec
	tomas := ""
	sc := bufio.NewScanner(strings.NewReader(export))
	sc.Buffer(make([]byte, 1<<20), 1<<20)
	for sc.Scan() {
		var r rec
		require.NoError(t, json.Unmarshal(sc.Bytes(), &r))
		recs = append(recs, r)
		if r.Kind == "athlete" && strings.Contains(string(r.Body), "Tomas Varga") {
			tomas = r.ID
		}
	}
	require.NotEmpty(t, tomas)

	code, out, stderr := runCmd(t, "", "plan", "--data", dir, "--athlete", tomas, "--json")
	require.Equal(t, 0, code, stderr)
	var rep struct {
		Bout struct {
			CampStart string `json:"camp_start"`
		} `json:"bout"`
		Today string `json:"today"`
		Weeks []struct {
			Week         int              `json:"week"`
			Start        string           `json:"start"`
			Level        string           `json:"level"`
			Strength     *json.RawMessage `json:"strength"`
			Conditioning *json.RawMessage `json:"conditioning"`
			SparRounds   *int             `json:"spar_rounds"`
			HardRounds   *int             `json:"hard_rounds"`
			Travel       *struct {
				FromZone string `json:"from_zone"`
			} `json:"travel"`
			PlannedLoadAU *float64 `json:"planned_load_au"`
			Current       bool     `json:"current"`
			Done          struct {
				LoadAU     float64 `json:"load_au"`
				Sessions   int     `json:"sessions"`
				Rounds     int     `json:"rounds"`
				HardRounds int     `json:"hard_rounds"`
			} `json:"done"`
		} `json:"weeks"`
		Checks []struct{ Check, Level, Field, Message string } `json:"checks"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &rep), out)
	require.Len(t, rep.Weeks, 10)
	current := 0
	for _, w := range rep.Weeks {
		require.NotNil(t, w.Strength, "week %d carries its strength emphasis", w.Week)
		require.NotNil(t, w.PlannedLoadAU)
		if w.Current {
			current = w.Week
		}
		start, _ := time.Parse(time.DateOnly, w.Start)
		end := start.AddDate(0, 0, 6).Format(time.DateOnly)
		var load float64
		var sessions, rounds, hard int
		for _, r := range recs {
			if r.Athlete != tomas || r.Day < w.Start || r.Day > end || r.Day > rep.Today {
				continue
			}
			switch r.Kind {
			case "session":
				var s struct{ Minutes, RPE float64 }
				require.NoError(t, json.Unmarshal(r.Body, &s))
				load += s.Minutes * s.RPE
				sessions++
			case "round":
				var rd struct {
					Activity  string
					Intensity int
				}
				require.NoError(t, json.Unmarshal(r.Body, &rd))
				if rd.Activity == "spar" {
					rounds++
					if rd.Intensity >= 3 {
						hard++
					}
				}
			}
		}
		assert.InDelta(t, load, w.Done.LoadAU, 0.01, "week %d load", w.Week)
		assert.Equal(t, sessions, w.Done.Sessions, "week %d sessions", w.Week)
		assert.Equal(t, rounds, w.Done.Rounds, "week %d rounds", w.Week)
		assert.Equal(t, hard, w.Done.HardRounds, "week %d hard rounds", w.Week)
	}
	camp, _ := time.Parse(time.DateOnly, rep.Bout.CampStart)
	today, _ := time.Parse(time.DateOnly, rep.Today)
	wantCurrent := int(today.Sub(camp).Hours()/24)/7 + 1
	assert.Equal(t, wantCurrent, current, "today's week is the current one")
	require.NotNil(t, rep.Weeks[7].Travel)
	assert.Equal(t, "Europe/London", rep.Weeks[7].Travel.FromZone)
	for _, c := range rep.Checks {
		assert.NotEmpty(t, c.Check)
		assert.NotEqual(t, "travel_recovery", c.Check, "the demo's flight lands in a low week: %s", c.Message)
	}

	code, text, stderr := runCmd(t, "", "plan", "--data", dir, "--athlete", tomas)
	require.Equal(t, 0, code, stderr)
	assert.Contains(t, text, "▶ Week "+strconv.Itoa(wantCurrent)+" from ")
	assert.Contains(t, text, "Travel: Europe/London → America/New_York")
	assert.NotContains(t, text, "medium_heavy", "words, not level ids")

	code, _, stderr = runCmd(t, "", "plan", "--data", dir, "--athlete", "nobody")
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, "no athlete")
}

// TestCommands_PlanNamesAMissingAthlete: plan without --athlete says which
// option is missing rather than printing the whole usage.
func TestCommands_PlanNamesAMissingAthlete(t *testing.T) {
	code, _, stderr := runCmd(t, "", "plan", "--data", t.TempDir())
	assert.Equal(t, 1, code, stderr)
	assert.Contains(t, stderr, "--athlete ID is required")
}
