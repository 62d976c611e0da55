package auth

import (
	"crypto/rand"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/base64"
	"encoding/json"
	"fmt"
	"slices"
	"strings"
	"time"
	"unicode"

	"cornerbook/server/records"
	devsync "cornerbook/sync"

	"github.com/google/uuid"
	bolt "go.etcd.io/bbolt"
)

// TokenBytes is the size of a device token's random part: 256 bits.
const TokenBytes = 32

// MaxDeviceName is the longest device name, in characters.
const MaxDeviceName = 60

func newToken() (string, []byte, error) {
	raw := make([]byte, TokenBytes)
	if _, err := rand.Read(raw); err != nil {
		return "", nil, fmt.Errorf("auth: making a token: %w", err)
	}
	tok := base64.RawURLEncoding.EncodeToString(raw)
	return tok, tokenHash(tok), nil
}

func tokenHash(tok string) []byte {
	sum := sha256.Sum256([]byte(tok))
	return sum[:]
}

func validDeviceName(name string) (string, error) {
	name = strings.TrimSpace(name)
	if name == "" {
		return "", devsync.Invalid("name", "give this device a name the coach will recognise, e.g. \"Sam's phone\"")
	}
	if why := records.CheckText(name, MaxDeviceName, false); why != "" {
		return "", devsync.Invalid("name", "%s", why)
	}
	if passesForTheHub(name) {
		return "", devsync.Invalid("name", "%q would pass for the hub laptop itself; name the device after its owner, e.g. \"Sam's phone\"", name)
	}
	return name, nil
}

// laptopNames are what the hub laptop is called on screens; no paired
// device may take one of them (compared without case, spacing,
// punctuation or invisible characters).
var laptopNames = []string{"coach laptop", "coachs laptop", "the coachs laptop", "laptop", "hub", "hub laptop", "the hub", "cornerbook hub", "cornerbook laptop", "this laptop"}

func passesForTheHub(name string) bool {
	var b strings.Builder
	space := false
	for _, r := range strings.ToLower(name) {
		switch {
		case unicode.IsLetter(r) || unicode.IsDigit(r):
			if space && b.Len() > 0 {
				b.WriteByte(' ')
			}
			space = false
			b.WriteRune(r)
		case unicode.IsSpace(r) || r == '-' || r == '_' || r == '.':
			space = true
		}
	}
	return slices.Contains(laptopNames, b.String())
}

// addDevice stores a new device and its token hash; the token itself is
// returned once and never stored.
func (s *Store) addDevice(tx *bolt.Tx, name string, role Role, athlete, joinedBy string, now time.Time) (Device, string, error) {
	id, err := uuid.NewV7()
	if err != nil {
		return Device{}, "", fmt.Errorf("auth: device id: %w", err)
	}
	tok, hash, err := newToken()
	if err != nil {
		return Device{}, "", err
	}
	d := &stored{
		Device: Device{
			ID: id.String(), Name: name, Role: role, Athlete: athlete,
			Created: now.UTC(), JoinedBy: joinedBy, LastSeen: now.UTC(),
		},
		TokenHash: hash,
	}
	if err := putDevice(tx, d); err != nil {
		return Device{}, "", err
	}
	if err := tx.Bucket(bucketTokens).Put(hash, []byte(d.ID)); err != nil {
		return Device{}, "", err
	}
	return d.Device, tok, nil
}

