package sync

import (
	"bytes"
	"encoding/json"
	"fmt"
	"strings"
)

// Record is one entry as devices, export and import carry it (PRODUCT.md,
// "Record format"). Body is kind-specific JSON, validated by the server's
// record kinds.
type Record struct {
	ID      string `json:"id"`                // client-made UUIDv7 (or ULID)
	Kind    string `json:"kind"`              // athlete, checkin, jump, ...
	Athlete string `json:"athlete,omitempty"` // athlete id; empty for camp-wide kinds
	Day     string `json:"day,omitempty"`     // local calendar day YYYY-MM-DD, chosen on the device
	At      string `json:"at"`                // RFC 3339 with offset, when it was recorded
	Device  string `json:"device"`            // device that wrote this version
	Stamp   HLC    `json:"stamp"`             // hybrid logical clock of this version
	// Gen counts explicit restores. A delete in generation g beats every
	// non-deleted version of generation g, whatever its stamp (sticky
	// delete); a restore starts generation g+1. Zero for most records.
	Gen     int             `json:"gen,omitempty"`
	Deleted bool            `json:"deleted,omitempty"`
	Body    json.RawMessage `json:"body,omitempty"`
}

// Compare orders two versions of the same record for last-writer-wins.
// It is a total order, so "keep the greater" is commutative, associative
// and idempotent: replicas that see the same versions in any order, with
// duplicates, end identical (Shapiro et al. 2011, LWW register).
//
// Order: generation, then deleted over live within a generation (sticky
// delete), then stamp, then device id, then the body bytes as a last
// deterministic tie-break.
func Compare(a, b *Record) int {
	switch {
	case a.Gen != b.Gen:
		return cmpInt(a.Gen, b.Gen)
	case a.Deleted != b.Deleted:
		if a.Deleted {
			return 1
		}
		return -1
	}
	if c := a.Stamp.Compare(b.Stamp); c != 0 {
		return c
	}
	if c := strings.Compare(a.Device, b.Device); c != 0 {
		return c
	}
	return bytes.Compare(a.Body, b.Body)
}

func cmpInt(a, b int) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// Wins reports whether incoming should replace stored (nil stored: always).
func Wins(incoming, stored *Record) bool {
	return stored == nil || Compare(incoming, stored) > 0
}

// FieldError is a rejection a coach can read: which field, and why.
type FieldError struct {
	Field  string // JSON path, e.g. "body.mass_kg"
	Reason string // plain words, e.g. "must be between 25 and 250 kg"
}

func (e *FieldError) Error() string {
	if e.Field == "" {
		return e.Reason
	}
	return fmt.Sprintf("%s: %s", e.Field, e.Reason)
}

// Invalid builds a *FieldError.
func Invalid(field, format string, args ...any) error {
	return &FieldError{Field: field, Reason: fmt.Sprintf(format, args...)}
}

// RightsError is a refusal because of who is asking, not because of a bad
// value: the device may not write this record. Storage reports it with
// code FORBIDDEN and the field.
type RightsError struct{ FieldError }

// Forbidden builds a *RightsError.
func Forbidden(field, format string, args ...any) error {
	return &RightsError{FieldError{Field: field, Reason: fmt.Sprintf(format, args...)}}
}
