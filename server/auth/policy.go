package auth

import (
	"fmt"
	"slices"
	"strings"

	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// Who may write which kind comes from the registry of record kinds
// (records.Registry, each kind's Writers).
//
// Athletes write what they report about themselves: the morning check-in,
// their session RPE, and notes. Staff (assistant coaches, physios, cutmen)
// write what happens in the gym: every training kind and incidents. Only
// coaches write the plan and its limits (bout, settings), athletes,
// clearances and decisions: a clearance ends a stand-down after a head
// knock and a decision acknowledges a flag, both the coach's judgement
// (the medical team's, for clearances, entered by the coach).
var (
	athleteKinds = records.WrittenBy(records.RoleAthlete)
	staffKinds   = records.WrittenBy(records.RoleStaff)
)

// pluralsOf lists the kinds' words: "check-ins, sessions and notes".
func pluralsOf(kinds []string) string {
	words := make([]string, len(kinds))
	for i, k := range kinds {
		kind, _ := records.KindOf(k)
		words[i] = kind.Plural
	}
	if len(words) < 2 {
		return strings.Join(words, "")
	}
	return strings.Join(words[:len(words)-1], ", ") + " and " + words[len(words)-1]
}

// ForbiddenError says which field of a record a device may not write and
// why. errors.Is(err, ErrForbidden) is true; errors.As finds the
// *devsync.FieldError for the rejection's field and reason.
type ForbiddenError struct{ Err *devsync.FieldError }

func (e *ForbiddenError) Error() string        { return e.Err.Error() }
func (e *ForbiddenError) Unwrap() error        { return e.Err }
func (e *ForbiddenError) Is(target error) bool { return target == ErrForbidden }

func forbid(field, format string, args ...any) error {
	return &ForbiddenError{Err: &devsync.FieldError{Field: field, Reason: fmt.Sprintf(format, args...)}}
}

// IsCoach reports whether d is a live coach device.
func (d Device) IsCoach() bool { return d.Role == RoleCoach && !d.Revoked }

// RequireCoach refuses anything but a live coach device: changing devices,
// join codes, backups and restores.
func RequireCoach(d Device) error {
	if d.Revoked {
		return ErrRevoked
	}
	if d.Role != RoleCoach {
		return forbid("", "only a coach's device can do this (this is %s %s device)", article(string(d.Role)), d.Role)
	}
	return nil
}

// CanRead reports whether d may receive rec in a pull (tombstones too:
// a device must learn of deletes of what it could see). Coach and staff
// read everything. An athlete's device reads its own athlete's records,
// its own athlete record, and the camp-wide settings (time zone, check-in
// hour), and nothing else.
func CanRead(d Device, rec *devsync.Record) bool {
	if d.Revoked || rec == nil {
		return false
	}
	switch d.Role {
	case RoleCoach, RoleStaff:
		return true
	case RoleAthlete:
		if d.Athlete == "" {
			return false
		}
		if rec.Kind == records.KindAthlete {
			return rec.ID == d.Athlete
		}
		if rec.Athlete == "" {
			return rec.Kind == records.KindSettings
		}
		if rec.Kind == records.KindNote && rec.Device != d.ID && !records.NoteShared(rec.Body) {
			return false // a staff-only note never reaches an athlete's device
		}
		return rec.Athlete == d.Athlete
	}
	return false
}

// CanWrite says whether d may push rec (upsert, delete or restore alike),
// as a *ForbiddenError naming the field. The record must name d as its
// device. Coaches write every kind; staff the training kinds and
// incidents; athletes only check-ins, sessions and notes of their own
// athlete.
func CanWrite(d Device, rec *devsync.Record) error {
	if rec == nil {
		return forbid("record", "is missing")
	}
	if rec.Device != d.ID {
		return forbid("device", "must be this device (%s), not %q", d.ID, rec.Device)
	}
	return canWriteContent(d, rec, "")
}

// CanOverwrite is CanWrite plus a check of the version already stored
// under the same id: a device may only replace (or delete) a record it
// could have written itself. Without it an athlete's device could take
// another athlete's record by reusing its id with its own athlete, or
// staff could turn a coach's decision into a note. stored is nil for a
// new record.
func CanOverwrite(d Device, stored, incoming *devsync.Record) error {
	if err := CanWrite(d, incoming); err != nil {
		return err
	}
	if stored == nil {
		return nil
	}
	if err := canWriteContent(d, stored, "the stored version of this record: "); err != nil {
		return err
	}
	// An athlete's device edits, deletes and restores only what it wrote
	// (the version it would replace is its own).
	if d.Role == RoleAthlete && stored.Device != d.ID {
		return forbid("id", "this %s was last written by another device; an athlete's device changes only its own entries — ask the coach", kindWords(stored.Kind))
	}
	return nil
}

func canWriteContent(d Device, rec *devsync.Record, prefix string) error {
	if d.Revoked {
		return ErrRevoked
	}
	switch d.Role {
	case RoleCoach:
		return nil // kinds and bodies are the validator's business
	case RoleStaff:
		if !slices.Contains(staffKinds, rec.Kind) {
			return forbid("kind", "%sa staff device cannot write %s; ask a coach", prefix, kindPlural(rec.Kind))
		}
		return nil
	case RoleAthlete:
		if !slices.Contains(athleteKinds, rec.Kind) {
			return forbid("kind", "%san athlete's device can write %s, not %s", prefix, pluralsOf(athleteKinds), kindPlural(rec.Kind))
		}
		if d.Athlete == "" {
			return forbid("athlete", "%sthis device is joined to no athlete; ask the coach to join it again", prefix)
		}
		if rec.Athlete != d.Athlete {
			who := "the whole camp's"
			if rec.Athlete != "" {
				who = "another athlete's"
			}
			return forbid("athlete", "%sthis device belongs to one athlete; it cannot write %s entries", prefix, who)
		}
		return nil
	}
	return forbid("", "this device has no role")
}

// kindWords is a kind's words for one entry.
func kindWords(k string) string {
	if kind, ok := records.KindOf(k); ok {
		return kind.Label
	}
	return "entry"
}

// kindPlural is a kind's words for several entries ("jump tests"); an
// unknown kind is named as sent.
func kindPlural(k string) string {
	if kind, ok := records.KindOf(k); ok {
		return kind.Plural
	}
	if k == "" {
		return "entries without a kind"
	}
	return fmt.Sprintf("%q records", k)
}

// article is "a" or "an" for a role name.
func article(word string) string {
	if word != "" && strings.ContainsRune("aeiou", rune(word[0])) {
		return "an"
	}
	return "a"
}
