package server_test

import (
	"encoding/json"
	"math"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	"cornerbook/server/demo"
	"cornerbook/server/flags/day"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// demoAthletes maps the demo fighters' names to their ids.
func demoAthletes(t *testing.T) map[string]string {
	out := map[string]string{}
	for _, r := range demo.Build(demoToday) {
		if r.Kind == records.KindAthlete {
			var a records.Athlete
			require.NoError(t, json.Unmarshal(r.Body, &a))
			out[a.Name] = r.ID
		}
	}
	return out
}

// TestCampHistory_Demo: Tomas's camp of the day and his summer camp come
// side by side, newest first, each day placed by its days to its own
// bout; the numbers are those of the records in the store.
func TestCampHistory_Demo(t *testing.T) {
	srv := demoHub(t)
	ids := demoAthletes(t)
	tomas := ids["Tomas Varga"]
	h, err := srv.Camps(tomas, "")
	require.NoError(t, err)
	assert.Equal(t, "lb", h.Units)
	assert.Equal(t, "Tomas Varga", h.Name)
	require.Len(t, h.Camps, 2)
	cur, past := h.Camps[0], h.Camps[1]
	assert.True(t, cur.Current)
	assert.False(t, past.Current)
	assert.Less(t, past.BoutDay, cur.BoutDay)

	// The camp of the day stops today; the summer camp runs to its bout.
	assert.Equal(t, "2026-12-01", cur.Days[len(cur.Days)-1])
	assert.Equal(t, past.BoutDay, past.Days[len(past.Days)-1])
	assert.Equal(t, 0, past.DaysOut[len(past.DaysOut)-1])
	for _, c := range h.Camps {
		bd := day.MustParse(c.BoutDay)
		for i, d := range c.Days {
			require.Equal(t, int(day.MustParse(d)-bd), c.DaysOut[i], "%s", d)
		}
	}
	// 8 weeks: 56 days, weeks 7 … 0 out, each whole.
	require.Len(t, past.Days, 56)
	require.Len(t, past.Weeks, 8)
	for _, w := range past.Weeks {
		assert.Equal(t, 7, w.Days, "week %d out", w.WeeksOut)
	}

	// Over the limit: (mass − limit) / limit × 100 on every day with a
	// morning mass; 135 lb = 61.235 kg (1 lb = 0.45359237 kg, NIST SP 811).
	require.NotNil(t, past.LimitKg)
	assert.InDelta(t, 135*0.45359237, *past.LimitKg, 0.005)
	masses := 0
	for i, m := range past.MorningKg {
		if m == nil {
			assert.Nil(t, past.OverLimitPct[i])
			continue
		}
		masses++
		assert.InDelta(t, (*m-*past.LimitKg) / *past.LimitKg * 100, *past.OverLimitPct[i], 1e-9)
	}
	assert.Greater(t, masses, 45, "a check-in most mornings")

	// Each week's load is the sum of rpe × minutes (Foster et al. 2001)
	// of the sessions stored for its days, and its sparring rounds are
	// the spar rounds stored for them.
	all := demo.Build(demoToday)
	for _, w := range past.Weeks {
		load, spar := 0.0, 0
		for _, r := range all {
			if r.Athlete != tomas || r.Day < w.From || r.Day > w.To {
				continue
			}
			switch r.Kind {
			case records.KindSession:
				var s records.Session
				require.NoError(t, json.Unmarshal(r.Body, &s))
				load += s.RPE * s.Minutes
			case records.KindRound:
				var rd records.Round
				require.NoError(t, json.Unmarshal(r.Body, &rd))
				if rd.Activity == "spar" {
					spar++
				}
			}
		}
		assert.InDelta(t, math.Round(load*10)/10, w.LoadAU, 0.05, "week %d out", w.WeeksOut)
		assert.Equal(t, spar, w.Rounds, "week %d out", w.WeeksOut)
	}

	// The 30-15 IFT of each camp is placed in it, by days to its bout.
	ift := map[string]int{}
	for _, tr := range h.Tests {
		if tr.Series != "ift_30_15" {
			continue
		}
		ift[tr.Camp]++
		var c = cur
		if tr.Camp == past.Bout {
			c = past
		}
		assert.Equal(t, int(day.MustParse(tr.Day)-day.MustParse(c.BoutDay)), tr.DaysOut)
		assert.Equal(t, "km/h", tr.Unit)
	}
	assert.Equal(t, map[string]int{cur.Bout: 2, past.Bout: 2}, ift)

	// A fighter with one camp has one; asked inside the summer camp, the
	// camp of the day is the summer one and the later camp is left out.
	m, err := srv.Camps(ids["Mateo Lindqvist"], "")
	require.NoError(t, err)
	assert.Len(t, m.Camps, 1)
	mid, err := srv.Camps(tomas, past.Days[20])
	require.NoError(t, err)
	require.Len(t, mid.Camps, 1)
	assert.Equal(t, past.Bout, mid.Camps[0].Bout)
	assert.True(t, mid.Camps[0].Current)
	assert.Equal(t, past.Days[20], mid.Camps[0].Days[len(mid.Camps[0].Days)-1])
	assert.Contains(t, h.Caution, "never a reason to cut faster")
}

// TestCamps_RefusesADayByName: a day that is not one is refused naming
// the field; an athlete with no camp gets an empty history, not null.
func TestCamps_RefusesADayByName(t *testing.T) {
	c := newCampHub(t)
	a := c.athleteA.ID
	st, out := c.do("coach", "GET", "/api/athletes/"+a+"/camps?day=20-11-2026", nil)
	require.Equal(t, 400, st)
	var e devsync.ErrorBody
	require.NoError(t, json.Unmarshal(out, &e))
	assert.Equal(t, "day", e.Field)
	assert.Contains(t, e.Reason, "20-11-2026")
	st, out = c.do("coach", "GET", "/api/athletes/"+a+"/camps", nil)
	require.Equal(t, 200, st)
	var h server.CampHistory
	require.NoError(t, json.Unmarshal(out, &h))
	assert.Equal(t, a, h.Athlete)
	assert.NotNil(t, h.Camps)
	assert.NotNil(t, h.Tests)
}
