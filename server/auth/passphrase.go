package auth

import (
	"crypto/sha256"
	"crypto/subtle"
	"encoding/base64"
	"errors"
	"fmt"
	"strings"
	"unicode/utf8"

	devsync "cornerbook/sync"

	bolt "go.etcd.io/bbolt"
	"golang.org/x/crypto/bcrypt"
)

// Passphrase length, in characters.
const (
	MinPassphrase = 10
	MaxPassphrase = 256
)

var keyPassphrase = []byte("passphrase_bcrypt_sha256")

const passKey = "passphrase" // the key of the camp-wide ceiling

// SourceLaptop is the source of an attempt made on the hub's own screen
// (FromLaptop): its attempts are neither limited nor counted, so no
// flood from the camp Wi-Fi can lock the coach out of the laptop.
const SourceLaptop = "laptop"

// beginPass asks both budgets for one passphrase or setup-code attempt
// from a source address: its own (Options.Attempts per window) and the
// camp-wide ceiling (Options.GlobalAttempts), so one guessing device
// cannot make the right passphrase answer "too many tries" for everyone,
// and many addresses together cannot guess faster than the ceiling.
func (s *Store) beginPass(from string) (own, all *Attempt, err error) {
	if from == SourceLaptop {
		return nil, nil, nil
	}
	now := s.opt.Now()
	own, err = s.passLimit.Begin("from "+from, now)
	if err != nil {
		return nil, nil, err
	}
	all, err = s.passGlobal.Begin(passKey, now)
	if err != nil {
		own.Succeeded() // not checked: not a failure of this source
		return nil, nil, err
	}
	return own, all, nil
}

// prehash maps any passphrase to 44 ASCII bytes before bcrypt, which
// reads only the first 72 bytes of its input: a long passphrase is then
// fully used, and base64 keeps NUL bytes out of bcrypt's input (common
// practice, no source).
func prehash(p string) []byte {
	sum := sha256.Sum256([]byte(p))
	return []byte(base64.StdEncoding.EncodeToString(sum[:]))
}

func validPassphrase(p string) error {
	if !utf8.ValidString(p) {
		return devsync.Invalid("passphrase", "is not valid text")
	}
	n := utf8.RuneCountInString(p)
	if n < MinPassphrase {
		return devsync.Invalid("passphrase", "must be at least %d characters (it has %d); a few words you will remember work well", MinPassphrase, n)
	}
	if n > MaxPassphrase {
		return devsync.Invalid("passphrase", "must be at most %d characters (it has %d)", MaxPassphrase, n)
	}
	if strings.TrimSpace(p) == "" {
		return devsync.Invalid("passphrase", "cannot be only spaces")
	}
	return nil
}

// HasPassphrase reports whether the coach's passphrase is set.
func (s *Store) HasPassphrase() bool {
	has := false
	_ = s.db.View(func(tx *bolt.Tx) error {
		has = tx.Bucket(bucketMeta).Get(keyPassphrase) != nil
		return nil
	})
	return has
}

// SetPassphrase sets or replaces the coach's passphrase. The caller
// decides who may: the laptop itself (localhost) or a coach device. A
// passphrase that is too short or too long is refused with a
// *devsync.FieldError and the stored one is kept.
func (s *Store) SetPassphrase(p string) error {
	if err := validPassphrase(p); err != nil {
		return err
	}
	hash, err := bcrypt.GenerateFromPassword(prehash(p), s.opt.BcryptCost)
	if err != nil {
		return fmt.Errorf("auth: hashing the passphrase: %w", err)
	}
	if err := s.db.Update(func(tx *bolt.Tx) error {
		return tx.Bucket(bucketMeta).Put(keyPassphrase, hash)
	}); err != nil {
		return fmt.Errorf("auth: storing the passphrase: %w", err)
	}
	s.mu.Lock()
	s.setupCode = ""
	s.mu.Unlock()
	return nil
}

// SetupCode is the one-time code, printed in the hub's console, that lets
// the coach set the first passphrase from another machine. It is empty
// once a passphrase is set. It lives in memory only: each start without a
// passphrase prints a new one.
func (s *Store) SetupCode() string {
	s.mu.Lock()
	defer s.mu.Unlock()
	return s.setupCode
}

// SetupWithCode sets the first passphrase from another machine, given the
// setup code. Wrong codes count against the passphrase attempt budget.
func (s *Store) SetupWithCode(code, passphrase string) error {
	return s.SetupWithCodeFrom(code, passphrase, "")
}

