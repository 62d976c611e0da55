// Package storage keeps Cornerbook's records in one bbolt file on the hub:
// the current winner of every record, every winning version ever stored,
// an athlete/kind/day index, the change sequence that devices pull from,
// per-device mutation counters and an audit of losing versions.
//
// Every push is applied in one bbolt read-write transaction, so a nil
// return from Push means the whole batch — records, indexes, sequence and
// the device's counter — is on disk (bbolt fsyncs at commit; NoSync is
// never used). Nothing is acknowledged before that.
//
// Layout (keys big-endian where numeric, so byte order is numeric order):
//
//	meta       "epoch" → 32 hex digits, "schema" → "2"
//	records    id → u64be change sequence ‖ record JSON (current winner,
//	           tombstones included)
//	versions   id "|" u64be seq → record JSON (earlier winners, under the
//	           sequence each held; with records, the full history)
//	index      athlete "|" kind "|" day "|" id → empty (live records only)
//	changes    u64be seq → id (one entry per record, at its latest change)
//	devices    device id → {"lastN","lastPush","pushes"}
//	conflicts  id "|" u64be n → losing record JSON (audit: Conflicts; sync never reads it)
//
// Ids, athlete ids, kinds and days are validated before they reach a key,
// so none of them contains the "|" separator.
//
// Layout 1 kept the sequence in a bucket of its own ("seqs": id → u64be),
// one more put per record; Open moves a layout-1 file to layout 2 in one
// transaction, and VerifyFile and RestoreFile accept layout-1 backups.
package storage

import (
	"bytes"
	"crypto/rand"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"time"

	bolt "go.etcd.io/bbolt"
	berrors "go.etcd.io/bbolt/errors"

	devsync "cornerbook/sync"
)

// Bucket names. Packages that keep their own buckets in the same file
// (through Bolt) must not use these.
var (
	BucketMeta      = []byte("meta")
	BucketRecords   = []byte("records")
	BucketVersions  = []byte("versions")
	BucketIndex     = []byte("index")
	BucketChanges   = []byte("changes")
	BucketDevices   = []byte("devices")
	BucketConflicts = []byte("conflicts")
)

var allBuckets = [][]byte{BucketMeta, BucketRecords, BucketVersions, BucketIndex, BucketChanges, BucketDevices, BucketConflicts}

// bucketSeqsV1 is layout 1's id → sequence bucket.
var bucketSeqsV1 = []byte("seqs")

var (
	keyEpoch  = []byte("epoch")
	keySchema = []byte("schema")
)

// schemaVersion is the layout above. A file written by a later layout is
// refused rather than misread.
const (
	schemaVersion = "2"
	schemaV1      = "1"
)

// changesFill is the fill percent of the append-only changes bucket (bbolt
// README: sequential inserts pack well at 0.9–1.0). It is not persisted,
// so every write transaction sets it.
const changesFill = 0.9

const appendFill = 0.9

// scanBudget bounds how many change entries one Pull page looks at when a
// visibility filter hides most of them, so a page is always a short read
// transaction. The page then carries fewer records and More is true.
const scanBudget = 4 * devsync.MaxPullLimit

var (
	// ErrLocked is returned by Open when another process (or another Open
	// in this process) holds the file.
	ErrLocked = errors.New("the data folder is in use by another cornerbook")
	// ErrNotFound is returned for an unknown record or device.
	ErrNotFound = errors.New("not found")
)

// DamagedError is returned by Open for an existing file that fails the
// check (bbolt's page check, the layout and its invariants): a damaged
// file, an empty one or a bbolt file Cornerbook did not write.
type DamagedError struct {
	Path    string
	Problem error
}

func (e *DamagedError) Error() string {
	return fmt.Sprintf("%s cannot be used: %v", e.Path, e.Problem)
}

// ErrDamaged matches every *DamagedError with errors.Is.
var ErrDamaged = errors.New("the data file failed its check")

func (e *DamagedError) Is(target error) bool { return target == ErrDamaged }

// lockedError is ErrLocked with bbolt's timeout kept as its cause.
type lockedError struct{ cause error }

