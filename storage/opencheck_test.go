package storage_test

import (
	"bytes"
	"errors"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
	"time"

	bolt "go.etcd.io/bbolt"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
)

// goodStore writes a closed store of a few hundred records and returns
// its path and bytes.
func goodStore(t *testing.T) (string, []byte) {
	t.Helper()
	path := filepath.Join(t.TempDir(), "cornerbook.db")
	db, err := storage.Open(path, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	pushRecs(t, db, "dev-a", 1, storagetest.Records(7, 4, 60))
	if err := db.Close(); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return path, raw
}

// TestOpenRefusesADamagedFile: a store file that is empty, foreign, cut
// short or has damaged pages is refused by Open with ErrDamaged, and the
// file is left exactly as it was (never initialised over or adopted).
func TestOpenRefusesADamagedFile(t *testing.T) {
	_, raw := goodStore(t)
	const page = 4096
	foreign := func() []byte {
		p := filepath.Join(t.TempDir(), "other.db")
		b, err := bolt.Open(p, 0o600, nil)
		if err != nil {
			t.Fatal(err)
		}
		b.Update(func(tx *bolt.Tx) error {
			bk, _ := tx.CreateBucket([]byte("widgets"))
			return bk.Put([]byte("a"), []byte("b"))
		})
		b.Close()
		out, _ := os.ReadFile(p)
		return out
	}
	// Overwrite a page the tree uses (a leaf), as a bad sector would.
	path0 := filepath.Join(t.TempDir(), "probe.db")
	os.WriteFile(path0, raw, 0o600)
	leaf := -1
	probe, err := bolt.Open(path0, 0o600, nil)
	if err != nil {
		t.Fatal(err)
	}
	probe.View(func(tx *bolt.Tx) error {
		for id := 2; leaf < 0; id++ {
			pi, err := tx.Page(id)
			if err != nil || pi == nil {
				break
			}
			if pi.Type == "leaf" && id > 4 {
				leaf = id
			}
		}
		return nil
	})
	probe.Close()
	if leaf < 0 {
		t.Fatal("no leaf page found")
	}
	overwritten := bytes.Clone(raw)
	copy(overwritten[leaf*page:(leaf+1)*page], bytes.Repeat([]byte{0xA5}, page))
	flipped := bytes.Clone(raw)
	rnd := rand.New(rand.NewPCG(1, 2))
	for i := 0; i < 64; i++ {
		off := 2*page + rnd.IntN(len(flipped)-2*page)
		flipped[off] ^= 0xFF
	}
	cases := map[string][]byte{
		"empty":                {},
		"foreign bbolt":        foreign(),
		"a page overwritten":   overwritten,
		"cut in half":          raw[:len(raw)/2],
		"random bytes flipped": flipped,
	}
	for name, content := range cases {
		t.Run(name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "cornerbook.db")
			if err := os.WriteFile(path, content, 0o600); err != nil {
				t.Fatal(err)
			}
			db, err := storage.Open(path, storage.Options{})
			if err == nil {
				db.Close()
				t.Fatal("opened")
			}
			if !errors.Is(err, storage.ErrDamaged) {
				t.Fatalf("err %v, want ErrDamaged", err)
			}
			after, _ := os.ReadFile(path)
			if !bytes.Equal(after, content) {
				t.Fatal("a refused file was changed")
			}
		})
	}
}

// TestSnapshotRefusesADamagedStore: a store whose invariants are broken
// is never kept as a snapshot or backup; nothing is left in the folder.
func TestSnapshotRefusesADamagedStore(t *testing.T) {
	path, _ := goodStore(t)
	db, err := storage.Open(path, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	// A stray index entry naming no record.
	if err := db.Bolt().Update(func(tx *bolt.Tx) error {
		return tx.Bucket(storage.BucketIndex).Put([]byte("ath|checkin|2026-03-02|nobody"), nil)
	}); err != nil {
		t.Fatal(err)
	}
	dir := filepath.Join(t.TempDir(), "snapshots")
	if p, err := storage.Snapshot(db, dir, "2026-03-02", 3); err == nil {
		t.Fatalf("snapshot of a damaged store written: %s", p)
	}
	if names, _ := filepath.Glob(filepath.Join(dir, "*")); len(names) != 0 {
		t.Fatalf("a refused snapshot left %v", names)
	}
	if _, err := storage.BackupFile(db, filepath.Join(dir, "b.db")); err == nil {
		t.Fatal("backup of a damaged store written")
	}
}

// TestRestoreLeavesNoTemporaryFile: whatever a restore killed part-way
// left beside the store (its copy in progress) is gone after the next
// restore or the next open, and a restore over a damaged store works.
func TestRestoreLeavesNoTemporaryFile(t *testing.T) {
	path, raw := goodStore(t)
	dir := filepath.Dir(path)
	backup := filepath.Join(t.TempDir(), "backup.db")
	os.WriteFile(backup, raw, 0o600)
	leftovers := func() []string {
		a, _ := filepath.Glob(filepath.Join(dir, ".cornerbook.db.restoring*"))
		b, _ := filepath.Glob(filepath.Join(dir, "cornerbook.db.restoring*"))
		return append(a, b...)
	}
	kill := func() {
		// What a restore killed mid-copy, and one killed after its copy
		// but before the swap, leave behind.
		os.WriteFile(filepath.Join(dir, ".cornerbook.db.restoring.tmp-123456"), raw[:len(raw)/3], 0o600)
		os.WriteFile(filepath.Join(dir, "cornerbook.db.restoring"), raw, 0o600)
	}
	kill()
	// Damage the store too: restore must still take it over.
	os.WriteFile(path, raw[:len(raw)/2], 0o600)
	if _, err := storage.RestoreFile(backup, path); err != nil {
		t.Fatal(err)
	}
	if l := leftovers(); len(l) != 0 {
		t.Fatalf("restore left %v", l)
	}
	kill()
	db, err := storage.Open(path, storage.Options{Timeout: time.Second})
	if err != nil {
		t.Fatal(err)
	}
	db.Close()
	if l := leftovers(); len(l) != 0 {
		t.Fatalf("open left %v", l)
	}
}
