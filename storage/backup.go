package storage

import (
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	bolt "go.etcd.io/bbolt"
	berrors "go.etcd.io/bbolt/errors"
)

// BackupFile writes a consistent hot copy of the store to path: into a
// temporary file beside it, synced, checked whole (VerifyFile's check),
// then renamed over path and the folder synced, so a crash leaves either
// the old file or the whole new one, and a copy of a damaged store is
// never kept as a backup or snapshot.
func BackupFile(db *DB, path string) (int64, error) {
	return writeAtomically(path, func(f *os.File) (int64, error) {
		n, err := db.WriteTo(f)
		if err != nil {
			return n, err
		}
		if err := f.Sync(); err != nil {
			return n, err
		}
		if err := checkFile(f.Name(), time.Second); err != nil {
			return n, fmt.Errorf("the copy failed its check, so the store itself is damaged: %v", err)
		}
		return n, nil
	})
}

func writeAtomically(path string, write func(*os.File) (int64, error)) (n int64, err error) {
	dir := filepath.Dir(path)
	tmp, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return 0, fmt.Errorf("create a temporary file in %s: %w", dir, err)
	}
	defer func() {
		if err != nil {
			tmp.Close()
			os.Remove(tmp.Name())
		}
	}()
	if n, err = write(tmp); err != nil {
		return 0, err
	}
	if err = tmp.Sync(); err != nil {
		return 0, err
	}
	if err = tmp.Close(); err != nil {
		return 0, err
	}
	if err = os.Chmod(tmp.Name(), 0o600); err != nil {
		return 0, err
	}
	if err = os.Rename(tmp.Name(), path); err != nil {
		return 0, err
	}
	return n, syncDir(dir)
}

func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	return d.Sync()
}

// ErrBadBackup is returned by VerifyFile and RestoreFile for a file that
// is not a sound Cornerbook database.
var ErrBadBackup = errors.New("not a usable Cornerbook backup")

// VerifyFile checks that path is a sound Cornerbook database: bbolt's page
// check, the expected buckets and schema, and the application invariants.
func VerifyFile(path string) error {
	if err := checkFile(path, time.Second); err != nil {
		if errors.Is(err, ErrLocked) {
			return err
		}
		return fmt.Errorf("%w: %v", ErrBadBackup, err)
	}
	return nil
}

// checkFile is VerifyFile's check, its problem in plain words. A file
// that another process holds answers ErrLocked.
func checkFile(path string, lock time.Duration) (err error) {
	st, err := os.Stat(path)
	if err != nil {
		return err
	}
	if st.Size() == 0 {
		return errors.New("the file is empty (0 bytes)")
	}
	if err := checkExtent(path, st.Size()); err != nil {
		return err
	}
	defer func() {
		// bbolt may panic on a badly damaged file; that is a refusal too.
		if r := recover(); r != nil {
			err = fmt.Errorf("the file is damaged (%v)", r)
		}
	}()
	bdb, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: lock, ReadOnly: true})
	if err != nil {
		if errors.Is(err, berrors.ErrTimeout) {
			return &lockedError{cause: err}
		}
		return err
	}
	defer bdb.Close()
	return bdb.View(func(tx *bolt.Tx) error {
		// Pages first, so no lookup follows a damaged page pointer. The
		// channel is drained whole: bbolt checks in a goroutine of its own
		// that must finish before the transaction closes.
		var damaged error
		for err := range tx.Check() {
			if damaged == nil {
				damaged = err
			}
		}
		if damaged != nil {
			return fmt.Errorf("the file is damaged: %v", damaged)
		}
		if tx.Bucket(BucketMeta) == nil || tx.Bucket(BucketMeta).Get(keySchema) == nil {
			return errors.New("it is a database file, but not one Cornerbook wrote (it has no Cornerbook layout)")
		}
		for _, b := range allBuckets {
			if tx.Bucket(b) == nil {
				return fmt.Errorf("it has no %q section", b)
			}
		}
		// A layout-1 backup is sound too: Open moves it to the current
		// layout when it is restored.
		if v := tx.Bucket(BucketMeta).Get(keySchema); string(v) != schemaVersion && string(v) != schemaV1 {
			return fmt.Errorf("the data file has layout %q; this cornerbook reads layouts %s and %s — use a newer cornerbook", v, schemaV1, schemaVersion)
		}
		var problems []string
		checkInvariants(tx, func(format string, args ...any) bool {
			problems = append(problems, fmt.Sprintf(format, args...))
			return len(problems) < 5
		})
		if len(problems) > 0 {
			if string(tx.Bucket(BucketMeta).Get(keySchema)) == schemaV1 {
				return errors.New("a layout 1 file: " + strings.Join(problems, "; "))
			}
			return errors.New(strings.Join(problems, "; "))
		}
		return nil
	})
}

