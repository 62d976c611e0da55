package storage_test

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"strings"
	"testing"
	"time"

	bolt "go.etcd.io/bbolt"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
	devsync "cornerbook/sync"
)

func TestConformance(t *testing.T) {
	storagetest.RunConformance(t, func(t *testing.T) *storage.DB { return storagetest.MustOpen(t) })
}

// prepareCheckin stands in for the record kinds' Prepare: it validates
// one body field and derives another.
func prepareCheckin(r *devsync.Record) error {
	var b map[string]any
	if err := json.Unmarshal(r.Body, &b); err != nil {
		return devsync.Invalid("body", "is not a JSON object")
	}
	m, ok := b["mass_kg"].(float64)
	if !ok || m < 25 || m > 250 {
		return devsync.Invalid("body.mass_kg", "must be between 25 and 250 kg")
	}
	b["mass_lb"] = float64(int(m/0.45359237*10+0.5)) / 10 // 1 lb = 0.45359237 kg exactly (international yard and pound agreement, 1959)
	r.Body, _ = json.Marshal(b)
	return nil
}

func TestPrepareValidatesAndDerives(t *testing.T) {
	db := storagetest.MustOpen(t, storage.Options{Prepare: prepareCheckin})
	g := storagetest.NewGen(1, "dev-a")
	good := g.Checkin(g.ID(), storagetest.Day(0))
	good.Body = []byte(`{"mass_kg":70}`)
	bad := g.Checkin(good.Athlete, storagetest.Day(1))
	bad.Body = []byte(`{"mass_kg":7}`)
	del := g.Delete(g.Checkin(good.Athlete, storagetest.Day(2)))
	del.Body = []byte(`{}`) // tombstones are not run through Prepare
	res, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(1, good, bad, del)}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.Applied != 2 || len(res.Rejected) != 1 {
		t.Fatalf("push: %+v", res)
	}
	if rej := res.Rejected[0]; rej.N != 2 || rej.Field != "body.mass_kg" || rej.Reason != "must be between 25 and 250 kg" || rej.Code != devsync.CodeValidation {
		t.Fatalf("rejection %+v", rej)
	}
	got, err := db.Get(good.ID)
	if err != nil {
		t.Fatal(err)
	}
	if want := `{"mass_kg":70,"mass_lb":154.3}`; string(got.Body) != want {
		t.Fatalf("stored body %s, want derived fields %s", got.Body, want)
	}
	if string(res.Changed[0].Body) != string(got.Body) {
		t.Fatalf("Changed carries %s, the store %s", res.Changed[0].Body, got.Body)
	}
}

func TestPrepareMayNotBreakKeys(t *testing.T) {
	db := storagetest.MustOpen(t, storage.Options{Prepare: func(r *devsync.Record) error { r.Day = "soon"; return nil }})
	g := storagetest.NewGen(2, "dev-a")
	res, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(1, g.Checkin(g.ID(), storagetest.Day(0)))}, nil)
	if err != nil || len(res.Rejected) != 1 || res.Rejected[0].Field != "day" {
		t.Fatalf("prepare that breaks the day: %+v %v", res, err)
	}
}

func TestInjectedClockAndReopen(t *testing.T) {
	path := filepath.Join(t.TempDir(), "c.db")
	at := time.Date(2026, 3, 4, 6, 0, 0, 0, time.UTC)
	db, err := storage.Open(path, storage.Options{Now: func() time.Time { return at }})
	if err != nil {
		t.Fatal(err)
	}
	recs := storagetest.Records(3, 2, 3)
	if _, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(1, recs...)}, nil); err != nil {
		t.Fatal(err)
	}
	epoch, _ := db.Epoch()
	if err := db.Close(); err != nil {
		t.Fatal(err)
	}
	db, err = storage.Open(path, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	if e, _ := db.Epoch(); e != epoch {
		t.Fatalf("epoch changed across a reopen: %s → %s", epoch, e)
	}
	st, err := db.Device("dev-a")
	if err != nil || !st.LastPush.Equal(at) || st.LastN != 6 {
		t.Fatalf("device after reopen: %+v %v", st, err)
	}
	if s, _ := db.MaxSeq(); s != 6 {
		t.Fatalf("max seq after reopen %d", s)
	}
	// Sequences continue after a reopen.
	res, _ := db.Push(devsync.PushRequest{Device: "dev-b", Mutations: storagetest.Mutations(1, storagetest.Records(4, 1, 1)...)}, nil)
	if res.MaxSeq != 7 {
		t.Fatalf("sequence after reopen %d, want 7", res.MaxSeq)
	}
	if err := db.Check(); err != nil {
		t.Fatal(err)
	}
}

