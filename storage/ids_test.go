package storage_test

import (
	"strings"
	"testing"
	"time"

	"github.com/google/uuid"

	"cornerbook/storage"
)

// A UUID is accepted exactly when it is in the canonical text form of
// RFC 9562 §4 (Davis, Peabody & Leach 2024): 8-4-4-4-12 lower-case hex
// digits, the form the uuid package parses and writes back unchanged.
func canonicalUUID(s string) bool {
	u, err := uuid.Parse(s)
	return err == nil && u.String() == s
}

func FuzzCheckIDMatchesUUIDText(f *testing.F) {
	for _, s := range []string{
		"019a2b3c-4d5e-7f60-8a9b-0c1d2e3f4a5b", "019A2B3C-4D5E-7F60-8A9B-0C1D2E3F4A5B",
		"{019a2b3c-4d5e-7f60-8a9b-0c1d2e3f4a5}", "urn:uuid:019a2b3c-4d5e-7f60-8a9b-0c1",
		"019a2b3c04d5e-7f60-8a9b-0c1d2e3f4a5b", "019a2b3c-4d5e-7f60-8a9b-0c1d2e3f4a5g",
		"019a2b3c-4d5e-7f60-8a9b-0c1d2e3f4a5ü",
	} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		if len(s) != 36 {
			return
		}
		err := storage.CheckID(s)
		if want := canonicalUUID(s); (err == nil) != want {
			t.Fatalf("CheckID(%q) = %v; canonical UUID text: %v", s, err, want)
		}
	})
}

func TestCheckIDForms(t *testing.T) {
	good := []string{
		uuid.NewString(),
		"01ARZ3NDEKTSV4RRFFQ69G5FAV", // the ULID spec's own example (ulid/spec, "Canonical String Representation")
	}
	for _, s := range good {
		if err := storage.CheckID(s); err != nil {
			t.Errorf("CheckID(%q) = %v, want ok", s, err)
		}
	}
	bad := map[string]string{
		"":                                     "is required",
		strings.ToUpper(uuid.NewString()):      "lower-case",
		"81ARZ3NDEKTSV4RRFFQ69G5FAV":           "first character must be 0–7",
		"01ARZ3NDEKTSV4RRFFQ69G5FAU":           "Crockford",
		"01arz3ndektsv4rrffq69g5fav":           "Crockford",
		"019a2b3c-4d5e-7f60-8a9b-0c1d2e3f4a5":  "neither a UUID",
		"019a2b3c+4d5e-7f60-8a9b-0c1d2e3f4a5b": "8-4-4-4-12",
	}
	for s, want := range bad {
		err := storage.CheckID(s)
		if err == nil || !strings.Contains(err.Error(), want) {
			t.Errorf("CheckID(%q) = %v, want an error saying %q", s, err, want)
		}
	}
}

// A day is accepted exactly when time.Parse accepts it as YYYY-MM-DD,
// the proleptic Gregorian calendar of ISO 8601 (leap years every 4
// years except centuries not divisible by 400).
func FuzzCheckDayMatchesTimeParse(f *testing.F) {
	for _, s := range []string{"2026-03-02", "2024-02-29", "2026-02-29", "1900-02-29", "2000-02-29", "2026-04-31",
		"2026-13-01", "2026-00-10", "2026-01-00", "2026-1-010", "+026-01-01", "2026-01-3a", "0000-01-01"} {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, s string) {
		_, perr := time.Parse(time.DateOnly, s)
		want := perr == nil && len(s) == 10
		if err := storage.CheckDay(s); (err == nil) != want {
			t.Fatalf("CheckDay(%q) = %v; time.Parse: %v", s, err, perr)
		}
	})
}