// checkExtent reads the two bbolt meta pages and refuses a file shorter
// than the pages they claim: bbolt memory-maps the file, and touching a
// page past its end is a SIGBUS that no recover() catches (a truncated
// copy on a USB stick is the common case).
func checkExtent(path string, size int64) error {
	f, err := os.Open(path)
	if err != nil {
		return err
	}
	defer f.Close()
	const (
		hdr   = 16         // page header: id, flags, count, overflow
		magic = 0xED0CDAED // bbolt's meta magic
	)
	var need int64
	valid := 0
	pageSize := int64(0)
	for i := 0; i < 2; i++ {
		off := int64(0)
		if i == 1 {
			if pageSize == 0 {
				break
			}
			off = pageSize
		}
		buf := make([]byte, hdr+64)
		if _, err := f.ReadAt(buf, off); err != nil {
			continue
		}
		m := buf[hdr:]
		if binary.LittleEndian.Uint32(m[0:4]) != magic {
			continue
		}
		ps := int64(binary.LittleEndian.Uint32(m[8:12]))
		if ps < 512 || ps > 1<<20 {
			continue
		}
		if pageSize == 0 {
			pageSize = ps
		}
		// meta: magic, version, pageSize, flags (16 bytes); root bucket
		// (root pgid, sequence: 16); freelist pgid (8); high-water pgid (8).
		pgid := int64(binary.LittleEndian.Uint64(m[40:48]))
		need = max(need, pgid*ps)
		valid++
	}
	if valid == 0 {
		return errors.New("it is not a database file")
	}
	if size < need {
		return fmt.Errorf("the file is cut short: %d bytes of %d (an interrupted copy?)", size, need)
	}
	return nil
}

// RestoreFile replaces the camp's data at dst with the backup at src after
// checking the backup, and gives the restored store a new epoch so every
// device re-pushes its own records and pulls from the start. A refused
// backup changes nothing.
//
// A restore replaces the data, not who may reach it: every bucket that is
// not the store's own (the device list, tokens, revocations and passphrase
// kept by server/auth) and the store's per-device counters are carried over
// from the current store, so a device that joined after the backup stays
// paired and re-sends its records, and one revoked since stays revoked.
// Only when there is no current store do the backup's come along. The store that was at dst is not deleted: it is
// kept beside it as dst.replaced-YYYYMMDD-HHMMSS (ReplacedPath finds the
// newest). dst must not be open by a running hub: its lock is held for
// the whole swap, and a hub holding it makes the restore stop with
// ErrLocked before anything changes.
func RestoreFile(src, dst string) (epoch string, err error) {
	r, err := Restore(src, dst)
	return r.Epoch, err
}

// Restored says what a restore did.
type Restored struct {
	Epoch   string
	Records int // live and deleted records in the restored data
	// KeptAccess is true when the access buckets (devices, revocations,
	// passphrase) and device counters were kept from the store replaced.
	KeptAccess bool
	Aside      string // where the replaced store was kept, "" if there was none
}