func TestRefusesNewerLayout(t *testing.T) {
	path := filepath.Join(t.TempDir(), "c.db")
	db, err := storage.Open(path, storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	db.Bolt().Update(func(tx *bolt.Tx) error { return tx.Bucket(storage.BucketMeta).Put([]byte("schema"), []byte("9")) })
	db.Close()
	if _, err := storage.Open(path, storage.Options{}); err == nil || !strings.Contains(err.Error(), "newer cornerbook") {
		t.Fatalf("open of a newer layout: %v", err)
	}
}

// TestCheckFindsDamage shows Check is not a rubber stamp: each kind of
// damage to the invariants is reported.
func TestCheckFindsDamage(t *testing.T) {
	damage := map[string]func(tx *bolt.Tx, id []byte) error{
		"stray index entry": func(tx *bolt.Tx, id []byte) error {
			return tx.Bucket(storage.BucketIndex).Put([]byte("|checkin|2026-03-02|"+string(id)), nil)
		},
		"missing index entry": func(tx *bolt.Tx, id []byte) error {
			c := tx.Bucket(storage.BucketIndex).Cursor()
			k, _ := c.First()
			return tx.Bucket(storage.BucketIndex).Delete(bytes.Clone(k))
		},
		"second change entry": func(tx *bolt.Tx, id []byte) error {
			return tx.Bucket(storage.BucketChanges).Put([]byte{0, 0, 0, 0, 0, 0, 0, 99}, id)
		},
		"lost change entry": func(tx *bolt.Tx, id []byte) error {
			return tx.Bucket(storage.BucketChanges).Delete([]byte{0, 0, 0, 0, 0, 0, 0, 1})
		},
		"version above the winner": func(tx *bolt.Tx, id []byte) error {
			return tx.Bucket(storage.BucketVersions).Put(append(append(id, '|'), 0, 0, 0, 0, 0, 0, 0, 99), tx.Bucket(storage.BucketRecords).Get(id))
		},
		"orphan version": func(tx *bolt.Tx, id []byte) error {
			return tx.Bucket(storage.BucketVersions).Put([]byte("0190d2a8-0000-7000-8000-000000000000|\x00\x00\x00\x00\x00\x00\x00\x01"), []byte(`{"id":"0190d2a8-0000-7000-8000-000000000000"}`))
		},
		"record under another id": func(tx *bolt.Tx, id []byte) error {
			return tx.Bucket(storage.BucketRecords).Put(id, bytes.Replace(tx.Bucket(storage.BucketRecords).Get(id), id[:8], []byte("ffffffff"), 1))
		},
		"bad device state": func(tx *bolt.Tx, id []byte) error {
			return tx.Bucket(storage.BucketDevices).Put([]byte("dev-a"), []byte("{"))
		},
	}
	for name, fn := range damage {
		t.Run(name, func(t *testing.T) {
			db, err := storage.Open(filepath.Join(t.TempDir(), "c.db"), storage.Options{})
			if err != nil {
				t.Fatal(err)
			}
			defer db.Close()
			recs := storagetest.Records(5, 1, 3)
			db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(1, recs...)}, nil)
			if err := db.Check(); err != nil {
				t.Fatalf("check before damage: %v", err)
			}
			if err := db.Bolt().Update(func(tx *bolt.Tx) error { return fn(tx, []byte(recs[0].ID)) }); err != nil {
				t.Fatal(err)
			}
			if err := db.Check(); err == nil {
				t.Fatal("check passed a damaged store")
			} else {
				t.Log(err)
			}
		})
	}
}

func TestPushErrorsCommitNothing(t *testing.T) {
	db := storagetest.MustOpen(t)
	// A push whose counters go backwards is refused before any write.
	recs := storagetest.Records(6, 1, 2)
	muts := storagetest.Mutations(5, recs...)
	muts[1].N = 4
	if _, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: muts}, nil); err == nil || !strings.Contains(err.Error(), "mutations[1].n") {
		t.Fatalf("decreasing counters: %v", err)
	}
	if _, err := db.Get(recs[0].ID); !errors.Is(err, storage.ErrNotFound) {
		t.Fatal("the first mutation of a refused push was stored")
	}
}