func (e *lockedError) Error() string   { return ErrLocked.Error() }
func (e *lockedError) Unwrap() []error { return []error{ErrLocked, e.cause} }

// Options configure Open. The zero value is usable.
type Options struct {
	// Timeout is how long Open waits for the file lock; default 1 s.
	Timeout time.Duration
	// Now is the clock for device push times; default time.Now.
	Now func() time.Time
	// Prepare validates a non-deleted record and fills its derived body
	// fields. It returns a *devsync.FieldError for bad input. Nil accepts
	// every record. Its answer must depend on the record (and the clock)
	// alone: Push runs it on several records at once, before its write
	// transaction opens.
	Prepare func(*devsync.Record) error
	// CampIntegrity turns on the hub's two rules about athletes: a
	// per-athlete record must name an athlete record of the store (one
	// stored earlier in the same push counts; so does a deleted athlete,
	// whose earlier records the store keeps), and a record never moves to
	// another athlete, since a device that sees only one athlete would
	// never learn that a record left. The hub sets it; the storage
	// conformance suite works with free athlete ids.
	CampIntegrity bool
	// Related checks a live record against the athlete's other live
	// records, for rules between records (a step of a ladder after the one
	// below it, a weigh-in after another). It runs inside the push's write
	// transaction, after Prepare and before last-writer-wins, so it sees
	// every record stored earlier, in this push too; it must not write. A
	// *devsync.FieldError rejects the mutation (VALIDATION) and nothing is
	// stored. Nil: no such rules. Tombstones are never checked, so a bad
	// record can always be removed.
	Related func(rec *devsync.Record, view View) error
}

// View reads live records inside a push's write transaction.
type View interface {
	// Records calls fn for every live record of one athlete and kind
	// (dated ones by day, then day-less ones).
	Records(athlete, kind string, fn func(devsync.Record) error) error
}

// DB is the hub's store. It is safe for concurrent use.
type DB struct {
	bolt    *bolt.DB
	now     func() time.Time
	prepare func(*devsync.Record) error

	campIntegrity bool
	related       func(*devsync.Record, View) error
}

// DeviceState is what the hub knows about one device's pushes.
type DeviceState struct {
	LastN    uint64    `json:"lastN"`    // highest mutation counter applied or rejected
	LastPush time.Time `json:"lastPush"` // hub time of the last push
	Pushes   uint64    `json:"pushes"`   // push requests committed
}

// Open opens (creating if needed) the store at path. On first open it
// creates the buckets and a random 128-bit epoch.
func Open(path string, opt Options) (*DB, error) {
	if opt.Timeout <= 0 {
		opt.Timeout = time.Second
	}
	if opt.Now == nil {
		opt.Now = time.Now
	}
	if _, err := os.Stat(path); err == nil {
		// An existing file is checked whole before anything is served
		// from it: a damaged, empty or foreign file is refused, never
		// adopted or initialised over.
		if err := checkFile(path, opt.Timeout); err != nil {
			if errors.Is(err, ErrLocked) {
				return nil, err
			}
			return nil, &DamagedError{Path: path, Problem: err}
		}
	}
	if err := createAtomically(path); err != nil {
		return nil, fmt.Errorf("create %s: %w", path, err)
	}
	b, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: opt.Timeout})
	if err != nil {
		if errors.Is(err, berrors.ErrTimeout) {
			return nil, &lockedError{cause: err}
		}
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	removeRestoreLeftovers(path)
	db := &DB{bolt: b, now: opt.Now, prepare: opt.Prepare, campIntegrity: opt.CampIntegrity, related: opt.Related}
	err = b.Update(initBuckets)
	if err != nil {
		b.Close()
		return nil, fmt.Errorf("open %s: %w", path, err)
	}
	return db, nil
}

