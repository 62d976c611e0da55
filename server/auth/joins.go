package auth

import (
	"crypto/rand"
	"crypto/sha256"
	"encoding/json"
	"errors"
	"fmt"
	"math/big"
	"strings"
	"time"
	"unicode"

	devsync "cornerbook/sync"

	bolt "go.etcd.io/bbolt"
)

// CodeAlphabet is the alphabet of join and setup codes: capital letters
// and digits without the look-alikes 0/O, 1/I/L (31 symbols, so an
// 8-character code has about 40 bits).
const CodeAlphabet = "ABCDEFGHJKMNPQRSTUVWXYZ23456789"

// CodeLength is the length of join and setup codes.
const CodeLength = 8

// MaxAthleteID bounds an athlete id (UUIDv7 and ULID are 36 and 26).
const MaxAthleteID = 64

// Join is a join code just made; show Code (and a QR of it) to the
// joining device. Only its hash is stored.
type Join struct {
	Code    string    `json:"code"`
	Role    Role      `json:"role"`
	Athlete string    `json:"athlete,omitempty"`
	Expires time.Time `json:"expires"`
}

type joinRec struct {
	Role      Role      `json:"role"`
	Athlete   string    `json:"athlete,omitempty"`
	CreatedBy string    `json:"created_by,omitempty"`
	Created   time.Time `json:"created"`
	Expires   time.Time `json:"expires"`
	UsedAt    time.Time `json:"used_at,omitzero"`
	Device    string    `json:"device,omitempty"`
}

// keepJoins is how long used and expired codes are kept, so that a
// second attempt with one says "already used" or "expired" rather than
// "not recognised".
const keepJoins = 24 * time.Hour

func randomCode(n int) (string, error) {
	max := big.NewInt(int64(len(CodeAlphabet)))
	b := make([]byte, n)
	for i := range b {
		v, err := rand.Int(rand.Reader, max) // uniform: no modulo bias
		if err != nil {
			return "", fmt.Errorf("auth: making a code: %w", err)
		}
		b[i] = CodeAlphabet[v.Int64()]
	}
	return string(b), nil
}

// normalizeCode accepts what a person types: any case, spaces or hyphens
// between groups.
func normalizeCode(c string) string {
	return strings.Map(func(r rune) rune {
		if r == '-' || unicode.IsSpace(r) {
			return -1
		}
		return unicode.ToUpper(r)
	}, c)
}

func codeKey(code string) []byte {
	sum := sha256.Sum256([]byte("join:" + code))
	return sum[:]
}

// FormatCode splits a code for reading aloud or typing: "ABCD-EFGH".
func FormatCode(code string) string {
	if len(code) != CodeLength {
		return code
	}
	return code[:4] + "-" + code[4:]
}

func validAthleteID(id string) error {
	if len(id) > MaxAthleteID {
		return devsync.Invalid("athlete", "is not an athlete id (longer than %d characters)", MaxAthleteID)
	}
	for _, r := range id {
		if r <= ' ' || r == 0x7f || r > unicode.MaxASCII {
			return devsync.Invalid("athlete", "is not an athlete id (it contains %q)", r)
		}
	}
	return nil
}

// NewJoin makes a single-use join code for a role, valid for ten minutes.
// An athlete code is bound to one athlete id (the caller checks that the
// athlete exists); coach and staff codes take none. Expired and used codes
// older than a day are cleared out on the way.
func (s *Store) NewJoin(role Role, athleteID, createdBy string, now time.Time) (Join, error) {
	athleteID = strings.TrimSpace(athleteID)
	switch {
	case !role.Valid():
		return Join{}, devsync.Invalid("role", "must be coach, staff or athlete (got %q)", role)
	case role == RoleAthlete && athleteID == "":
		return Join{}, devsync.Invalid("athlete", "an athlete's device belongs to one athlete: choose which")
	case role != RoleAthlete && athleteID != "":
		return Join{}, devsync.Invalid("athlete", "only athlete devices belong to an athlete; leave it empty for %s %s device", article(string(role)), role)
	}
	if err := validAthleteID(athleteID); err != nil {
		return Join{}, err
	}
	j := Join{Role: role, Athlete: athleteID, Expires: now.Add(JoinValidity).UTC()}
	rec := joinRec{Role: role, Athlete: athleteID, CreatedBy: createdBy, Created: now.UTC(), Expires: j.Expires}
	v, err := json.Marshal(rec)
	if err != nil {
		return Join{}, err
	}
	err = s.db.Update(func(tx *bolt.Tx) error {
		b := tx.Bucket(bucketJoins)
		if err := sweepJoins(b, now); err != nil {
			return err
		}
		for range 8 { // a clash among live codes is ~1 in 10^11; retry anyway
			code, err := randomCode(CodeLength)
			if err != nil {
				return err
			}
			if b.Get(codeKey(code)) == nil {
				j.Code = code
				return b.Put(codeKey(code), v)
			}
		}
		return errors.New("auth: could not make a unique join code")
	})
	if err != nil {
		return Join{}, err
	}
	return j, nil
}

