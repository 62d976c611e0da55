package storage_test

import (
	"bytes"
	"encoding/json"
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	bolt "go.etcd.io/bbolt"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
	devsync "cornerbook/sync"
)

// storeDump is everything a store answers, in a form a file can keep.
type storeDump struct {
	Epoch     string                         `json:"epoch"`
	MaxSeq    uint64                         `json:"maxSeq"`
	All       []devsync.Record               `json:"all"`
	Pull      []devsync.Record               `json:"pull"`
	History   map[string][]devsync.Record    `json:"history"`
	Conflicts map[string][]devsync.Record    `json:"conflicts"`
	Devices   map[string]storage.DeviceState `json:"devices"`
	Ranges    map[string][]devsync.Record    `json:"ranges"`
}

func dumpStore(t *testing.T, db *storage.DB, devices []string) storeDump {
	t.Helper()
	var d storeDump
	var err error
	if d.Epoch, err = db.Epoch(); err != nil {
		t.Fatal(err)
	}
	if d.MaxSeq, err = db.MaxSeq(); err != nil {
		t.Fatal(err)
	}
	d.All = dumpAll(t, db)
	if d.Pull, _, _, _, err = db.Pull(0, devsync.MaxPullLimit, nil); err != nil {
		t.Fatal(err)
	}
	d.History, d.Conflicts, d.Ranges = map[string][]devsync.Record{}, map[string][]devsync.Record{}, map[string][]devsync.Record{}
	for _, r := range d.All {
		if d.History[r.ID], err = db.History(r.ID); err != nil {
			t.Fatal(err)
		}
		c, err := db.Conflicts(r.ID)
		if err != nil {
			t.Fatal(err)
		}
		if len(c) > 0 {
			d.Conflicts[r.ID] = c
		}
		key := r.Athlete + "|" + r.Kind
		if _, ok := d.Ranges[key]; !ok {
			var got []devsync.Record
			if err := db.Range(r.Athlete, r.Kind, "", "", func(x devsync.Record) error { got = append(got, x); return nil }); err != nil {
				t.Fatal(err)
			}
			d.Ranges[key] = got
		}
	}
	d.Devices = map[string]storage.DeviceState{}
	for _, dev := range devices {
		st, err := db.Device(dev)
		if err != nil {
			t.Fatal(err)
		}
		d.Devices[dev] = st
	}
	return d
}

var layout1Devices = []string{"dev-a", "dev-b"}

// The layout-1 fixture was written by the hub before layout 2 (one
// check-in per athlete per day for 3 athletes × 4 days, an edit, a
// delete, a delete and restore, an older version that lost), together
// with everything that store answered (store-layout-1.json).
const layout1File = "../testdata/storage/store-layout-1.db"

func copyLayout1(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile(layout1File)
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "hub.db")
	if err := os.WriteFile(path, b, 0o600); err != nil {
		t.Fatal(err)
	}
	return path
}