func TestFirstOpenCreatesOneWholeFile(t *testing.T) {
	dir := t.TempDir()
	path := filepath.Join(dir, "cornerbook.db")
	type result struct {
		db  *storage.DB
		err error
	}
	results := make(chan result, 2)
	for range 2 {
		go func() {
			db, err := storage.Open(path, storage.Options{Timeout: 200 * time.Millisecond})
			results <- result{db, err}
		}()
	}
	var opened []*storage.DB
	locked := 0
	for range 2 {
		r := <-results
		switch {
		case r.err == nil:
			opened = append(opened, r.db)
		case errors.Is(r.err, storage.ErrLocked):
			locked++
		default:
			t.Fatalf("open: %v", r.err)
		}
	}
	if len(opened) != 1 || locked != 1 {
		t.Fatalf("two first opens at once: %d opened, %d locked; want one of each", len(opened), locked)
	}
	defer opened[0].Close()
	if err := opened[0].Check(); err != nil {
		t.Fatal(err)
	}
	entries, _ := os.ReadDir(dir)
	if len(entries) != 1 || entries[0].Name() != "cornerbook.db" {
		var names []string
		for _, e := range entries {
			names = append(names, e.Name())
		}
		t.Fatalf("data folder holds %v, want only cornerbook.db", names)
	}
	if st, _ := os.Stat(path); st.Mode().Perm() != 0o600 {
		t.Fatalf("store file mode %v, want 0600 (it holds athletes' health data)", st.Mode().Perm())
	}
}

// A device that may see almost nothing (an athlete's phone in a big camp)
// still gets short pages: each page looks at a bounded number of change
// entries, and the cursor moves past the hidden ones.
func TestPullBoundsHiddenScan(t *testing.T) {
	db := storagetest.MustOpen(t)
	n := 4*devsync.MaxPullLimit + 100
	recs := storagetest.Records(7, 50, n/50)
	if _, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(1, recs...)}, nil); err != nil {
		t.Fatal(err)
	}
	mine := recs[len(recs)-1]
	visible := func(r *devsync.Record) bool { return r.ID == mine.ID }
	var got []devsync.Record
	since, pages := uint64(0), 0
	for {
		page, next, more, _, err := db.Pull(since, 10, visible)
		if err != nil {
			t.Fatal(err)
		}
		pages++
		if next-since > uint64(4*devsync.MaxPullLimit) {
			t.Fatalf("one page looked at %d entries", next-since)
		}
		got = append(got, page...)
		since = next
		if !more {
			break
		}
	}
	if len(got) != 1 || got[0].ID != mine.ID || since != uint64(len(recs)) || pages < 2 {
		t.Fatalf("%d pages, %d records, cursor %d of %d", pages, len(got), since, len(recs))
	}
}

