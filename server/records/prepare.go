package records

import (
	"encoding/json"
	"math"
	"strings"
	"time"
	_ "time/tzdata" // time zones resolve on a camp laptop without a zoneinfo database
	"unicode/utf8"

	devsync "cornerbook/sync"
)

// Prepare validates a record and fills the fields the hub derives, writing
// the body back in canonical form (struct field order, sorted map keys).
// Every error is a *devsync.FieldError naming the field by its JSON path
// ("body.heights_cm[2]") with a reason a coach can act on.
//
// Prepare uses no clock: checks that need the hub's date (a day in the
// future, a birth year too recent) are made by PrepareAt. It is
// idempotent: preparing a prepared record changes nothing.
//
// A tombstone (deleted: true) is checked for its common fields only; its
// body is left as it is, so a record can always be deleted even when its
// body breaks a rule added later.
func Prepare(rec *devsync.Record) error { return prepare(rec, nil) }

// PrepareAt is Prepare with the hub's clock: the record's day may be at
// most one day after now's date (in now's location: pass the time in the
// camp's zone), and an athlete's birth year at most now's year − 10. The
// server builds one per request: records.PrepareAt(time.Now())(rec).
func PrepareAt(now time.Time) func(*devsync.Record) error {
	return func(rec *devsync.Record) error { return prepare(rec, &now) }
}

// MinYear is the earliest year a record's days may fall in: a day before
// it is a mistyped year (common practice, no source).
const MinYear = 2000

// MaxFutureDays is how far after the hub's date a record's day may be:
// a device a time zone ahead of the hub may already be on tomorrow.
const MaxFutureDays = 1

// Text limits, in characters (common practice, no source).
const (
	MaxNameLen = 80   // athlete name, partner, "by"
	MaxNoteLen = 2000 // notes and decision notes
	MaxIDLen   = 64   // record ids: a UUID is 36, a ULID 26 characters
)

type validator func(c *check, raw json.RawMessage) (any, error)

// check carries what a body validator needs besides the body.
type check struct {
	rec     *devsync.Record
	at      time.Time  // the record's own timestamp
	now     *time.Time // the hub's clock, nil under Prepare
	present fieldSet
}

func prepare(rec *devsync.Record, now *time.Time) error {
	if rec == nil {
		return fe("", "no record was sent")
	}
	c := &check{rec: rec, now: now}
	if err := c.common(); err != nil {
		return err
	}
	if rec.Deleted {
		return nil
	}
	if !utf8.Valid(rec.Body) {
		return fe("body", "contains bytes that are not UTF-8 text; re-enter the text fields")
	}
	kind, _ := KindOf(rec.Kind)
	body, err := kind.validate(c, rec.Body)
	if err != nil {
		return err
	}
	out, err := canonical(body)
	if err != nil {
		return err
	}
	rec.Body = out
	return nil
}

func (c *check) common() error {
	rec := c.rec
	if err := checkID("id", rec.ID, "the record's id"); err != nil {
		return err
	}
	kind, ok := KindOf(rec.Kind)
	if !ok {
		if rec.Kind == "" {
			return fe("kind", "is required: one of %s", strings.Join(Kinds, ", "))
		}
		return fe("kind", "%q is not a record kind; use one of %s", rec.Kind, strings.Join(Kinds, ", "))
	}
	switch {
	case rec.Kind == KindAthlete:
		if rec.Athlete != "" && rec.Athlete != rec.ID {
			return fe("athlete", "of an athlete record must be empty or equal to its id %q; got %q", rec.ID, rec.Athlete)
		}
	case kind.Scope == CampOrAthlete && rec.Athlete == "":
		// camp-wide
	case rec.Athlete == "":
		return fe("athlete", "is required: the id of the athlete this %s belongs to", rec.Kind)
	default:
		if err := checkID("athlete", rec.Athlete, "an athlete id"); err != nil {
			return err
		}
	}
	switch {
	case rec.Day == "" && !kind.Dated:
	case rec.Day == "":
		return fe("day", "is required: the calendar day the %s belongs to, YYYY-MM-DD", rec.Kind)
	default:
		d, err := parseDay("day", rec.Day)
		if err != nil {
			return err
		}
		// A delete is never refused for its date: a record that got in
		// with a wrong day must be removable.
		if c.now != nil && !rec.Deleted {
			today := civil(*c.now)
			if d.After(today.AddDate(0, 0, MaxFutureDays)) {
				return fe("day", "is %s, more than %d day after today (%s on the hub); check the date on the device",
					rec.Day, MaxFutureDays, today.Format(time.DateOnly))
			}
		}
	}
	if rec.At == "" {
		return fe("at", "is required: when it was recorded, RFC 3339 with offset (e.g. 2026-03-02T07:05:00+01:00)")
	}
	at, err := time.Parse(time.RFC3339, rec.At)
	if err != nil {
		return fe("at", "must be a date and time in RFC 3339 with offset (e.g. 2026-03-02T07:05:00+01:00); got %q", rec.At)
	}
	c.at = at
	if rec.Device == "" {
		return fe("device", "is required: the id of the device that wrote the record")
	}
	if err := text("device", rec.Device, 128, false); err != nil {
		return err
	}
	return nil
}