func sweepJoins(b *bolt.Bucket, now time.Time) error {
	var old [][]byte
	err := b.ForEach(func(k, v []byte) error {
		var r joinRec
		if json.Unmarshal(v, &r) != nil || now.Sub(r.Expires) > keepJoins {
			old = append(old, append([]byte(nil), k...))
		}
		return nil
	})
	if err != nil {
		return err
	}
	for _, k := range old {
		if err := b.Delete(k); err != nil {
			return err
		}
	}
	return nil
}

// Redeem pairs a device with a join code. from names where the attempt
// came from (the remote address): after Options.Attempts failed codes
// from it within the window, further attempts fail with a *ThrottledError
// unchecked. It returns the new device and its token — 256 random bits,
// base64url — which the device keeps; the hub keeps only its hash. A bad
// device name is refused before the code is looked at, so it neither uses
// the code nor counts as a wrong attempt.
func (s *Store) Redeem(code, deviceName, from string, now time.Time) (Device, string, error) {
	name, err := validDeviceName(deviceName)
	if err != nil {
		return Device{}, "", err
	}
	att, err := s.joinLimit.Begin(from, now)
	if err != nil {
		return Device{}, "", err
	}
	code = normalizeCode(code)
	var dev Device
	var token string
	err = s.db.Update(func(tx *bolt.Tx) error {
		b := tx.Bucket(bucketJoins)
		key := codeKey(code)
		v := b.Get(key)
		if v == nil || len(code) != CodeLength {
			return ErrJoinUnknown
		}
		var r joinRec
		if err := json.Unmarshal(v, &r); err != nil {
			return ErrJoinUnknown
		}
		if !r.UsedAt.IsZero() {
			return fmt.Errorf("%w (it was used at %s)", ErrJoinUsed, r.UsedAt.Format("15:04 UTC"))
		}
		if !now.Before(r.Expires) {
			return fmt.Errorf("%w (codes last %d minutes; this one ran out at %s)", ErrJoinExpired, int(JoinValidity/time.Minute), r.Expires.Format("15:04 UTC"))
		}
		joinedBy := r.CreatedBy
		if joinedBy == "" {
			joinedBy = "join code"
		}
		var err error
		if dev, token, err = s.addDevice(tx, name, r.Role, r.Athlete, joinedBy, now); err != nil {
			return err
		}
		r.UsedAt, r.Device = now.UTC(), dev.ID
		nv, err := json.Marshal(r)
		if err != nil {
			return err
		}
		return b.Put(key, nv)
	})
	switch {
	case err == nil:
		att.Succeeded()
		return dev, token, nil
	case errors.Is(err, ErrJoinUnknown), errors.Is(err, ErrJoinUsed), errors.Is(err, ErrJoinExpired):
		att.Failed()
	default:
		att.Succeeded() // the hub's fault, not the caller's
	}
	return Device{}, "", err
}

// CancelJoin withdraws an unused join code (the coach closed the code's
// screen, or showed it to the wrong person). Used or unknown codes fail.
func (s *Store) CancelJoin(code string) error {
	code = normalizeCode(code)
	return s.db.Update(func(tx *bolt.Tx) error {
		b := tx.Bucket(bucketJoins)
		v := b.Get(codeKey(code))
		if v == nil {
			return ErrJoinUnknown
		}
		var r joinRec
		if err := json.Unmarshal(v, &r); err == nil && !r.UsedAt.IsZero() {
			return ErrJoinUsed
		}
		return b.Delete(codeKey(code))
	})
}
