package day

import (
	"testing"
	"time"
)

// Cross-check against the standard library's calendar (Gregorian
// arithmetic, common practice, no source) over a range of years, leap days
// included.
func TestNumberMatchesStandardLibrary(t *testing.T) {
	epoch := time.Date(1970, 1, 1, 0, 0, 0, 0, time.UTC)
	for tm := time.Date(1899, 12, 25, 0, 0, 0, 0, time.UTC); tm.Year() < 2102; tm = tm.AddDate(0, 0, 1) {
		s := tm.Format("2006-01-02")
		n, err := Parse(s)
		if err != nil {
			t.Fatalf("Parse(%s): %v", s, err)
		}
		want := Number(tm.Sub(epoch).Hours() / 24)
		if n != want {
			t.Fatalf("Parse(%s) = %d, want %d", s, n, want)
		}
		if got := n.String(); got != s {
			t.Fatalf("String(%d) = %s, want %s", n, got, s)
		}
	}
}

func TestParseRefusesBadDays(t *testing.T) {
	for _, s := range []string{"", "2026-2-01", "2026-02-30", "2025-02-29", "2026-13-01", "2026-00-10", "2026-01-00", "26-01-01xx", "2026/01/01", "2026-01-1a"} {
		if _, err := Parse(s); err == nil {
			t.Errorf("Parse(%q) accepted", s)
		}
		if Valid(s) {
			t.Errorf("Valid(%q) = true", s)
		}
	}
	if !Valid("2024-02-29") {
		t.Error("2024-02-29 is a leap day")
	}
}

func TestAddAndDiff(t *testing.T) {
	cases := []struct {
		a    string
		n    int
		want string
	}{
		{"2026-12-31", 1, "2027-01-01"},
		{"2024-02-28", 1, "2024-02-29"},
		{"2024-03-01", -1, "2024-02-29"},
		{"2026-03-01", -28, "2026-02-01"},
		{"2026-10-25", 1, "2026-10-26"}, // a clock change night is still one day
	}
	for _, c := range cases {
		got, err := Add(c.a, c.n)
		if err != nil || got != c.want {
			t.Errorf("Add(%s, %d) = %s, %v; want %s", c.a, c.n, got, err, c.want)
		}
		d, err := Diff(got, c.a)
		if err != nil || d != c.n {
			t.Errorf("Diff(%s, %s) = %d, %v; want %d", got, c.a, d, err, c.n)
		}
	}
	if _, err := Diff("2026-01-01", "x"); err == nil {
		t.Error("Diff accepted a bad day")
	}
}

func TestOfUsesWallClockDate(t *testing.T) {
	// 23:30 on the 5th at UTC-5 is the 6th in UTC; the venue's day is the 5th.
	tm, _ := time.Parse(time.RFC3339, "2026-03-05T23:30:00-05:00")
	if got := Of(tm).String(); got != "2026-03-05" {
		t.Fatalf("Of = %s, want 2026-03-05", got)
	}
}

// TestWordsNamesTheWeekday: 1970-01-01, day 0, was a Thursday, and so is
// 2026-12-03 (the Gregorian calendar; common practice, no source).
func TestWordsNamesTheWeekday(t *testing.T) {
	for in, want := range map[string]string{"1970-01-01": "Thu 1 Jan", "2026-12-03": "Thu 3 Dec", "2024-02-29": "Thu 29 Feb", "2027-01-04": "Mon 4 Jan"} {
		if got := MustParse(in).Words(); got != want {
			t.Errorf("%s: %q, want %q", in, got, want)
		}
	}
}

// TestWordsOfAString: a written day in words, anything else untouched
// (a refusal or a reason never loses what it was given).
func TestWordsOfAString(t *testing.T) {
	for in, want := range map[string]string{"2026-12-03": "Thu 3 Dec", "2026-13-01": "2026-13-01", "": ""} {
		if got := Words(in); got != want {
			t.Errorf("Words(%q) = %q, want %q", in, got, want)
		}
	}
}