// civil is the calendar date of t in its own location, as midnight UTC.
func civil(t time.Time) time.Time {
	y, m, d := t.Date()
	return time.Date(y, m, d, 0, 0, 0, 0, time.UTC)
}

// --- small checks -------------------------------------------------------

// checkID accepts the characters of UUIDs, ULIDs and readable ids.
func checkID(field, s, what string) error {
	if s == "" {
		return fe(field, "is required: %s", what)
	}
	if len(s) > MaxIDLen {
		return fe(field, "must be at most %d characters; got %d", MaxIDLen, len(s))
	}
	for _, r := range s {
		if !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || r == '-' || r == '_' || r == '.' || r == ':') {
			return fe(field, "may contain only letters, digits and - _ . : (a UUID or ULID); got %q", s)
		}
	}
	return nil
}

func parseDay(field, s string) (time.Time, error) {
	if len(s) != 10 || s[4] != '-' || s[7] != '-' {
		return time.Time{}, fe(field, "must be a calendar day written YYYY-MM-DD; got %q", s)
	}
	d, err := time.Parse(time.DateOnly, s)
	if err != nil {
		return time.Time{}, fe(field, "%s is not a day of the calendar (YYYY-MM-DD)", s)
	}
	if d.Year() < MinYear {
		return time.Time{}, fe(field, "is %s, before %d; check the year", s, MinYear)
	}
	return d, nil
}

// between checks lo ≤ v ≤ hi.
func between(field string, v, lo, hi float64, unit string) error {
	if math.IsNaN(v) || v < lo || v > hi {
		return fe(field, "must be between %s and %s%s; got %s", fmtNum(lo), fmtNum(hi), withUnit(unit), fmtNum(v))
	}
	return nil
}

func betweenInt(field string, v, lo, hi int, unit string) error {
	if v < lo || v > hi {
		return fe(field, "must be between %d and %d%s; got %d", lo, hi, withUnit(unit), v)
	}
	return nil
}

func withUnit(unit string) string {
	if unit == "" {
		return ""
	}
	return " " + unit
}

// rpe checks a CR-10 rating: 0 to 10 in steps of 0.5.
func rpe(field string, v float64) error {
	if err := between(field, v, 0, 10, "(CR-10 rating)"); err != nil {
		return err
	}
	if v*2 != math.Trunc(v*2) {
		return fe(field, "must be a CR-10 rating from 0 to 10 in whole or half points; got %s", fmtNum(v))
	}
	return nil
}

func oneOf(field, v string, allowed []string) error {
	for _, a := range allowed {
		if v == a {
			return nil
		}
	}
	if v == "" {
		return fe(field, "%s", ChooseOneWords)
	}
	return fe(field, "%s", NotAChoiceWords)
}

// text checks a text field (CheckText): length in characters, control
// characters, bidirectional overrides; multi-line text may hold line
// breaks and tabs.
func text(field, s string, max int, multiline bool) error {
	if why := CheckText(s, max, multiline); why != "" {
		return fe(field, "%s", why)
	}
	return nil
}

// name checks a required single-line name of 1 to MaxNameLen characters,
// at least one of them visible.
func name(field, s, what string) error {
	if strings.TrimSpace(s) == "" {
		return fe(field, "is required: %s, 1 to %d characters", what, MaxNameLen)
	}
	return text(field, s, MaxNameLen, false)
}

func note(field, s string) error { return text(field, s, MaxNoteLen, true) }

func loadZone(field, tz string) error {
	if tz == "Local" || strings.TrimSpace(tz) != tz {
		return fe(field, "must be an IANA time zone such as Europe/Madrid or Asia/Bangkok; got %q", tz)
	}
	if _, err := time.LoadLocation(tz); err != nil {
		return fe(field, "must be an IANA time zone such as Europe/Madrid or Asia/Bangkok; got %q", tz)
	}
	return nil
}
