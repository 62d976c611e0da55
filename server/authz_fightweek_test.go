package server_test

import (
	"encoding/json"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// callers are the devices the read-route authorization tests call as:
// the coach, staff, athlete A's own phone, athlete B's, a revoked phone
// and a device never paired.
var callers = []string{"coach", "staff", "athleteA", "athleteB", "revoked", "none"}

// answers is the status each caller gets on one route; a revoked or
// unpaired device always gets 401.
func answers(coach, staff, own, other int) map[string]int {
	return map[string]int{"coach": coach, "staff": staff, "athleteA": own, "athleteB": other, "revoked": 401, "none": 401}
}

// TestAuthorization_FighterReads: each fighter's read routes (fight week,
// stand-downs, camp history, tests, plan report) and the presets for
// every caller — the coach, staff, an athlete's own phone, another
// athlete's phone, a revoked phone and a device never paired. Coach and
// staff read every fighter; an athlete's phone reads only its own
// fighter's (403 for another's, and 403 too for an id that names no
// athlete, so a phone cannot probe which ids exist); a day that is not
// one is refused (400); the presets are the published rule sets, readable
// by any paired device; nothing without a valid pass (401).
func TestAuthorization_FighterReads(t *testing.T) {
	c := newCampHub(t)
	a, b := c.athleteA.ID, c.athleteB.ID
	const nobody = "01900000-0000-7000-8000-000000000000"
	routes := []struct {
		path string
		want map[string]int
	}{
		{"/api/athletes/" + a + "/fightweek", answers(200, 200, 200, 403)},
		{"/api/athletes/" + a + "/fightweek?day=2026-11-20", answers(200, 200, 200, 403)},
		{"/api/athletes/" + b + "/fightweek", answers(200, 200, 403, 200)},
		{"/api/athletes/" + nobody + "/fightweek", answers(404, 404, 403, 403)},
		{"/api/athletes/" + a + "/fightweek?day=20-11-2026", answers(400, 400, 400, 403)},
		{"/api/athletes/" + a + "/medical", answers(200, 200, 200, 403)},
		{"/api/athletes/" + a + "/medical?day=2026-11-20", answers(200, 200, 200, 403)},
		{"/api/athletes/" + b + "/medical", answers(200, 200, 403, 200)},
		{"/api/athletes/" + nobody + "/medical", answers(404, 404, 403, 403)},
		{"/api/athletes/" + a + "/medical?day=yesterday", answers(400, 400, 400, 403)},
		{"/api/fightweek/presets", answers(200, 200, 200, 200)},
	}
	// Past the door, these fighters have no bout: their plan report is
	// "not found", their camps and tests are empty.
	for what, ok := range map[string]int{"camps": 200, "tests": 200, "plan": 404} {
		routes = append(routes, []struct {
			path string
			want map[string]int
		}{
			{"/api/athletes/" + a + "/" + what, answers(ok, ok, ok, 403)},
			{"/api/athletes/" + b + "/" + what + "?day=2026-11-20", answers(ok, ok, 403, ok)},
			{"/api/athletes/" + nobody + "/" + what, answers(404, 404, 403, 403)},
			{"/api/athletes/" + a + "/" + what + "?day=20-11-2026", answers(400, 400, 400, 403)},
		}...)
	}
	for _, rt := range routes {
		for _, role := range callers {
			st, out := c.do(role, "GET", rt.path, nil)
			assert.Equal(t, rt.want[role], st, "GET %s as %s: %s", rt.path, role, truncate(out))
		}
	}

	// What an athlete's phone is answered is its own fighter's, by name.
	for _, tc := range []struct{ as, id, name string }{{"athleteA", a, "Athlete A"}, {"athleteB", b, "Athlete B"}} {
		st, out := c.do(tc.as, "GET", "/api/athletes/"+tc.id+"/fightweek", nil)
		require.Equal(t, 200, st)
		var fw struct{ Athlete, Name string }
		require.NoError(t, json.Unmarshal(out, &fw))
		assert.Equal(t, tc.id, fw.Athlete)
		assert.Equal(t, tc.name, fw.Name)
		st, out = c.do(tc.as, "GET", "/api/athletes/"+tc.id+"/medical", nil)
		require.Equal(t, 200, st)
		var med struct{ Athlete string }
		require.NoError(t, json.Unmarshal(out, &med))
		assert.Equal(t, tc.id, med.Athlete)
	}
	// A refusal names the field and says why, in words.
	_, out := c.do("athleteA", "GET", "/api/athletes/"+b+"/medical", nil)
	var e struct{ Code, Field, Reason string }
	require.NoError(t, json.Unmarshal(out, &e))
	assert.Equal(t, "FORBIDDEN", e.Code)
	assert.Equal(t, "id", e.Field)
	assert.Contains(t, e.Reason, "its own athlete")
	// Only reads: the routes take no writes from anyone.
	for _, p := range []string{"/api/athletes/" + a + "/fightweek", "/api/athletes/" + a + "/medical", "/api/fightweek/presets"} {
		for _, role := range callers {
			st, _ := c.do(role, "POST", p, map[string]any{})
			assert.Contains(t, []int{401, 404, 405}, st, "POST %s as %s", p, role)
		}
	}
}