func TestCampIntegrity(t *testing.T) {
	db := storagetest.MustOpen(t, storage.Options{CampIntegrity: true})
	g := storagetest.NewGen(8, "dev-coach")
	athlete := devsync.Record{ID: g.ID(), Kind: "athlete", Device: "dev-coach", Stamp: g.Stamp(), Body: []byte(`{"name":"Tavi Orrin","units":"kg"}`)}
	other := devsync.Record{ID: g.ID(), Kind: "athlete", Device: "dev-coach", Stamp: g.Stamp(), Body: []byte(`{"name":"Mira Castell","units":"kg"}`)}
	checkin := g.Checkin(athlete.ID, storagetest.Day(0))
	stranger := g.Checkin(g.ID(), storagetest.Day(0))
	notAthlete := g.Checkin(checkin.ID, storagetest.Day(0)) // names a check-in, not an athlete
	camp := devsync.Record{ID: g.ID(), Kind: "settings", Device: "dev-coach", Stamp: g.Stamp(), Body: []byte(`{"gym_name":"Quayside Boxing Club"}`)}
	ghostDelete := g.Delete(g.Checkin(g.ID(), storagetest.Day(1))) // a tombstone may name anyone

	// The athlete earlier in the same push counts.
	res, err := db.Push(devsync.PushRequest{Device: "dev-coach", Mutations: storagetest.Mutations(1, athlete, other, checkin, stranger, notAthlete, camp, ghostDelete)}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.Applied != 5 || len(res.Rejected) != 2 {
		t.Fatalf("push: %+v", res)
	}
	for i, want := range []string{"no athlete with id", "not an athlete"} {
		if rj := res.Rejected[i]; rj.Field != "athlete" || !strings.Contains(rj.Reason, want) {
			t.Errorf("rejection %d: %+v, want record.athlete: %q", i, rj, want)
		}
	}

	// A record never moves to another athlete (a phone that sees only
	// the first athlete would keep it forever).
	moved := g.Edit(checkin)
	moved.Athlete = other.ID
	res, _ = db.Push(devsync.PushRequest{Device: "dev-coach", Mutations: storagetest.Mutations(10, moved)}, nil)
	if len(res.Rejected) != 1 || res.Rejected[0].Field != "athlete" || !strings.Contains(res.Rejected[0].Reason, "cannot move to another athlete") {
		t.Fatalf("move: %+v", res.Rejected)
	}
	// An athlete record may name itself or nothing, version to version.
	self := g.Edit(athlete)
	self.Athlete = athlete.ID
	if res, _ := db.Push(devsync.PushRequest{Device: "dev-coach", Mutations: storagetest.Mutations(11, self)}, nil); res.Applied != 1 {
		t.Fatalf("athlete record naming itself: %+v", res)
	}

	// A deleted athlete still counts: their earlier records stay in the
	// store, so its export must import again.
	gone := g.Delete(self)
	late := g.Checkin(athlete.ID, storagetest.Day(2))
	res, _ = db.Push(devsync.PushRequest{Device: "dev-coach", Mutations: storagetest.Mutations(20, gone, late)}, nil)
	if res.Applied != 2 || len(res.Rejected) != 0 {
		t.Fatalf("records of a deleted athlete: %+v", res)
	}
}

// TestExportOrderImportsUnderCampIntegrity: All's order (athletes first)
// replays into an empty store with CampIntegrity, even when an athlete
// was edited after their records were logged, or deleted with records
// left — the order an import of an export pushes in.
func TestExportOrderImportsUnderCampIntegrity(t *testing.T) {
	src := storagetest.MustOpen(t, storage.Options{CampIntegrity: true})
	g := storagetest.NewGen(9, "dev-coach")
	var muts []devsync.Record
	var athletes []devsync.Record
	for i := 0; i < 3; i++ {
		a := devsync.Record{ID: g.ID(), Kind: "athlete", Device: "dev-coach", Stamp: g.Stamp(), Body: []byte(fmt.Sprintf(`{"name":"Athlete %d","units":"kg"}`, i))}
		athletes = append(athletes, a)
		muts = append(muts, a)
		for d := 0; d < 4; d++ {
			muts = append(muts, g.Checkin(a.ID, storagetest.Day(d)))
		}
	}
	muts = append(muts, g.Edit(athletes[0]), g.Delete(athletes[1])) // both now after their records in the feed
	if res, err := src.Push(devsync.PushRequest{Device: "dev-coach", Mutations: storagetest.Mutations(1, muts...)}, nil); err != nil || len(res.Rejected) != 0 {
		t.Fatalf("%+v %v", res, err)
	}
	var export []devsync.Record
	if err := src.All(true, func(r devsync.Record) error { export = append(export, r); return nil }); err != nil {
		t.Fatal(err)
	}
	if export[0].Kind != "athlete" || export[1].Kind != "athlete" || export[2].Kind != "athlete" || export[3].Kind == "athlete" {
		t.Fatalf("export does not start with the athletes: %v %v %v %v", export[0].Kind, export[1].Kind, export[2].Kind, export[3].Kind)
	}
	dst := storagetest.MustOpen(t, storage.Options{CampIntegrity: true})
	for i := 0; i < len(export); i += 4 { // small batches, as an import sends them
		end := min(i+4, len(export))
		res, err := dst.Push(devsync.PushRequest{Device: "import", Mutations: storagetest.Mutations(uint64(i+1), export[i:end]...)}, nil)
		if err != nil || len(res.Rejected) != 0 {
			t.Fatalf("import batch at %d: %+v %v", i, res.Rejected, err)
		}
	}
	var again []devsync.Record
	dst.All(true, func(r devsync.Record) error { again = append(again, r); return nil })
	if !reflect.DeepEqual(again, export) {
		t.Fatalf("the imported store differs from the exported one (%d vs %d records)", len(again), len(export))
	}
}

// A push large enough to be prepared on several cores ahead of its
// transaction stores and rejects exactly what the same mutations pushed
// one at a time (prepared inside the transaction) do.
func TestPreparedAheadMatchesOneByOne(t *testing.T) {
	g := storagetest.NewGen(7, "dev-a")
	athlete := g.ID()
	var recs []devsync.Record
	bad := 0
	for d := 0; d < 150; d++ {
		r := g.Checkin(athlete, storagetest.Day(d))
		kg := 20 + 2*d // prepareCheckin takes 25–250 kg
		if kg < 25 || kg > 250 {
			bad++
		}
		r.Body = []byte(fmt.Sprintf(`{"mass_kg":%d}`, kg))
		recs = append(recs, r)
	}
	recs = append(recs, g.Delete(recs[40]), g.Delete(recs[3]))
	muts := storagetest.Mutations(1, recs...)

	whole := storagetest.MustOpen(t, storage.Options{Prepare: prepareCheckin})
	resWhole, err := whole.Push(devsync.PushRequest{Device: "dev-a", Mutations: muts}, nil)
	if err != nil {
		t.Fatal(err)
	}
	single := storagetest.MustOpen(t, storage.Options{Prepare: prepareCheckin})
	var rejected []devsync.Rejection
	for _, m := range muts {
		res, err := single.Push(devsync.PushRequest{Device: "dev-a", Mutations: []devsync.Mutation{m}}, nil)
		if err != nil {
			t.Fatal(err)
		}
		rejected = append(rejected, res.Rejected...)
	}
	if len(resWhole.Rejected) != bad {
		t.Fatalf("%d rejected, want %d: %+v", len(resWhole.Rejected), bad, resWhole.Rejected)
	}
	if !reflect.DeepEqual(resWhole.Rejected, rejected) {
		t.Fatalf("rejections differ:\nwhole %+v\none by one %+v", resWhole.Rejected, rejected)
	}
	a, b := dumpAll(t, whole), dumpAll(t, single)
	if len(a) != 150-bad || !reflect.DeepEqual(a, b) {
		t.Fatalf("stored %d records in one push, %d one by one, or they differ", len(a), len(b))
	}
}

// When allow rewrites the incoming record, the rewrite is what Prepare
// validates and what is stored, not the record as it was pushed.
func TestPrepareSeesWhatAllowWrote(t *testing.T) {
	db := storagetest.MustOpen(t, storage.Options{Prepare: prepareCheckin})
	g := storagetest.NewGen(8, "dev-a")
	athlete := g.ID()
	var recs []devsync.Record
	for d := 0; d < 40; d++ {
		r := g.Checkin(athlete, storagetest.Day(d))
		r.Body = []byte(`{"mass_kg":70}`)
		recs = append(recs, r)
	}
	allow := func(_, in *devsync.Record) error {
		if in.Day == storagetest.Day(5) {
			in.Body = []byte(`{"mass_kg":80}`)
		}
		if in.Day == storagetest.Day(6) {
			in.Body = []byte(`{"mass_kg":8}`)
		}
		return nil
	}
	res, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(1, recs...)}, allow)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Rejected) != 1 || res.Rejected[0].ID != recs[6].ID || res.Rejected[0].Field != "body.mass_kg" {
		t.Fatalf("rejected %+v, want the record allow made 8 kg", res.Rejected)
	}
	got, err := db.Get(recs[5].ID)
	if err != nil {
		t.Fatal(err)
	}
	if want := `{"mass_kg":80,"mass_lb":176.4}`; string(got.Body) != want { // 80 / 0.45359237 = 176.37 lb (exact factor, 1959 agreement)
		t.Fatalf("stored %s, want allow's rewrite prepared: %s", got.Body, want)
	}
}

// A Prepare that panics on a worker goroutine panics on the caller's, as
// it would inside the transaction, and nothing is stored.
func TestPreparePanicReachesTheCaller(t *testing.T) {
	g := storagetest.NewGen(9, "dev-a")
	athlete := g.ID()
	var recs []devsync.Record
	for d := 0; d < 64; d++ {
		recs = append(recs, g.Checkin(athlete, storagetest.Day(d)))
	}
	last := recs[len(recs)-1].ID // prepared on the last worker
	db := storagetest.MustOpen(t, storage.Options{Prepare: func(r *devsync.Record) error {
		if r.ID == last {
			panic("bad prepare")
		}
		return nil
	}})
	func() {
		defer func() {
			if v := recover(); v != "bad prepare" {
				t.Fatalf("recovered %v, want the prepare's panic", v)
			}
		}()
		db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(1, recs...)}, nil)
	}()
	if all := dumpAll(t, db); len(all) != 0 {
		t.Fatalf("after the panic the store holds %d records", len(all))
	}
}
