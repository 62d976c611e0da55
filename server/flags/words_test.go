package flags

import (
	"regexp"
	"strings"
	"testing"
	"time"

	"cornerbook/server/records"
)

// busyCamp is a camp that raises most rules at some point: hard sparring
// close together and often, a stand-down with sparring in it, a jump
// drop, a wellness dip, concentrated urine, mass and load data, and a
// plan with medium-heavy and taper weeks.
func busyCamp() *camp {
	c := &camp{}
	weeks := []map[string]any{}
	for k, lvl := range []string{"medium", "medium_heavy", "heavy", "low", "medium_heavy", "heavy", "heavy", "taper"} {
		weeks = append(weeks, map[string]any{"week": k + 1, "level": lvl, "spar_cap_rounds": 12})
	}
	c.standardBout(map[string]any{"weeks": weeks, "reference_load_au": 3000})
	mass := 71.0
	for i := -7; i < 60; i++ {
		mass -= 0.12
		c.mass(d(i), mass)
		c.wellnessTotal(d(i), 18+i%3)
		if i%2 == 0 {
			c.jump(d(i), 40+float64(i%3), 41, 40.5)
		}
		c.load(d(i), 400+float64((i*37)%200))
	}
	c.wellness(d(40), 1, 2, 2, 1, 2)
	c.add(kindCheckin, d(40), map[string]any{"usg": 1.033})
	c.jump(d(40), 33.0, 34.0, 33.5)
	for _, off := range []int{36, 38, 39, 40} {
		c.rounds(d(off), 4, 3)
	}
	c.add(kindIncident, d(38), map[string]any{"type": "head_knock"})
	c.last().At = d(38) + "T07:00:00+01:00"
	c.add(kindIncident, d(39), map[string]any{"type": "stoppage"})
	return c
}

var (
	// A rule id or setting key: a word with an underscore, or a dotted
	// lower-case path such as spar_density.hard_cap_rounds or weeks[9].
	idLike = regexp.MustCompile(`[a-z]+_[a-z_]+|[a-z]+\.[a-z_]+\b|\[\d+\]`)
	plural = regexp.MustCompile(`\(s\)|\b1 (days|rounds|sparring rounds|hard sparring rounds|check-ins|weeks)\b`)
	// More than one decimal on a CMJ height in cm.
	cmjDigits = regexp.MustCompile(`\d+\.\d{2,} cm`)
)

// Words on screen, ids in JSON: every flag has a title in the coach's
// words, unique among one athlete-day's flags; titles and reasons hold no
// rule ids, setting keys, JSON paths or level ids, no "(s)" plurals and no
// "1 days"; CMJ heights are written to 0.1 cm (the resolution of a
// contact mat, common practice, no source).
func TestTitlesAndReasonsInWords(t *testing.T) {
	c := busyCamp()
	seenTitles := map[string]bool{}
	for off := -7; off < 60; off++ {
		in := c.input(d(off))
		in.Now = time.Date(2026, 6, 1, 12, 0, 0, 0, time.UTC) // every day's check-in hour has passed
		fs := Compute(in)
		titles := map[string]bool{}
		for _, f := range fs {
			if f.Title == "" {
				t.Fatalf("%s: %s flag without a title: %s", d(off), f.Rule, f.Reason)
			}
			if titles[f.Title] {
				t.Errorf("%s: two flags titled %q:%s", d(off), f.Title, describe(fs))
			}
			titles[f.Title] = true
			seenTitles[f.Title] = true
			for _, text := range []string{f.Title, f.Reason} {
				if m := idLike.FindString(text); m != "" {
					t.Errorf("%s: id-like %q in %q", d(off), m, text)
				}
				if m := plural.FindString(text); m != "" {
					t.Errorf("%s: %q in %q", d(off), m, text)
				}
				for _, id := range records.RuleIDs {
					// "monotony" and "hydration" are words as well as ids.
					if strings.Contains(id, "_") && strings.Contains(text, id) {
						t.Errorf("%s: rule id %s in %q", d(off), id, text)
					}
				}
			}
			if f.Rule == RuleJumpDrop {
				if m := cmjDigits.FindString(f.Reason); m != "" {
					t.Errorf("%s: CMJ written as %q: %s", d(off), m, f.Reason)
				}
			}
		}
	}
	// Where one rule raises two flags, the titles say which.
	for _, want := range []string{"Hard sparring on back-to-back days", "Hard sparring on 3 of the last 7 days",
		"Sparring during a stand-down", "Stand-down after a head knock", "Stand-down after a stoppage"} {
		if !seenTitles[want] {
			t.Errorf("title %q never raised; titles seen: %v", want, seenTitles)
		}
	}
}

// Counting words: "1 day", "2 days" (common practice, no source).
func TestCountWords(t *testing.T) {
	for _, tc := range []struct {
		n    int
		want string
	}{{0, "0 days"}, {1, "1 day"}, {2, "2 days"}} {
		if got := count(tc.n, "day", "days"); got != tc.want {
			t.Errorf("count(%d) = %q, want %q", tc.n, got, tc.want)
		}
	}
	if got := joinWords([]string{"a", "b", "c"}); got != "a, b and c" {
		t.Errorf("joinWords = %q", got)
	}
}