// SetupWithCodeFrom is SetupWithCode for an attempt from a source address
// (SourceLaptop for the hub's own screen).
func (s *Store) SetupWithCodeFrom(code, passphrase, from string) error {
	if err := validPassphrase(passphrase); err != nil {
		return err
	}
	if s.HasPassphrase() {
		return ErrPassphraseSet
	}
	own, all, err := s.beginPass(from)
	if err != nil {
		return err
	}
	att := attempts{own, all}
	s.mu.Lock()
	want := s.setupCode
	s.mu.Unlock()
	got := normalizeCode(code)
	if want == "" || subtle.ConstantTimeCompare([]byte(got), []byte(want)) != 1 {
		att.Failed()
		if want == "" {
			return ErrPassphraseSet
		}
		return ErrBadSetupCode
	}
	att.Succeeded()
	hash, err := bcrypt.GenerateFromPassword(prehash(passphrase), s.opt.BcryptCost)
	if err != nil {
		return fmt.Errorf("auth: hashing the passphrase: %w", err)
	}
	err = s.db.Update(func(tx *bolt.Tx) error {
		b := tx.Bucket(bucketMeta)
		if b.Get(keyPassphrase) != nil {
			return ErrPassphraseSet // someone set it meanwhile
		}
		return b.Put(keyPassphrase, hash)
	})
	if err != nil {
		if errors.Is(err, ErrPassphraseSet) {
			return err
		}
		return fmt.Errorf("auth: storing the passphrase: %w", err)
	}
	s.mu.Lock()
	s.setupCode = ""
	s.mu.Unlock()
	return nil
}

// CheckPassphrase checks p against the coach's passphrase, as one
// unnamed source (CheckPassphraseFrom).
func (s *Store) CheckPassphrase(p string) error { return s.CheckPassphraseFrom(p, "") }

// CheckPassphraseFrom checks p against the coach's passphrase. After
// Options.Attempts wrong ones within the window from one source address,
// or Options.GlobalAttempts from all addresses together, further attempts
// fail with a *ThrottledError without being checked, until the oldest
// wrong attempt leaves the window. The laptop itself (SourceLaptop) is
// never refused.
func (s *Store) CheckPassphraseFrom(p, from string) error {
	own, all, err := s.beginPass(from)
	if err != nil {
		return err
	}
	att := attempts{own, all}
	var hash []byte
	if err := s.db.View(func(tx *bolt.Tx) error {
		hash = append([]byte(nil), tx.Bucket(bucketMeta).Get(keyPassphrase)...)
		return nil
	}); err != nil {
		att.Succeeded() // not the caller's fault
		return fmt.Errorf("auth: reading the passphrase: %w", err)
	}
	if len(hash) == 0 {
		att.Succeeded()
		return ErrNoPassphrase
	}
	if len(p) > 4*MaxPassphrase { // do not hash megabytes sent to waste time
		att.Failed()
		return ErrWrongPassphrase
	}
	switch err := s.opt.CompareHash(hash, prehash(p)); {
	case err == nil:
		att.Succeeded()
		return nil
	case errors.Is(err, bcrypt.ErrMismatchedHashAndPassword):
		att.Failed()
		return ErrWrongPassphrase
	default:
		att.Succeeded()
		return fmt.Errorf("auth: checking the passphrase: %w", err)
	}
}

// Login checks the passphrase and, if right, pairs a new coach device
// named LaptopName, returning it and its token. Use it for a coach
// signing in on a browser that is not the hub's own screen.
func (s *Store) Login(passphrase string) (Device, string, error) {
	return s.LoginFrom(passphrase, "")
}

// LoginFrom is Login for an attempt from a source address (SourceLaptop
// for the hub's own screen).
func (s *Store) LoginFrom(passphrase, from string) (Device, string, error) {
	if err := s.CheckPassphraseFrom(passphrase, from); err != nil {
		return Device{}, "", err
	}
	now := s.opt.Now()
	var dev Device
	var token string
	err := s.db.Update(func(tx *bolt.Tx) error {
		var err error
		dev, token, err = s.addDevice(tx, LaptopName, RoleCoach, "", "passphrase", now)
		return err
	})
	if err != nil {
		return Device{}, "", err
	}
	return dev, token, nil
}

// attempts reports one outcome to both budgets of an attempt.
type attempts [2]*Attempt

func (a attempts) Failed() {
	a[0].Failed()
	a[1].Failed()
}

func (a attempts) Succeeded() {
	a[0].Succeeded()
	a[1].Succeeded()
}