// Authenticate finds the device a token belongs to. The token is hashed
// and the hash looked up; the stored hash is then compared in constant
// time. Looking up by the hash of a 256-bit random token leaks nothing
// useful through timing: learning which hashes are near a guess's hash
// does not help find a token. A revoked device fails with ErrRevoked.
// Last seen is written at most once per SeenEvery.
func (s *Store) Authenticate(token string, now time.Time) (Device, error) {
	if token == "" {
		return Device{}, ErrNoToken
	}
	if len(token) != base64.RawURLEncoding.EncodedLen(TokenBytes) {
		return Device{}, ErrUnknownToken
	}
	h := tokenHash(token)
	var d *stored
	err := s.db.View(func(tx *bolt.Tx) error {
		id := tx.Bucket(bucketTokens).Get(h)
		if id == nil {
			return ErrUnknownToken
		}
		var err error
		if d, err = getDevice(tx, string(id)); err != nil {
			return err
		}
		if subtle.ConstantTimeCompare(d.TokenHash, h) != 1 {
			return ErrUnknownToken
		}
		return nil
	})
	if err != nil {
		return Device{}, err
	}
	if d.Revoked {
		return Device{}, ErrRevoked
	}
	if now.Sub(d.LastSeen) >= SeenEvery {
		err := s.db.Update(func(tx *bolt.Tx) error {
			cur, err := getDevice(tx, d.ID)
			if err != nil {
				return err
			}
			if cur.Revoked {
				return ErrRevoked
			}
			if now.Sub(cur.LastSeen) < SeenEvery {
				d = cur
				return nil
			}
			cur.LastSeen = now.UTC()
			d = cur
			return putDevice(tx, cur)
		})
		if err != nil {
			return Device{}, err
		}
	}
	return d.Device, nil
}

// Device returns one device by id.
func (s *Store) Device(id string) (Device, error) {
	var d *stored
	err := s.db.View(func(tx *bolt.Tx) (err error) {
		d, err = getDevice(tx, id)
		return err
	})
	if err != nil {
		return Device{}, err
	}
	return d.Device, nil
}

// Devices lists every device ever paired, oldest first, revoked ones
// included (marked), so the coach can see what a removed phone last did.
func (s *Store) Devices() ([]Device, error) {
	var out []Device
	err := s.db.View(func(tx *bolt.Tx) error {
		return tx.Bucket(bucketDevices).ForEach(func(k, v []byte) error {
			var d stored
			if err := json.Unmarshal(v, &d); err != nil {
				return fmt.Errorf("auth: device %s is damaged: %w", k, err)
			}
			out = append(out, d.Device)
			return nil
		})
	})
	if err != nil {
		return nil, err
	}
	slices.SortStableFunc(out, func(a, b Device) int {
		if c := a.Created.Compare(b.Created); c != 0 {
			return c
		}
		return strings.Compare(a.ID, b.ID)
	})
	return out, nil
}

// Revoke removes a device's access at once: its token stops working
// (Authenticate then says ErrRevoked). The device stays in the list.
// Revoking twice is not an error.
func (s *Store) Revoke(id string) error {
	now := s.opt.Now().UTC()
	return s.db.Update(func(tx *bolt.Tx) error {
		d, err := getDevice(tx, id)
		if err != nil {
			return err
		}
		if d.Revoked {
			return nil
		}
		d.Revoked, d.RevokedAt = true, now
		return putDevice(tx, d)
	})
}

// Rename changes a device's name (as the coach sees it in the list).
func (s *Store) Rename(id, name string) error {
	name, err := validDeviceName(name)
	if err != nil {
		return err
	}
	return s.db.Update(func(tx *bolt.Tx) error {
		d, err := getDevice(tx, id)
		if err != nil {
			return err
		}
		d.Name = name
		return putDevice(tx, d)
	})
}

// ReportSync records a finished push from a device: when, and how many
// entries it said were still waiting on it afterwards.
func (s *Store) ReportSync(deviceID string, now time.Time, waiting int) error {
	if waiting < 0 {
		return devsync.Invalid("waiting", "cannot be negative (got %d)", waiting)
	}
	return s.db.Update(func(tx *bolt.Tx) error {
		d, err := getDevice(tx, deviceID)
		if err != nil {
			return err
		}
		d.LastSync, d.Waiting = now.UTC(), waiting
		if now.After(d.LastSeen) {
			d.LastSeen = now.UTC()
		}
		return putDevice(tx, d)
	})
}
