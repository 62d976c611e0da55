package main

import (
	"encoding/json"
	"fmt"
	"regexp"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// flagsCamp is an invented fighter with a head knock, a round sparred
// after it and a whole-day decision, as JSON Lines.
func flagsCamp() string {
	const ath = "0193a1b2-0000-7000-8000-0000000000a1"
	n := 0
	line := func(kind, day, at, body string) string {
		n++
		id := fmt.Sprintf("0193a1b2-0000-7000-8000-%012d", n)
		if kind == "athlete" {
			id = ath
		}
		return fmt.Sprintf(`{"id":%q,"kind":%q,"athlete":%q,"day":%q,"at":%q,"device":"d1","stamp":{"l":%d,"c":0},"body":%s}`+"\n",
			id, kind, ath, day, at, n, body)
	}
	return line("athlete", "2026-11-01", "2026-11-01T08:00:00Z", `{"name":"Ivo Testa","units":"kg"}`) +
		line("checkin", "2026-11-02", "2026-11-02T07:00:00Z", `{"mass_kg":70.2,"usg":1.025}`) +
		line("incident", "2026-11-02", "2026-11-02T16:10:00Z", `{"type":"head_knock","note":"clash of heads"}`) +
		line("round", "2026-11-02", "2026-11-02T16:00:00Z", `{"activity":"spar","seconds":180,"intensity":3}`) +
		line("round", "2026-11-03", "2026-11-03T16:00:00Z", `{"activity":"spar","seconds":180,"intensity":2}`) +
		line("checkin", "2026-11-04", "2026-11-04T07:00:00Z", `{"mass_kg":70.0,"usg":1.026}`) +
		line("decision", "2026-11-04", "2026-11-04T12:30:00Z", `{"note":"no contact, bike session only","by":"S&C coach"}`)
}

// `cornerbook flags` writes words a coach reads — the stand-down first,
// titles, reasons, the decision with who made it — and no rule ids or
// setting keys; `--json` keeps the ids.
func TestCommands_FlagsInWords(t *testing.T) {
	dir := t.TempDir()
	code, _, stderr := runCmd(t, flagsCamp(), "import", "--data", dir, "-")
	require.Equal(t, 0, code, stderr)

	code, out, stderr := runCmd(t, "", "flags", "--data", dir, "--day", "2026-11-04")
	require.Equal(t, 0, code, stderr)
	lines := strings.Split(strings.TrimSpace(out), "\n")
	require.NotEmpty(t, lines)
	assert.True(t, strings.HasPrefix(lines[0], "Stand-down"), "the stand-down comes first:\n%s", out)
	assert.Contains(t, out, "Ivo Testa — Stand-down after a head knock")
	assert.Contains(t, out, "Head knock: treated as suspected concussion")
	assert.Contains(t, out, "until cleared in writing by a doctor")
	// With the stand-down, its return to sport (Patricios et al. 2023: six steps).
	assert.Contains(t, out, "Return to sport: step 1 of 6 (Symptom-limited daily activity) not started.")
	assert.Regexp(t, `\nAct today +Ivo Testa — Sparring during a stand-down\n`, out)
	assert.Contains(t, out, "1 sparring round logged on 2026-11-03 during a stand-down", "the round before the knock is not counted")
	assert.Contains(t, out, "Decision for the whole day (S&C coach): no contact, bike session only")
	assert.NotRegexp(t, regexp.MustCompile(`[a-z]+_[a-z_]+|\b(ALERT|WATCH|INFO)\b`), out, "no ids or level ids in the text output")

	code, out, stderr = runCmd(t, "", "flags", "--data", dir, "--day", "2026-11-04", "--json")
	require.Equal(t, 0, code, stderr)
	var fl []struct {
		Rule        string `json:"rule"`
		Level       string `json:"level"`
		Title       string `json:"title"`
		Restriction *struct {
			IncidentType string `json:"incident_type"`
			EarliestEnd  string `json:"earliest_end"`
		} `json:"restriction"`
		Decision *struct {
			Scope string `json:"scope"`
			By    string `json:"by"`
		} `json:"decision"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &fl))
	require.NotEmpty(t, fl)
	assert.Equal(t, "spar_on_hold", fl[0].Rule)
	assert.Equal(t, "info", fl[0].Level, "the running stand-down stays info in JSON")
	require.NotNil(t, fl[0].Restriction)
	assert.Equal(t, "head_knock", fl[0].Restriction.IncidentType)
	assert.Equal(t, "", fl[0].Restriction.EarliestEnd)
	for _, f := range fl {
		require.NotNil(t, f.Decision, f.Title)
		assert.Equal(t, "day", f.Decision.Scope)
	}
}