// Restore is RestoreFile, answering what it did.
func Restore(src, dst string) (res Restored, err error) {
	if err := VerifyFile(src); err != nil {
		return res, err
	}
	var cur *bolt.DB
	if _, err := os.Stat(dst); err == nil {
		// The lock alone, not an open: the store being replaced may be
		// the damaged file the hub refused to serve.
		unlock, err := lockFile(dst, time.Second)
		if err != nil {
			return res, err
		}
		defer unlock() // after the swap: no hub can open the old file meanwhile
	}
	removeRestoreLeftovers(dst)
	if _, err := os.Stat(dst); err == nil {
		// Who may reach the hub is read from a copy of the current store
		// (its lock is held); a store too damaged to open keeps nothing,
		// and the backup's devices and passphrase stay.
		if c, cleanup, err := openCopy(dst); err == nil {
			cur = c
			defer cleanup()
		}
	}
	in, err := os.Open(src)
	if err != nil {
		return res, err
	}
	defer in.Close()
	tmpPath := dst + ".restoring"
	if _, err := writeAtomically(tmpPath, func(f *os.File) (int64, error) { return io.Copy(f, in) }); err != nil {
		return res, err
	}
	if cur != nil {
		if res.KeptAccess, err = keepAccess(cur, tmpPath); err != nil {
			os.Remove(tmpPath)
			return res, fmt.Errorf("keep the devices and passphrase of the current store: %w", err)
		}
	}
	db, err := Open(tmpPath, Options{})
	if err != nil {
		os.Remove(tmpPath)
		return res, err
	}
	res.Records = db.countRecords()
	res.Epoch, err = db.RotateEpoch()
	if cerr := db.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(tmpPath)
		return res, err
	}
	aside := ""
	if _, err := os.Stat(dst); err == nil {
		stamp := time.Now().UTC()
		aside = dst + ".replaced-" + stamp.Format("20060102-150405")
		for _, err := os.Stat(aside); err == nil; _, err = os.Stat(aside) {
			stamp = stamp.Add(time.Second) // two restores within a second keep both
			aside = dst + ".replaced-" + stamp.Format("20060102-150405")
		}
		if err := os.Rename(dst, aside); err != nil {
			os.Remove(tmpPath)
			return res, fmt.Errorf("keep the current store aside: %w", err)
		}
	}
	if err := os.Rename(tmpPath, dst); err != nil {
		if aside != "" {
			os.Rename(aside, dst)
		}
		os.Remove(tmpPath)
		return res, err
	}
	res.Aside = aside
	return res, syncDir(filepath.Dir(dst))
}

// keepAccess replaces, in the restored file at path, every bucket that is
// not the store's camp data with the current store's: the access buckets
// of other packages (auth_*) and the per-device counters. It answers false
// when the current store has none to keep, or cannot be read (the
// backup's then stay).
func keepAccess(cur *bolt.DB, path string) (bool, error) {
	data := map[string]bool{string(bucketSeqsV1): true}
	for _, b := range allBuckets {
		data[string(b)] = true
	}
	delete(data, string(BucketDevices))
	keep := func(name []byte) bool { return !data[string(name)] }
	kept, ok := readKept(cur, keep)
	if !ok {
		return false, nil
	}
	out, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		return false, err
	}
	defer out.Close()
	return true, out.Update(func(to *bolt.Tx) error {
		var drop [][]byte
		to.ForEach(func(name []byte, _ *bolt.Bucket) error {
			if keep(name) {
				drop = append(drop, append([]byte(nil), name...))
			}
			return nil
		})
		for _, name := range drop {
			if err := to.DeleteBucket(name); err != nil {
				return err
			}
		}
		for _, k := range kept {
			if err := k.write(to); err != nil {
				return err
			}
		}
		return nil
	})
}

// keptBucket is a bucket read into memory: its pairs and nested buckets.
type keptBucket struct {
	name   []byte
	pairs  [][2][]byte
	nested []keptBucket
}

type bucketMaker interface {
	CreateBucket([]byte) (*bolt.Bucket, error)
}

func (k keptBucket) write(parent bucketMaker) error {
	b, err := parent.CreateBucket(k.name)
	if err != nil {
		return err
	}
	for _, p := range k.pairs {
		if err := b.Put(p[0], p[1]); err != nil {
			return err
		}
	}
	for _, n := range k.nested {
		if err := n.write(b); err != nil {
			return err
		}
	}
	return nil
}