func wantLayout1(t *testing.T) string {
	t.Helper()
	b, err := os.ReadFile("../testdata/storage/store-layout-1.json")
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func dumpText(t *testing.T, d storeDump) string { return jsonText(t, d) }

func jsonText(t *testing.T, v any) string {
	t.Helper()
	b, err := json.MarshalIndent(v, "", " ")
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func schemaOf(t *testing.T, db *storage.DB) (schema string, seqsBucket bool) {
	t.Helper()
	db.Bolt().View(func(tx *bolt.Tx) error {
		schema = string(tx.Bucket(storage.BucketMeta).Get([]byte("schema")))
		seqsBucket = tx.Bucket([]byte("seqs")) != nil
		return nil
	})
	return
}

// Opening a layout-1 file moves it to layout 2, and the store answers
// exactly what it answered before: records, pulls, ranges, histories,
// conflicts, devices, sequence and epoch.
func TestOpenMovesLayout1AndKeepsEveryAnswer(t *testing.T) {
	path := copyLayout1(t)
	db, err := storage.Open(path, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if schema, seqs := schemaOf(t, db); schema != "2" || seqs {
		t.Fatalf("after the move: layout %q, seqs bucket kept %v", schema, seqs)
	}
	if err := db.Check(); err != nil {
		t.Fatalf("check after the move: %v", err)
	}
	got := dumpText(t, dumpStore(t, db, layout1Devices))
	if want := wantLayout1(t); got != want {
		t.Fatalf("the moved store answers differently:\n%s\nwant\n%s", got, want)
	}

	// Editing a moved record files the old version under the sequence it
	// held in layout 1.
	var d storeDump
	if err := json.Unmarshal([]byte(got), &d); err != nil {
		t.Fatal(err)
	}
	old := d.All[0]
	g := storagetest.NewGen(21, "dev-c")
	edit := g.Edit(old)
	res, err := db.Push(devsync.PushRequest{Device: "dev-c", Mutations: storagetest.Mutations(1, edit)}, nil)
	if err != nil || res.Applied != 1 {
		t.Fatalf("edit after the move: %+v %v", res, err)
	}
	h, err := db.History(old.ID)
	if err != nil {
		t.Fatal(err)
	}
	if len(h) != len(d.History[old.ID])+1 || jsonText(t, h[:len(h)-1]) != jsonText(t, d.History[old.ID]) {
		t.Fatalf("history after an edit: %d versions, want the %d before and the edit", len(h), len(d.History[old.ID]))
	}
	if err := db.Check(); err != nil {
		t.Fatalf("check after an edit: %v", err)
	}
}

// A layout-1 backup passes VerifyFile, and restoring it gives a layout-2
// store with the same answers under a new epoch.
func TestRestoreTakesALayout1Backup(t *testing.T) {
	src := copyLayout1(t)
	if err := storage.VerifyFile(src); err != nil {
		t.Fatalf("verify a layout-1 backup: %v", err)
	}
	dst := filepath.Join(t.TempDir(), "hub.db")
	epoch, err := storage.RestoreFile(src, dst)
	if err != nil {
		t.Fatal(err)
	}
	db, err := storage.Open(dst, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	var want storeDump
	if err := json.Unmarshal([]byte(wantLayout1(t)), &want); err != nil {
		t.Fatal(err)
	}
	if epoch == want.Epoch {
		t.Fatal("a restore keeps the epoch")
	}
	want.Epoch = epoch
	if got := dumpText(t, dumpStore(t, db, layout1Devices)); got != dumpText(t, want) {
		t.Fatalf("restored store answers differently:\n%s", got)
	}
	if schema, _ := schemaOf(t, db); schema != "2" {
		t.Fatalf("restored layout %q", schema)
	}
}

// A layout-1 file with a record that lost its sequence is refused, and
// the file stays as it was (the move is one transaction).
func TestLayout1MoveStopsOnAMissingSequence(t *testing.T) {
	path := copyLayout1(t)
	b, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		t.Fatal(err)
	}
	var victim []byte
	err = b.Update(func(tx *bolt.Tx) error {
		k, _ := tx.Bucket([]byte("records")).Cursor().Last()
		victim = bytes.Clone(k)
		return tx.Bucket([]byte("seqs")).Delete(k)
	})
	b.Close()
	if err != nil {
		t.Fatal(err)
	}
	before, _ := os.ReadFile(path)
	_, err = storage.Open(path, storage.Options{})
	if err == nil || !strings.Contains(err.Error(), "layout 1") || !strings.Contains(err.Error(), string(victim)) || !strings.Contains(err.Error(), "no sequence") {
		t.Fatalf("open a damaged layout-1 file: %v", err)
	}
	after, _ := os.ReadFile(path)
	if !bytes.Equal(before, after) {
		t.Fatal("a refused move changed the file")
	}
}

// toLayout1 rewrites a closed layout-2 file as layout 1 wrote it: the
// sequence moves from the front of each records value into a seqs bucket.
func toLayout1(t *testing.T, path string) {
	t.Helper()
	b, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		t.Fatal(err)
	}
	defer b.Close()
	err = b.Update(func(tx *bolt.Tx) error {
		seqs, err := tx.CreateBucket([]byte("seqs"))
		if err != nil {
			return err
		}
		recs := tx.Bucket(storage.BucketRecords)
		type kv struct{ k, v []byte }
		var all []kv
		if err := recs.ForEach(func(k, v []byte) error { all = append(all, kv{bytes.Clone(k), bytes.Clone(v)}); return nil }); err != nil {
			return err
		}
		for _, e := range all {
			if err := seqs.Put(e.k, e.v[:8]); err != nil {
				return err
			}
			if err := recs.Put(e.k, e.v[8:]); err != nil {
				return err
			}
		}
		return tx.Bucket(storage.BucketMeta).Put([]byte("schema"), []byte("1"))
	})
	if err != nil {
		t.Fatal(err)
	}
}

// A layout-1 file larger than one rewrite chunk (4,096 records) moves
// whole: every answer is the same after the move.
func TestOpenMovesALargeLayout1File(t *testing.T) {
	path := filepath.Join(t.TempDir(), "hub.db")
	db, err := storage.Open(path, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	recs := storagetest.Records(31, 10, 500)
	pushRecs(t, db, "dev-a", 1, recs)
	g := storagetest.NewGen(32, "dev-b")
	pushRecs(t, db, "dev-b", 1, []devsync.Record{g.Edit(recs[4200]), g.Delete(recs[17])})
	before := dumpText(t, dumpStore(t, db, []string{"dev-a", "dev-b"}))
	db.Close()

	toLayout1(t, path)
	if err := storage.VerifyFile(path); err != nil {
		t.Fatalf("the rewritten file is not a sound layout-1 file: %v", err)
	}
	start := time.Now()
	db, err = storage.Open(path, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	t.Logf("moved %d records in %v", len(recs), time.Since(start))
	if schema, seqs := schemaOf(t, db); schema != "2" || seqs {
		t.Fatalf("after the move: layout %q, seqs bucket kept %v", schema, seqs)
	}
	if err := db.Check(); err != nil {
		t.Fatal(err)
	}
	if after := dumpText(t, dumpStore(t, db, []string{"dev-a", "dev-b"})); after != before {
		t.Fatal("the moved store answers differently")
	}
}