// createAtomically makes a new store file whole or not at all: bbolt
// writes its first pages into a temporary file beside path, and a hard
// link puts it in place only if path still does not exist (so two
// processes starting at once end up on one file), then the directory is
// fsynced. A power cut during bbolt's very first initialisation can
// otherwise leave a file it refuses to open (bbolt README, known issues).
// Where hard links are not supported (some USB sticks), bbolt creates the
// file itself.
func createAtomically(path string) error {
	if _, err := os.Stat(path); err == nil || !errors.Is(err, os.ErrNotExist) {
		return nil // exists (or cannot be examined: let bbolt report it)
	}
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".new-*")
	if err != nil {
		return err
	}
	tmp := f.Name()
	f.Close()
	defer os.Remove(tmp)
	b, err := bolt.Open(tmp, 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		return err
	}
	err = b.Update(func(tx *bolt.Tx) error { return initBuckets(tx) })
	if cerr := b.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return err
	}
	if err := os.Link(tmp, path); err != nil {
		if errors.Is(err, os.ErrExist) {
			return nil // another process created it first; use theirs
		}
		return nil // no hard links here: bbolt creates the file in place
	}
	return syncDir(dir)
}

// initBuckets creates the buckets, schema and epoch of a new store,
// checks the schema of an existing one and moves a layout-1 file to the
// current layout.
func initBuckets(tx *bolt.Tx) error {
	for _, name := range allBuckets {
		if _, err := tx.CreateBucketIfNotExists(name); err != nil {
			return err
		}
	}
	meta := tx.Bucket(BucketMeta)
	switch v := meta.Get(keySchema); {
	case v == nil:
		if err := meta.Put(keySchema, []byte(schemaVersion)); err != nil {
			return err
		}
	case string(v) == schemaV1:
		if err := migrateV1(tx); err != nil {
			return fmt.Errorf("move the data file from layout 1 to layout %s: %w", schemaVersion, err)
		}
	case string(v) != schemaVersion:
		return fmt.Errorf("the data file has layout %q; this cornerbook reads layouts %s and %s — use a newer cornerbook", v, schemaV1, schemaVersion)
	}
	if meta.Get(keyEpoch) == nil {
		return meta.Put(keyEpoch, []byte(newEpoch()))
	}
	return nil
}

// Close closes the file.
func (db *DB) Close() error { return db.bolt.Close() }

// Bolt is the underlying bbolt handle, for packages that keep their own
// buckets in the same file (accounts, tokens).
func (db *DB) Bolt() *bolt.DB { return db.bolt }

func newEpoch() string {
	var b [16]byte
	if _, err := rand.Read(b[:]); err != nil {
		panic(err) // crypto/rand never fails on supported platforms
	}
	return hex.EncodeToString(b[:])
}

// Epoch is the store's random id. It changes on restore, which tells
// devices to pull from zero and re-push what they wrote.
func (db *DB) Epoch() (string, error) {
	var e string
	err := db.bolt.View(func(tx *bolt.Tx) error {
		e = string(tx.Bucket(BucketMeta).Get(keyEpoch))
		return nil
	})
	return e, err
}

// RotateEpoch gives the store a new random epoch and returns it.
func (db *DB) RotateEpoch() (string, error) {
	e := newEpoch()
	err := db.bolt.Update(func(tx *bolt.Tx) error {
		return tx.Bucket(BucketMeta).Put(keyEpoch, []byte(e))
	})
	if err != nil {
		return "", err
	}
	return e, nil
}

// MaxSeq is the latest change sequence.
func (db *DB) MaxSeq() (uint64, error) {
	var s uint64
	err := db.bolt.View(func(tx *bolt.Tx) error {
		s = tx.Bucket(BucketChanges).Sequence()
		return nil
	})
	return s, err
}

// Device returns the push state of one device, ErrNotFound if it never
// pushed.
func (db *DB) Device(id string) (DeviceState, error) {
	var st DeviceState
	err := db.bolt.View(func(tx *bolt.Tx) error {
		v := tx.Bucket(BucketDevices).Get([]byte(id))
		if v == nil {
			return ErrNotFound
		}
		return json.Unmarshal(v, &st)
	})
	return st, err
}

// WriteTo writes a consistent copy of the whole file (a hot backup) to w
// from inside one read transaction; writers are not blocked.
func (db *DB) WriteTo(w io.Writer) (int64, error) {
	var n int64
	err := db.bolt.View(func(tx *bolt.Tx) error {
		var err error
		n, err = tx.WriteTo(w)
		return err
	})
	return n, err
}

