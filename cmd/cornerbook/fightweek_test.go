package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"github.com/google/uuid"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// `cornerbook fightweek --json` gives the fight week's numbers in the
// shape scripts read: REFERENCES §14.1 [D] — 70.0 → 66.6 kg is a 4.8571 %
// acute loss, 66.6 → 71.5 kg a 7.3574 % regain, 2025-06-13T13:00−07:00 →
// 2025-06-14T20:30−07:00 is 31.5 h; the limit + 10 lb for 147 lb is a cap
// of 71.214002 kg, which 71.5 kg is over.
func TestCommands_FightWeek(t *testing.T) {
	id := func() string { return uuid.Must(uuid.NewV7()).String() }
	ath := id()
	n := 0
	line := func(kind, day, at string, body string) string {
		n++
		a := ath
		return fmt.Sprintf(`{"id":%q,"kind":%q,"athlete":%q,"day":%q,"at":%q,"device":"laptop","stamp":{"l":%d,"c":0},"body":%s}`,
			map[bool]string{true: ath, false: id()}[kind == "athlete"], kind, a, day, at, 1740000000000+n, body)
	}
	file := strings.Join([]string{
		line("athlete", "2025-04-01", "2025-04-01T08:00:00-07:00", `{"name":"Invented Welter","units":"lb"}`),
		strings.Replace(line("bout", "", "2025-04-01T08:00:00-07:00", `{"camp_start":"2025-04-20","weigh_in":"2025-06-13T13:00:00-07:00",`+
			`"weigh_in_type":"day_before","bout_day":"2025-06-14","bout_at":"2025-06-14T20:30:00-07:00","weight_class":"pro_welterweight",`+
			`"start_mass_kg":72,"rules":{"preset":"fight_day_10lb","fight_day":{"over_limit_lb":10}}}`), `"day":"",`, "", 1),
		line("checkin", "2025-06-06", "2025-06-06T07:10:00-07:00", `{"mass_kg":70.0}`),
		line("weigh_in", "2025-06-13", "2025-06-13T13:00:00-07:00", `{"type":"official","mass_kg":66.6}`),
		line("weigh_in", "2025-06-14", "2025-06-14T09:00:00-07:00", `{"type":"fight_day","mass_kg":71.5}`),
	}, "\n") + "\n"
	dir := t.TempDir()
	path := filepath.Join(t.TempDir(), "camp.jsonl")
	require.NoError(t, os.WriteFile(path, []byte(file), 0o600))
	code, out, stderr := runCmd(t, "", "import", "--data", dir, path)
	require.Equal(t, 0, code, stderr+out)

	code, out, stderr = runCmd(t, "", "fightweek", "--data", dir, "--athlete", ath, "--day", "2025-06-14", "--json")
	require.Equal(t, 0, code, stderr)
	var v struct {
		Official *struct {
			MassKg float64 `json:"mass_kg"`
			At     string  `json:"at"`
		} `json:"official"`
		Mass7d *float64 `json:"mass_7d_before_kg"`
		Acute  *float64 `json:"acute_loss_pct"`
		Regain *float64 `json:"regain_pct"`
		Hours  *float64 `json:"hours_weigh_in_to_bout"`
		Checks []struct {
			Type   string   `json:"type"`
			At     string   `json:"at"`
			MassKg float64  `json:"mass_kg"`
			CapKg  *float64 `json:"cap_kg"`
			Pass   *bool    `json:"pass"`
		} `json:"checks"`
	}
	require.NoError(t, json.Unmarshal([]byte(out), &v), out)
	require.NotNil(t, v.Official)
	assert.Equal(t, 66.6, v.Official.MassKg)
	assert.Equal(t, "2025-06-13T13:00:00-07:00", v.Official.At)
	require.NotNil(t, v.Mass7d)
	assert.Equal(t, 70.0, *v.Mass7d)
	assert.InDelta(t, 4.8571, *v.Acute, 0.00005)  // REFERENCES §14.1 [D]
	assert.InDelta(t, 7.3574, *v.Regain, 0.00005) // REFERENCES §14.1 [D]
	assert.InDelta(t, 31.5, *v.Hours, 1e-9)       // REFERENCES §14.1 [D]
	require.Len(t, v.Checks, 1)
	c := v.Checks[0]
	assert.Equal(t, "fight_day", c.Type)
	assert.Equal(t, 71.5, c.MassKg)
	assert.InDelta(t, 71.214002, *c.CapKg, 1e-6) // REFERENCES §14.1 [V2 rule, D value]
	assert.False(t, *c.Pass)

	// In words, the athlete's pounds and no ids.
	code, out, _ = runCmd(t, "", "fightweek", "--data", dir, "--athlete", ath, "--day", "2025-06-14")
	require.Equal(t, 0, code)
	assert.Contains(t, out, "Official weigh-in 146.8 lb")
	assert.Contains(t, out, "157.6 lb, 0.6 lb over the cap of 157.0 lb")
	assert.Contains(t, out, "31.5 h from the official weigh-in to the bout")
	assert.Contains(t, out, "never a reason to cut faster")
	assert.NotContains(t, out, ath)

	code, _, stderr = runCmd(t, "", "fightweek", "--data", dir)
	assert.Equal(t, 1, code, stderr)
	assert.Contains(t, stderr, "--athlete ID is required", "the missing option is named")
}
