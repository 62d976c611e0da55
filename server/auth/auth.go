// Package auth decides who may talk to the hub and what they may do: the
// coach's passphrase, one-time join codes that pair a phone or tablet to a
// role, device tokens, and the read/write policy of each role. It keeps
// its state in its own bbolt buckets in the hub's database file and knows
// nothing of HTTP routes or record storage; the server wires it in.
//
// Secrets are never stored: the passphrase as a bcrypt hash, device tokens
// and join codes as SHA-256 hashes, so a backup or a stolen data folder
// holds nothing that opens the hub.
package auth

import (
	"encoding/json"
	"errors"
	"fmt"
	"sync"
	"time"

	bolt "go.etcd.io/bbolt"
	"golang.org/x/crypto/bcrypt"
)

// Bucket names, in the hub's database file.
var (
	bucketMeta    = []byte("auth_meta")    // passphrase hash
	bucketDevices = []byte("auth_devices") // device id → device (JSON, with token hash)
	bucketTokens  = []byte("auth_tokens")  // SHA-256(token) → device id
	bucketJoins   = []byte("auth_joins")   // SHA-256(code) → join (JSON)
)

// Role is what a device may do.
type Role string

// Roles.
const (
	RoleCoach   Role = "coach"   // everything: plans, thresholds, devices, backups
	RoleStaff   Role = "staff"   // reads all, writes training records
	RoleAthlete Role = "athlete" // reads and writes only its own athlete's records
)

// Valid reports whether r is one of the three roles.
func (r Role) Valid() bool { return r == RoleCoach || r == RoleStaff || r == RoleAthlete }

// Defaults.
const (
	DefaultBcryptCost     = 12
	DefaultAttempts       = 10          // wrong attempts allowed per window and source
	DefaultGlobalAttempts = 60          // wrong passphrases allowed per window from all sources
	DefaultWindow         = time.Minute // rolling window of the limiters
	JoinValidity          = 10 * time.Minute
	// SeenEvery: Authenticate writes "last seen" at most this often, so a
	// busy device does not cost a disk sync per request.
	SeenEvery = time.Minute
	// LaptopName names the coach device Login creates when the sign-in
	// gives no name: never a name of the hub laptop itself.
	LaptopName = "coach device (passphrase)"
)

// Errors. Each has a message a coach can read; callers match them with
// errors.Is (the returned errors often wrap them with detail).
var (
	ErrThrottled       = errors.New("too many wrong attempts; wait a minute and try again")
	ErrNoPassphrase    = errors.New("no coach passphrase is set yet; set one on the hub laptop first")
	ErrWrongPassphrase = errors.New("wrong passphrase")
	ErrPassphraseSet   = errors.New("the coach passphrase is already set; change it on the hub laptop's own screen (Camp set-up)")
	ErrBadSetupCode    = errors.New("the setup code is wrong; it is printed in the hub's console")
	ErrJoinUnknown     = errors.New("join code not recognised; check it or ask the coach for a new one")
	ErrJoinUsed        = errors.New("this join code has already been used; ask the coach for a new one")
	ErrJoinExpired     = errors.New("this join code has expired; ask the coach for a new one")
	ErrNoToken         = errors.New("this device is not paired with the hub; join with a code from the coach")
	ErrUnknownToken    = errors.New("this device's pairing is not known to the hub; join again with a code from the coach")
	ErrRevoked         = errors.New("this device was removed by the coach; join again with a new code")
	ErrUnknownDevice   = errors.New("no such device")
	ErrForbidden       = errors.New("not allowed for this device")
)

// ThrottledError is ErrThrottled with the time until the next attempt is
// allowed (for a Retry-After header).
type ThrottledError struct{ RetryAfter time.Duration }

func (e *ThrottledError) Error() string {
	secs := int(e.RetryAfter.Round(time.Second) / time.Second)
	if secs < 1 {
		secs = 1
	}
	return fmt.Sprintf("too many wrong attempts; try again in %d s", secs)
}

// Is makes errors.Is(err, ErrThrottled) true.
func (e *ThrottledError) Is(target error) bool { return target == ErrThrottled }