func u64(v uint64) []byte {
	var b [8]byte
	binary.BigEndian.PutUint64(b[:], v)
	return b[:]
}

func versionKey(id string, seq uint64) []byte {
	k := make([]byte, 0, len(id)+9)
	k = append(k, id...)
	k = append(k, '|')
	return append(k, u64(seq)...)
}

func indexKey(r *devsync.Record) []byte {
	k := make([]byte, 0, len(r.Athlete)+len(r.Kind)+len(r.Day)+len(r.ID)+3)
	k = append(k, r.Athlete...)
	k = append(k, '|')
	k = append(k, r.Kind...)
	k = append(k, '|')
	k = append(k, r.Day...)
	k = append(k, '|')
	return append(k, r.ID...)
}

// parseIndexKey splits athlete|kind|day|id.
func parseIndexKey(k []byte) (athlete, kind, day, id string, ok bool) {
	parts := bytes.SplitN(k, []byte{'|'}, 4)
	if len(parts) != 4 {
		return "", "", "", "", false
	}
	return string(parts[0]), string(parts[1]), string(parts[2]), string(parts[3]), true
}

// seqLen is the length of the sequence in front of a records value.
const seqLen = 8

// splitStored splits a records value into the change sequence of the
// record and its JSON.
func splitStored(v []byte) (seq uint64, js []byte, err error) {
	if len(v) <= seqLen {
		return 0, nil, fmt.Errorf("stored value of %d bytes holds no sequence and record", len(v))
	}
	return binary.BigEndian.Uint64(v[:seqLen]), v[seqLen:], nil
}

// decodeStored decodes a records value (sequence ‖ JSON).
func decodeStored(v []byte) (devsync.Record, error) {
	_, js, err := splitStored(v)
	if err != nil {
		return devsync.Record{}, err
	}
	return decode(js)
}

// migrateV1 moves a layout-1 file to layout 2 inside the caller's
// transaction: each record value takes its sequence from the seqs bucket
// in front, and the seqs bucket goes. A record without a sequence stops
// the move, and the transaction rolls back with the file as it was.
func migrateV1(tx *bolt.Tx) error {
	records, seqs := tx.Bucket(BucketRecords), tx.Bucket(bucketSeqsV1)
	if seqs == nil {
		return fmt.Errorf("the %q bucket is missing", bucketSeqsV1)
	}
	// Values are rewritten in chunks, the cursor sought again after each:
	// bbolt cursors are not stable across puts.
	const chunk = 4096
	var from []byte
	for {
		type kv struct{ k, v []byte }
		var batch []kv
		c := records.Cursor()
		k, v := c.First()
		if from != nil {
			if k, v = c.Seek(from); k != nil && bytes.Equal(k, from) {
				k, v = c.Next()
			}
		}
		for ; k != nil && len(batch) < chunk; k, v = c.Next() {
			s := seqs.Get(k)
			if len(s) != seqLen {
				return fmt.Errorf("record %q has no sequence", k)
			}
			nv := make([]byte, 0, seqLen+len(v))
			batch = append(batch, kv{bytes.Clone(k), append(append(nv, s...), v...)})
		}
		if len(batch) == 0 {
			break
		}
		for _, e := range batch {
			if err := records.Put(e.k, e.v); err != nil {
				return err
			}
		}
		from = batch[len(batch)-1].k
	}
	if err := tx.DeleteBucket(bucketSeqsV1); err != nil {
		return err
	}
	return tx.Bucket(BucketMeta).Put(keySchema, []byte(schemaVersion))
}

// decode unmarshals a stored record's JSON; the JSON decoder copies every
// byte, so the result is safe to use after the transaction.
func decode(v []byte) (devsync.Record, error) {
	var r devsync.Record
	if devsync.DecodeRecord(v, &r) {
		return r, nil
	}
	r = devsync.Record{}
	err := json.Unmarshal(v, &r)
	return r, err
}