// readKept reads the buckets to keep; false when there are none besides
// the device counters, or the store cannot be read (bbolt panics on some
// damaged pages).
func readKept(cur *bolt.DB, keep func([]byte) bool) (out []keptBucket, ok bool) {
	defer func() {
		if recover() != nil {
			out, ok = nil, false
		}
	}()
	access := false
	err := cur.View(func(tx *bolt.Tx) error {
		return tx.ForEach(func(name []byte, b *bolt.Bucket) error {
			if !keep(name) {
				return nil
			}
			if string(name) != string(BucketDevices) {
				access = true
			}
			out = append(out, readBucket(name, b))
			return nil
		})
	})
	return out, err == nil && access
}

func readBucket(name []byte, b *bolt.Bucket) keptBucket {
	k := keptBucket{name: append([]byte(nil), name...)}
	b.ForEach(func(key, v []byte) error {
		if v == nil {
			k.nested = append(k.nested, readBucket(key, b.Bucket(key)))
			return nil
		}
		k.pairs = append(k.pairs, [2][]byte{append([]byte(nil), key...), append([]byte(nil), v...)})
		return nil
	})
	return k
}

// removeRestoreLeftovers deletes what a restore killed part-way leaves
// beside dst (its copy in progress); Open and RestoreFile call it while
// they hold dst, so no restore is running.
func removeRestoreLeftovers(dst string) {
	names, _ := filepath.Glob(filepath.Join(filepath.Dir(dst), "."+filepath.Base(dst)+".restoring.tmp-*"))
	names = append(names, dst+".restoring", dst+".access")
	for _, n := range names {
		os.Remove(n)
	}
}

// ReplacedPath is the newest store a RestoreFile into dst kept aside, or
// "" if there is none.
func ReplacedPath(dst string) string {
	names, _ := filepath.Glob(dst + ".replaced-????????-??????")
	if len(names) == 0 {
		return ""
	}
	sort.Strings(names)
	return names[len(names)-1]
}

// SnapshotName is the file name of the daily snapshot of a day.
func SnapshotName(day string) string { return "cornerbook-" + day + ".db" }

// Snapshot writes today's snapshot into dir (if it does not exist yet) and
// keeps only the newest keep snapshots. It returns the path written, or ""
// when today's snapshot already existed.
func Snapshot(db *DB, dir, day string, keep int) (string, error) {
	if err := os.MkdirAll(dir, 0o700); err != nil {
		return "", err
	}
	path := filepath.Join(dir, SnapshotName(day))
	written := ""
	if _, err := os.Stat(path); errors.Is(err, os.ErrNotExist) {
		if _, err := BackupFile(db, path); err != nil {
			return "", err
		}
		written = path
	}
	names, err := filepath.Glob(filepath.Join(dir, "cornerbook-????-??-??.db"))
	if err != nil {
		return written, err
	}
	sort.Strings(names)
	for len(names) > keep {
		os.Remove(names[0])
		names = names[1:]
	}
	return written, nil
}

// countRecords counts the records (live and deleted) in the store.
func (db *DB) countRecords() int {
	n := 0
	db.bolt.View(func(tx *bolt.Tx) error {
		if b := tx.Bucket(BucketRecords); b != nil {
			n = b.Stats().KeyN
		}
		return nil
	})
	return n
}

// openCopy opens a copy of the store at path, read only: the file's own
// lock is held by the caller.
func openCopy(path string) (*bolt.DB, func(), error) {
	in, err := os.Open(path)
	if err != nil {
		return nil, nil, err
	}
	defer in.Close()
	tmp := path + ".access"
	out, err := os.OpenFile(tmp, os.O_CREATE|os.O_TRUNC|os.O_WRONLY, 0o600)
	if err != nil {
		return nil, nil, err
	}
	_, err = io.Copy(out, in)
	if cerr := out.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		os.Remove(tmp)
		return nil, nil, err
	}
	if err := VerifyFile(tmp); err != nil { // a damaged store is read no further
		os.Remove(tmp)
		return nil, nil, err
	}
	db, err := bolt.Open(tmp, 0o600, &bolt.Options{Timeout: time.Second, ReadOnly: true})
	if err != nil {
		os.Remove(tmp)
		return nil, nil, err
	}
	return db, func() { db.Close(); os.Remove(tmp) }, nil
}