// Options tune a Store. The zero value is production settings.
type Options struct {
	// Now is the clock for calls that take no time argument (passphrase
	// checks, Login, Revoke). Default time.Now.
	Now func() time.Time
	// BcryptCost for new passphrase hashes. Default 12.
	BcryptCost int
	// CompareHash checks a passphrase against its stored hash. Default
	// bcrypt.CompareHashAndPassword; tests wrap it to count the checks.
	CompareHash func(hash, passphrase []byte) error
	// Attempts wrong passphrases or wrong join codes per source address
	// are allowed per Window; the next ones are refused without being
	// checked. Defaults 10 and one minute.
	Attempts int
	Window   time.Duration
	// GlobalAttempts wrong passphrases from all addresses together are
	// allowed per Window (the laptop's own screen is never limited).
	// Default 60: bcrypt at cost 12 takes about a quarter of a second, so
	// the ceiling also bounds the hub's time spent on guesses.
	GlobalAttempts int
}

// Store is the hub's pairing and passphrase state.
type Store struct {
	db         *bolt.DB
	opt        Options
	passLimit  *Limiter // key: source address
	passGlobal *Limiter // key "passphrase": the camp-wide ceiling
	joinLimit  *Limiter // key: remote address

	mu        sync.Mutex
	setupCode string // one-time code for setting the passphrase remotely; "" once used
}

// Open creates the buckets if needed and returns the store. The database
// stays owned by the caller (Store never closes it).
func Open(db *bolt.DB, opt Options) (*Store, error) {
	if opt.Now == nil {
		opt.Now = time.Now
	}
	if opt.BcryptCost == 0 {
		opt.BcryptCost = DefaultBcryptCost
	}
	if opt.BcryptCost < bcrypt.MinCost || opt.BcryptCost > bcrypt.MaxCost {
		return nil, fmt.Errorf("auth: bcrypt cost %d is outside %d–%d", opt.BcryptCost, bcrypt.MinCost, bcrypt.MaxCost)
	}
	if opt.CompareHash == nil {
		opt.CompareHash = bcrypt.CompareHashAndPassword
	}
	if opt.Attempts <= 0 {
		opt.Attempts = DefaultAttempts
	}
	if opt.Window <= 0 {
		opt.Window = DefaultWindow
	}
	if opt.GlobalAttempts <= 0 {
		opt.GlobalAttempts = DefaultGlobalAttempts
	}
	err := db.Update(func(tx *bolt.Tx) error {
		for _, b := range [][]byte{bucketMeta, bucketDevices, bucketTokens, bucketJoins} {
			if _, err := tx.CreateBucketIfNotExists(b); err != nil {
				return err
			}
		}
		return nil
	})
	if err != nil {
		return nil, fmt.Errorf("auth: creating buckets: %w", err)
	}
	s := &Store{
		db:         db,
		opt:        opt,
		passLimit:  NewLimiter(opt.Attempts, opt.Window),
		passGlobal: NewLimiter(opt.GlobalAttempts, opt.Window),
		joinLimit:  NewLimiter(opt.Attempts, opt.Window),
	}
	if !s.HasPassphrase() {
		code, err := randomCode(CodeLength)
		if err != nil {
			return nil, err
		}
		s.setupCode = code
	}
	return s, nil
}

// Device is one paired phone, tablet or coach session.
type Device struct {
	ID       string    `json:"id"`
	Name     string    `json:"name"`
	Role     Role      `json:"role"`
	Athlete  string    `json:"athlete,omitempty"` // for athlete devices: the one athlete they belong to
	Created  time.Time `json:"created"`
	JoinedBy string    `json:"joined_by,omitempty"` // who made the join code
	LastSeen time.Time `json:"last_seen,omitzero"`
	LastSync time.Time `json:"last_sync,omitzero"`
	// Waiting is what the device said in its last push: how many entries it
	// still held unsynced after that push. A device that has gone quiet
	// with Waiting > 0 has entries the hub has not seen.
	Waiting   int       `json:"waiting"`
	Revoked   bool      `json:"revoked,omitempty"`
	RevokedAt time.Time `json:"revoked_at,omitzero"`
}

// stored is a Device as kept in bbolt: with the token hash, never the token.
type stored struct {
	Device
	TokenHash []byte `json:"token_sha256"`
}

func getDevice(tx *bolt.Tx, id string) (*stored, error) {
	v := tx.Bucket(bucketDevices).Get([]byte(id))
	if v == nil {
		return nil, ErrUnknownDevice
	}
	var d stored
	if err := json.Unmarshal(v, &d); err != nil {
		return nil, fmt.Errorf("auth: device %s is damaged: %w", id, err)
	}
	return &d, nil
}

func putDevice(tx *bolt.Tx, d *stored) error {
	v, err := json.Marshal(d)
	if err != nil {
		return err
	}
	return tx.Bucket(bucketDevices).Put([]byte(d.ID), v)
}
