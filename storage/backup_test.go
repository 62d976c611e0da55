package storage_test

import (
	"errors"
	"os"
	"path/filepath"
	"reflect"
	"testing"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
	devsync "cornerbook/sync"
)

func dumpAll(t *testing.T, db *storage.DB) []devsync.Record {
	t.Helper()
	var out []devsync.Record
	if err := db.All(true, func(r devsync.Record) error { out = append(out, r); return nil }); err != nil {
		t.Fatal(err)
	}
	return out
}

func pushRecs(t testing.TB, db *storage.DB, device string, n uint64, recs []devsync.Record) {
	t.Helper()
	if _, err := db.Push(devsync.PushRequest{Device: device, Mutations: storagetest.Mutations(n, recs...)}, nil); err != nil {
		t.Fatal(err)
	}
}

func TestBackupAndRestore(t *testing.T) {
	dir := t.TempDir()
	live := filepath.Join(dir, "cornerbook.db")
	db, err := storage.Open(live, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	pushRecs(t, db, "dev-a", 1, storagetest.Records(1, 3, 4))
	backup := filepath.Join(dir, "backup.db")
	if n, err := storage.BackupFile(db, backup); err != nil || n == 0 {
		t.Fatalf("backup: %d bytes, %v", n, err)
	}
	want := dumpAll(t, db)
	oldEpoch, _ := db.Epoch()
	// Work continues after the backup.
	later := storagetest.Records(2, 1, 2)
	pushRecs(t, db, "dev-a", 100, later)

	// A running hub holds the store: the restore refuses and changes nothing.
	if _, err := storage.RestoreFile(backup, live); !errors.Is(err, storage.ErrLocked) {
		t.Fatalf("restore over a store in use: %v, want ErrLocked", err)
	}
	if got := len(dumpAll(t, db)); got != len(want)+2 {
		t.Fatalf("a refused restore changed the live store: %d records", got)
	}
	db.Close()

	epoch, err := storage.RestoreFile(backup, live)
	if err != nil {
		t.Fatal(err)
	}
	if epoch == oldEpoch || len(epoch) != 32 {
		t.Fatalf("restored epoch %q, old %q: a restore must rotate it", epoch, oldEpoch)
	}
	db, err = storage.Open(live, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if err := db.Check(); err != nil {
		t.Fatal(err)
	}
	if got := dumpAll(t, db); !reflect.DeepEqual(got, want) {
		t.Fatalf("restored store holds %d records, the backup %d", len(got), len(want))
	}
	if e, _ := db.Epoch(); e != epoch {
		t.Fatalf("epoch on disk %q, RestoreFile said %q", e, epoch)
	}
	// The store that was replaced is kept, with the work done after the backup.
	aside := storage.ReplacedPath(live)
	if aside == "" {
		t.Fatal("the replaced store was not kept")
	}
	old, err := storage.Open(aside, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer old.Close()
	if _, err := old.Get(later[0].ID); err != nil {
		t.Fatalf("the kept store lost the records written after the backup: %v", err)
	}
	if leftovers, _ := filepath.Glob(filepath.Join(dir, "*.restoring")); len(leftovers) != 0 {
		t.Fatalf("restore left %v behind", leftovers)
	}
}

func TestRestoreRefusesABadBackup(t *testing.T) {
	dir := t.TempDir()
	live := filepath.Join(dir, "cornerbook.db")
	db, err := storage.Open(live, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	pushRecs(t, db, "dev-a", 1, storagetest.Records(3, 2, 2))
	want := dumpAll(t, db)
	backup := filepath.Join(dir, "backup.db")
	if _, err := storage.BackupFile(db, backup); err != nil {
		t.Fatal(err)
	}
	db.Close()
	raw, _ := os.ReadFile(backup)

	bad := map[string][]byte{
		"empty":     {},
		"truncated": raw[:len(raw)/3],
		"not bbolt": []byte("id,kind,athlete\n1,checkin,x\n"),
	}
	for name, content := range bad {
		p := filepath.Join(dir, name+".db")
		os.WriteFile(p, content, 0o600)
		if _, err := storage.RestoreFile(p, live); !errors.Is(err, storage.ErrBadBackup) {
			t.Errorf("%s backup: %v, want ErrBadBackup", name, err)
		}
	}
	db, err = storage.Open(live, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if got := dumpAll(t, db); !reflect.DeepEqual(got, want) {
		t.Fatal("a refused restore changed the store")
	}
	if storage.ReplacedPath(live) != "" {
		t.Fatal("a refused restore moved the store aside")
	}
}

func TestSnapshotKeepsTheNewest(t *testing.T) {
	db := storagetest.MustOpen(t)
	pushRecs(t, db, "dev-a", 1, storagetest.Records(4, 1, 1))
	dir := filepath.Join(t.TempDir(), "snapshots")
	for d := 0; d < 5; d++ {
		p, err := storage.Snapshot(db, dir, storagetest.Day(d), 3)
		if err != nil || p == "" {
			t.Fatalf("snapshot of day %d: %q %v", d, p, err)
		}
	}
	if p, err := storage.Snapshot(db, dir, storagetest.Day(4), 3); err != nil || p != "" {
		t.Fatalf("second snapshot of the same day: %q %v, want none", p, err)
	}
	names, _ := filepath.Glob(filepath.Join(dir, "*"))
	want := []string{storage.SnapshotName(storagetest.Day(2)), storage.SnapshotName(storagetest.Day(3)), storage.SnapshotName(storagetest.Day(4))}
	var got []string
	for _, n := range names {
		got = append(got, filepath.Base(n))
	}
	if !reflect.DeepEqual(got, want) {
		t.Fatalf("snapshots kept %v, want %v", got, want)
	}
	if err := storage.VerifyFile(filepath.Join(dir, want[2])); err != nil {
		t.Fatal(err)
	}
}
