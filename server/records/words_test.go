package records

import (
	"regexp"
	"sort"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/require"
)

// snakeID matches a field or setting id written into a sentence
// (mass_kg, weigh_in_type): words on screens never hold one.
var snakeID = regexp.MustCompile(`\b[a-z0-9]+(_[a-z0-9]+)+\b`)

// TestRefusalsSpeakWords: every refusal the registry's probes draw from
// Prepare — the words a coach or a boxer reads under a form field, in the
// app and from the hub alike (TestAppRefusesWhatTheHubRefuses) — names
// fields and choices by their words, never by an id.
func TestRefusalsSpeakWords(t *testing.T) {
	probes, err := Probes(time.Date(2026, 3, 2, 12, 0, 0, 0, time.UTC))
	require.NoError(t, err)
	found := map[string][]string{}
	for _, p := range probes {
		if ids := snakeID.FindAllString(p.Reason, -1); ids != nil {
			found[p.Reason] = ids
		}
	}
	var bad []string
	for reason, ids := range found {
		bad = append(bad, strings.Join(ids, ", ")+": "+reason)
	}
	sort.Strings(bad)
	require.Empty(t, bad, "refusals that show ids")
}
