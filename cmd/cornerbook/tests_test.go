package main

import (
	"encoding/json"
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestCommands_Tests: `cornerbook tests` lists a demo fighter's tests with
// their derived values; --json names them as promised.
func TestCommands_Tests(t *testing.T) {
	m := mustRunMain(t, true)
	dir := m.Config.DataDir
	require.NoError(t, m.Close())

	code, out, stderr := runCmd(t, "", "export", "--data", dir, "--kind", "athlete")
	require.Equal(t, 0, code, stderr)
	ids := map[string]string{}
	for _, line := range strings.Split(strings.TrimSpace(out), "\n") {
		var r struct {
			ID   string
			Body struct{ Name string }
		}
		require.NoError(t, json.Unmarshal([]byte(line), &r))
		ids[r.Body.Name] = r.ID
	}
	kofi := ids["Kofi Brandt"]
	require.NotEmpty(t, kofi)

	code, out, stderr = runCmd(t, "", "tests", "--data", dir, "--athlete", kofi, "--json")
	require.Equal(t, 0, code, stderr)
	for _, key := range []string{"vift_kmh", "sdec_pct", "fatigue_pct", "hr_max_bpm", "e1rm_epley_kg", "e1rm_brzycki_kg", "lv_1rm_kg", "rsi"} {
		assert.Contains(t, out, `"`+key+`"`, "--json names %s", key)
	}
	var rep struct {
		Tests []map[string]any
	}
	require.NoError(t, json.Unmarshal([]byte(out), &rep))
	assert.GreaterOrEqual(t, len(rep.Tests), 7, "two IFTs, two drop jumps, sprints, strength, HRmax")

	code, out, stderr = runCmd(t, "", "tests", "--data", dir, "--athlete", kofi)
	require.Equal(t, 0, code, stderr)
	assert.Contains(t, out, "Kofi Brandt")
	assert.Contains(t, out, "V_IFT 19.5 km/h (stage 24 from 8 km/h)")
	assert.Contains(t, out, "typical error from Thomas et al. 2016", "the IFT's change is judged against its published error")
	assert.Contains(t, out, "Drop jump 40 cm")

	code, _, stderr = runCmd(t, "", "tests", "--data", dir)
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, "--athlete ID is required")
	code, _, stderr = runCmd(t, "", "tests", "--data", dir, "--athlete", "nobody")
	assert.Equal(t, 1, code)
	assert.Contains(t, stderr, `no athlete with id "nobody"`)
}
