package auth

import (
	"errors"
	"testing"

	"cornerbook/server/records"
	devsync "cornerbook/sync"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// writeRule is, per kind, whether an athlete's device (for its own
// athlete) and a staff device may write it. Written out by hand from the
// decisions in policy.go, not derived from its lists.
var writeRule = map[string]struct{ athlete, staff bool }{
	records.KindAthlete:     {false, false},
	records.KindSettings:    {false, false},
	records.KindBout:        {false, false},
	records.KindCheckin:     {true, true},
	records.KindJump:        {false, true},
	records.KindRound:       {false, true},
	records.KindIntervals:   {false, true},
	records.KindSession:     {true, true},
	records.KindIncident:    {false, true},
	records.KindClearance:   {false, false},
	records.KindDecision:    {false, false},
	records.KindNote:        {true, true},
	records.KindFitnessTest: {false, true},
	records.KindStrength:    {false, true},
	records.KindWeighIn:     {false, true}, // weighed by the coach or staff, at the scales
	records.KindRTSStep:     {false, true}, // each step is supervised
}

var (
	coach   = Device{ID: "dev-coach", Role: RoleCoach}
	staff   = Device{ID: "dev-staff", Role: RoleStaff}
	athA    = Device{ID: "dev-ath-a", Role: RoleAthlete, Athlete: "ath-A"}
	unbound = Device{ID: "dev-ath-x", Role: RoleAthlete} // should never exist; must see nothing
)

// rec builds a record of kind for whose: "own" (ath-A), "other" (ath-B)
// or "camp" (no athlete). Athlete records carry the id as their identity.
func rec(dev Device, kind, whose string) *devsync.Record {
	r := &devsync.Record{ID: "rec-1", Kind: kind, Device: dev.ID}
	ath := map[string]string{"own": "ath-A", "other": "ath-B", "camp": ""}[whose]
	if kind == records.KindAthlete {
		r.ID = ath
		if r.ID == "" {
			r.ID = "rec-1"
		}
	}
	r.Athlete = ath
	return r
}

func forbiddenField(t *testing.T, err error) string {
	t.Helper()
	require.ErrorIs(t, err, ErrForbidden)
	var fe *devsync.FieldError
	require.True(t, errors.As(err, &fe))
	assert.NotEmpty(t, fe.Reason)
	return fe.Field
}

func TestRuleTableCoversEveryKind(t *testing.T) {
	assert.Len(t, writeRule, len(records.Kinds))
	for _, k := range records.Kinds {
		_, ok := writeRule[k]
		assert.True(t, ok, k)
	}
}

func TestPolicyEveryRoleKindAndOwner(t *testing.T) {
	for _, kind := range records.Kinds {
		rule := writeRule[kind]
		for _, whose := range []string{"own", "other", "camp"} {
			name := kind + "/" + whose

			// Coach: reads and writes everything.
			assert.True(t, CanRead(coach, rec(coach, kind, whose)), "coach read "+name)
			assert.NoError(t, CanWrite(coach, rec(coach, kind, whose)), "coach write "+name)

			// Staff: reads everything, writes the training kinds for anyone.
			assert.True(t, CanRead(staff, rec(staff, kind, whose)), "staff read "+name)
			if err := CanWrite(staff, rec(staff, kind, whose)); rule.staff {
				assert.NoError(t, err, "staff write "+name)
			} else {
				assert.Equal(t, "kind", forbiddenField(t, err), "staff write "+name)
			}

			// Athlete: own records, own athlete record, camp-wide settings.
			wantRead := whose == "own" || (whose == "camp" && kind == records.KindSettings)
			assert.Equal(t, wantRead, CanRead(athA, rec(athA, kind, whose)), "athlete read "+name)
			err := CanWrite(athA, rec(athA, kind, whose))
			switch {
			case !rule.athlete:
				assert.Equal(t, "kind", forbiddenField(t, err), "athlete write "+name)
			case whose == "own":
				assert.NoError(t, err, "athlete write "+name)
			default:
				assert.Equal(t, "athlete", forbiddenField(t, err), "athlete write "+name)
			}

			// An athlete device bound to nobody sees and writes nothing.
			assert.False(t, CanRead(unbound, rec(unbound, kind, whose)), "unbound read "+name)
			assert.Error(t, CanWrite(unbound, rec(unbound, kind, whose)), "unbound write "+name)

			// Revoked devices: nothing, whatever the role.
			for _, d := range []Device{coach, staff, athA} {
				d.Revoked = true
				assert.False(t, CanRead(d, rec(d, kind, whose)), "revoked read "+name)
				assert.ErrorIs(t, CanWrite(d, rec(d, kind, whose)), ErrRevoked, "revoked write "+name)
			}
		}
	}
}

func TestPolicyTombstonesFollowTheSameRules(t *testing.T) {
	r := rec(athA, records.KindCheckin, "own")
	r.Deleted = true
	assert.True(t, CanRead(athA, r))
	assert.NoError(t, CanWrite(athA, r))
	o := rec(athA, records.KindCheckin, "other")
	o.Deleted = true
	assert.False(t, CanRead(athA, o))
	assert.Error(t, CanWrite(athA, o))
}

func TestPolicyAthleteRecordIdentity(t *testing.T) {
	// An athlete record whose athlete field names ath-A but whose id is
	// another athlete's is not ath-A's own record.
	r := &devsync.Record{ID: "ath-B", Kind: records.KindAthlete, Athlete: "ath-A"}
	assert.False(t, CanRead(athA, r))
}

func TestPolicyDeviceMustBeTheWriter(t *testing.T) {
	for _, d := range []Device{coach, staff, athA} {
		r := rec(d, records.KindCheckin, "own")
		r.Device = "someone-else"
		err := CanWrite(d, r)
		assert.Equal(t, "device", forbiddenField(t, err), string(d.Role))
		assert.Contains(t, err.Error(), d.ID)
	}
	assert.Equal(t, "record", forbiddenField(t, CanWrite(coach, nil)))
}

func TestPolicyUnknownKind(t *testing.T) {
	for _, d := range []Device{staff, athA} {
		assert.Equal(t, "kind", forbiddenField(t, CanWrite(d, rec(d, "potion", "own"))))
		assert.Equal(t, "kind", forbiddenField(t, CanWrite(d, rec(d, "", "own"))))
	}
	// The coach's pushes go on to validation, which names unknown kinds.
	assert.NoError(t, CanWrite(coach, rec(coach, "potion", "own")))
}

func TestPolicyErrorsReadWell(t *testing.T) {
	err := CanWrite(athA, rec(athA, records.KindCheckin, "other"))
	assert.EqualError(t, err, "athlete: this device belongs to one athlete; it cannot write another athlete's entries")
	err = CanWrite(athA, rec(athA, records.KindJump, "own"))
	assert.EqualError(t, err, `kind: an athlete's device can write check-ins, sessions and notes, not jump tests`)
	err = CanWrite(staff, rec(staff, records.KindDecision, "own"))
	assert.EqualError(t, err, `kind: a staff device cannot write decisions; ask a coach`)
	err = CanWrite(staff, rec(staff, "potion", "own"))
	assert.EqualError(t, err, `kind: a staff device cannot write "potion" records; ask a coach`)
}

func TestCanOverwrite(t *testing.T) {
	// An athlete may not take another athlete's record by reusing its id.
	stolen := rec(athA, records.KindCheckin, "own")
	theirs := rec(staff, records.KindCheckin, "other")
	err := CanOverwrite(athA, theirs, stolen)
	assert.Equal(t, "athlete", forbiddenField(t, err))
	assert.Contains(t, err.Error(), "the stored version")
	// Nor turn a jump staff recorded into a check-in.
	jump := rec(staff, records.KindJump, "own")
	assert.Equal(t, "kind", forbiddenField(t, CanOverwrite(athA, jump, stolen)))
	// Its own athlete's check-in, written by staff: an athlete's device
	// edits, deletes and restores only what it wrote.
	err = CanOverwrite(athA, rec(staff, records.KindCheckin, "own"), stolen)
	assert.Equal(t, "id", forbiddenField(t, err))
	assert.Contains(t, err.Error(), "only its own entries")
	assert.NoError(t, CanOverwrite(athA, rec(athA, records.KindCheckin, "own"), stolen), "what it wrote, it may correct")
	tomb := rec(staff, records.KindNote, "own")
	tomb.Deleted = true
	assert.Equal(t, "id", forbiddenField(t, CanOverwrite(athA, tomb, rec(athA, records.KindNote, "own"))), "nor revive what another device deleted")
	assert.NoError(t, CanOverwrite(athA, nil, stolen))

	// Staff may not turn a coach's decision into a note.
	dec := rec(coach, records.KindDecision, "own")
	note := rec(staff, records.KindNote, "own")
	assert.Equal(t, "kind", forbiddenField(t, CanOverwrite(staff, dec, note)))
	// The coach may overwrite anything.
	assert.NoError(t, CanOverwrite(coach, dec, rec(coach, records.KindNote, "other")))
	// The incoming version is checked first.
	bad := rec(athA, records.KindBout, "own")
	assert.Equal(t, "kind", forbiddenField(t, CanOverwrite(athA, nil, bad)))
}

// A staff-only note never reaches an athlete's device; a note shared with
// the athlete does, and so does every note the athlete's device wrote.
func TestPolicyNotesCarryAnAudience(t *testing.T) {
	staffOnly := rec(staff, records.KindNote, "own")
	staffOnly.Body = []byte(`{"text":"Watch the left knee; do not tell him yet.","audience":"staff"}`)
	noAudience := rec(staff, records.KindNote, "own")
	noAudience.Body = []byte(`{"text":"Older note."}`)
	shared := rec(staff, records.KindNote, "own")
	shared.Body = []byte(`{"text":"Great pads today.","audience":"athlete"}`)
	own := rec(athA, records.KindNote, "own")
	own.Body = []byte(`{"text":"Left hand sore."}`)
	assert.False(t, CanRead(athA, staffOnly))
	assert.False(t, CanRead(athA, noAudience), "no audience: staff only")
	assert.True(t, CanRead(athA, shared))
	assert.True(t, CanRead(athA, own))
	for _, d := range []Device{coach, staff} {
		assert.True(t, CanRead(d, staffOnly))
	}
}

func TestRequireCoach(t *testing.T) {
	assert.NoError(t, RequireCoach(coach))
	assert.ErrorIs(t, RequireCoach(staff), ErrForbidden)
	assert.ErrorIs(t, RequireCoach(athA), ErrForbidden)
	assert.Contains(t, RequireCoach(staff).Error(), "only a coach's device")
	assert.True(t, coach.IsCoach())
	assert.False(t, staff.IsCoach())
}
