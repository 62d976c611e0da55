package storagetest

import (
	"bytes"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"strings"
	"testing"
	"time"

	bolt "go.etcd.io/bbolt"

	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// RunConformance runs the behaviour every Cornerbook store must show, each
// case as a subtest on a fresh store from open. open must return an empty
// store whose Prepare accepts every well-shaped record (nil Prepare).
func RunConformance(t *testing.T, open func(t *testing.T) *storage.DB) {
	cases := []struct {
		name string
		fn   func(t *testing.T, db *storage.DB)
	}{
		{"PushIsIdempotent", testIdempotent},
		{"RepushWithNewCountersIsSuperseded", testRepushNewCounters},
		{"LowerStampNeverOverwritesHigher", testLowerStamp},
		{"DeleteIsStickyUntilRestore", testStickyDelete},
		{"RestoreThenDeleteAgain", testRestoreDeleteAgain},
		{"RejectedMutationInMiddleOfBatch", testRejectMiddle},
		{"BadVersionLeavesStoredBytesUnchanged", testBadVersionUnchanged},
		{"KindCannotChangeUnderAnID", testKindConflict},
		{"RecordShapeChecks", testShape},
		{"RequestLevelProblemsRefuseTheWholePush", testRequestLevel},
		{"AllowDecidesForbidden", testAllow},
		{"PullPagination", testPullPagination},
		{"PullEditedRecordMovesToLaterSeq", testPullEditMoves},
		{"PullVisibleFilter", testPullVisible},
		{"RangeOrderingAndBounds", testRange},
		{"KindAcrossAthletes", testKind},
		{"AllInSequenceOrder", testAll},
		{"HistoryKeepsEveryVersion", testHistory},
		{"DeviceState", testDevice},
		{"SecondOpenIsLocked", testLocked},
		{"RotateEpoch", testRotateEpoch},
		{"WriteToMakesAWorkingCopy", testWriteTo},
	}
	for _, c := range cases {
		t.Run(c.name, func(t *testing.T) { c.fn(t, open(t)) })
	}
}

// ---- helpers ----

func push(t *testing.T, db *storage.DB, device string, muts ...devsync.Mutation) storage.PushResult {
	t.Helper()
	res, err := db.Push(devsync.PushRequest{Device: device, Mutations: muts}, nil)
	if err != nil {
		t.Fatalf("push from %s: %v", device, err)
	}
	return res
}

func mustGet(t *testing.T, db *storage.DB, id string) devsync.Record {
	t.Helper()
	r, err := db.Get(id)
	if err != nil {
		t.Fatalf("get %s: %v", id, err)
	}
	return r
}

func sameRecord(t *testing.T, what string, got, want devsync.Record) {
	t.Helper()
	if !reflect.DeepEqual(got, want) {
		t.Fatalf("%s:\n got %+v (body %s)\nwant %+v (body %s)", what, got, got.Body, want, want.Body)
	}
}

func rawRecord(t *testing.T, db *storage.DB, id string) []byte {
	t.Helper()
	var out []byte
	err := db.Bolt().View(func(tx *bolt.Tx) error {
		out = bytes.Clone(tx.Bucket(storage.BucketRecords).Get([]byte(id)))
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	return out
}

func pullAll(t *testing.T, db *storage.DB, since uint64, limit int, visible func(*devsync.Record) bool) ([]devsync.Record, uint64) {
	t.Helper()
	var all []devsync.Record
	for pages := 0; ; pages++ {
		if pages > 10000 {
			t.Fatal("pull never ends")
		}
		recs, next, more, _, err := db.Pull(since, limit, visible)
		if err != nil {
			t.Fatal(err)
		}
		if limit > 0 && len(recs) > limit {
			t.Fatalf("page of %d records for limit %d", len(recs), limit)
		}
		if next < since {
			t.Fatalf("cursor went back from %d to %d", since, next)
		}
		all = append(all, recs...)
		since = next
		if !more {
			return all, since
		}
	}
}

func ids(recs []devsync.Record) []string {
	out := make([]string, len(recs))
	for i, r := range recs {
		out[i] = r.ID
	}
	return out
}

func history(t *testing.T, db *storage.DB, id string) []devsync.Record {
	t.Helper()
	h, err := db.History(id)
	if err != nil {
		t.Fatalf("history %s: %v", id, err)
	}
	return h
}

// ---- cases ----

func testIdempotent(t *testing.T, db *storage.DB) {
	recs := Records(1, 2, 5)
	muts := Mutations(1, recs...)
	first := push(t, db, "dev-a", muts...)
	if first.Applied != 10 || first.Duplicates != 0 || first.AckedThrough != 10 || len(first.Changed) != 10 {
		t.Fatalf("first push: %+v", first)
	}
	second := push(t, db, "dev-a", muts...)
	if second.Applied != 0 || second.Duplicates != 10 || second.AckedThrough != 10 || len(second.Changed) != 0 {
		t.Fatalf("second push of the same batch: %+v", second)
	}
	if second.MaxSeq != first.MaxSeq {
		t.Fatalf("a duplicate push moved the sequence from %d to %d", first.MaxSeq, second.MaxSeq)
	}
	// A retry overlapping the acknowledged part: only the new tail applies.
	more := Records(2, 1, 2)
	third := push(t, db, "dev-a", append(muts[8:], Mutations(11, more...)...)...)
	if third.Applied != 2 || third.Duplicates != 2 || third.AckedThrough != 12 {
		t.Fatalf("overlapping retry: %+v", third)
	}
	got, _ := pullAll(t, db, 0, 0, nil)
	if len(got) != 12 {
		t.Fatalf("store holds %d records, want 12 (each once)", len(got))
	}
	for _, r := range recs {
		if h := history(t, db, r.ID); len(h) != 1 {
			t.Fatalf("record %s has %d versions after a duplicate push, want 1", r.ID, len(h))
		}
	}
}

func testRepushNewCounters(t *testing.T, db *storage.DB) {
	// After a hub restore a device re-pushes what it wrote, with new
	// counters and the original stamps: nothing changes.
	recs := Records(3, 1, 3)
	push(t, db, "dev-a", Mutations(1, recs...)...)
	before, _ := db.MaxSeq()
	res := push(t, db, "dev-a", Mutations(100, recs...)...)
	if res.Superseded != 3 || res.Applied != 0 || res.AckedThrough != 102 {
		t.Fatalf("re-push with new counters: %+v", res)
	}
	if after, _ := db.MaxSeq(); after != before {
		t.Fatalf("an identical re-push moved the sequence from %d to %d", before, after)
	}
}

func testLowerStamp(t *testing.T, db *storage.DB) {
	g := NewGen(4, "dev-a")
	v1 := g.Checkin(g.ID(), Day(0))
	v2 := g.Edit(v1)
	push(t, db, "dev-a", Mutations(1, v2)...)
	// The older version arrives late, from the same and from another device.
	res := push(t, db, "dev-a", Mutations(2, v1)...)
	if res.Superseded != 1 || res.Applied != 0 {
		t.Fatalf("late older version: %+v", res)
	}
	other := v1
	other.Device = "dev-b"
	push(t, db, "dev-b", Mutations(1, other)...)
	sameRecord(t, "stored winner", mustGet(t, db, v1.ID), v2)
	if h := history(t, db, v1.ID); len(h) != 1 {
		t.Fatalf("a losing version entered the history: %d versions", len(h))
	}
	// The losers are kept for audit, in arrival order.
	losers, err := db.Conflicts(v1.ID)
	if err != nil || len(losers) != 2 {
		t.Fatalf("conflicts audit holds %d losing versions (err %v), want 2", len(losers), err)
	}
	sameRecord(t, "first loser", losers[0], v1)
	sameRecord(t, "second loser", losers[1], other)
}

func testStickyDelete(t *testing.T, db *storage.DB) {
	coach, phone := NewGen(5, "dev-coach"), NewGen(6, "dev-phone")
	r := coach.Checkin(coach.ID(), Day(1))
	push(t, db, "dev-coach", Mutations(1, r)...)
	del := coach.Delete(r)
	push(t, db, "dev-coach", Mutations(2, del)...)
	// An offline phone edits its old copy much later (later stamp).
	phone.pt = coach.pt + 3_600_000
	late := phone.Edit(r)
	if late.Stamp.Compare(del.Stamp) <= 0 {
		t.Fatal("test setup: the edit must carry the later stamp")
	}
	res := push(t, db, "dev-phone", Mutations(1, late)...)
	if res.Superseded != 1 {
		t.Fatalf("edit of a deleted record: %+v", res)
	}
	if got := mustGet(t, db, r.ID); !got.Deleted {
		t.Fatal("a later-stamped edit revived a deleted record")
	}
	n := 0
	db.Range(r.Athlete, r.Kind, "", "", func(devsync.Record) error { n++; return nil })
	if n != 0 {
		t.Fatal("a deleted record is still in the athlete/kind/day index")
	}
	// An explicit restore (gen+1) brings it back; an old-generation edit
	// does not win against it.
	rest := coach.Restore(del)
	if res := push(t, db, "dev-coach", Mutations(3, rest)...); res.Applied != 1 {
		t.Fatalf("restore: %+v", res)
	}
	phone.pt += 3_600_000
	stale := phone.Edit(r) // gen 0, latest stamp of all
	if res := push(t, db, "dev-phone", Mutations(2, stale)...); res.Superseded != 1 {
		t.Fatalf("gen-0 edit after restore: %+v", res)
	}
	sameRecord(t, "restored record", mustGet(t, db, r.ID), rest)
	if err := db.Range(r.Athlete, r.Kind, "", "", func(got devsync.Record) error { n++; return nil }); err != nil || n != 1 {
		t.Fatalf("restored record in the index %d times (err %v), want once", n, err)
	}
}

func testRestoreDeleteAgain(t *testing.T, db *storage.DB) {
	g := NewGen(7, "dev-a")
	r := g.Checkin(g.ID(), Day(2))
	d1 := g.Delete(r)
	r1 := g.Restore(d1)
	e1 := g.Edit(r1)
	d2 := g.Delete(e1)
	res := push(t, db, "dev-a", Mutations(1, r, d1, r1, e1, d2)...)
	if res.Applied != 5 || len(res.Changed) != 1 {
		t.Fatalf("push of a record's life: %+v", res)
	}
	sameRecord(t, "final state", mustGet(t, db, r.ID), d2)
	sameRecord(t, "Changed carries the final version", res.Changed[0], d2)
	if got := mustGet(t, db, r.ID); got.Gen != 1 || !got.Deleted {
		t.Fatalf("after restore and delete: gen %d deleted %v, want gen 1 deleted", got.Gen, got.Deleted)
	}
	// The same life delivered in reverse order ends the same.
	rev := push(t, db, "dev-b", Mutations(1, d2, e1, r1, d1, r)...)
	if rev.Applied != 0 || rev.Superseded != 5 {
		t.Fatalf("reverse delivery: %+v", rev)
	}
	// Restore again (gen 2).
	r2 := g.Restore(d2)
	push(t, db, "dev-a", Mutations(6, r2)...)
	sameRecord(t, "second restore", mustGet(t, db, r.ID), r2)
}

func testRejectMiddle(t *testing.T, db *storage.DB) {
	recs := Records(8, 1, 3)
	bad := recs[1]
	bad.Day = "2026-02-30"
	res := push(t, db, "dev-a", Mutations(1, recs[0], bad, recs[2])...)
	if res.Applied != 2 || len(res.Rejected) != 1 || res.AckedThrough != 3 {
		t.Fatalf("batch with a bad mutation in the middle: %+v", res)
	}
	rej := res.Rejected[0]
	if rej.N != 2 || rej.ID != bad.ID || rej.Code != devsync.CodeValidation || rej.Field != "day" || !strings.Contains(rej.Reason, "2026-02-30") {
		t.Fatalf("rejection does not say which mutation, field and why: %+v", rej)
	}
	if _, err := db.Get(bad.ID); !errors.Is(err, storage.ErrNotFound) {
		t.Fatalf("the rejected record was stored (err %v)", err)
	}
	if st, _ := db.Device("dev-a"); st.LastN != 3 {
		t.Fatalf("device counter %d, want 3: a poisoned mutation must not block the queue", st.LastN)
	}
	// The device's fixed version comes with a new counter.
	res = push(t, db, "dev-a", Mutations(4, recs[1])...)
	if res.Applied != 1 {
		t.Fatalf("fixed version: %+v", res)
	}
}

func testBadVersionUnchanged(t *testing.T, db *storage.DB) {
	g := NewGen(9, "dev-a")
	r := g.Checkin(g.ID(), Day(3))
	push(t, db, "dev-a", Mutations(1, r)...)
	before := rawRecord(t, db, r.ID)
	seq, _ := db.MaxSeq()

	badDay := g.Edit(r)
	badDay.Day = "03/05/2026"
	badAthlete := g.Edit(r)
	badAthlete.Athlete = "Jo|e"
	badOp := devsync.Mutation{Op: devsync.OpDelete, Record: g.Edit(r)} // delete without deleted: true
	badKind := g.Edit(r)
	badKind.Kind = "jump"
	muts := Mutations(2, badDay, badAthlete)
	badOp.N = 4
	muts = append(muts, badOp)
	muts = append(muts, Mutations(5, badKind)...)
	forbidden := g.Edit(r)
	muts = append(muts, Mutations(6, forbidden)...)
	res, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: muts}, func(_, rec *devsync.Record) error {
		if rec.Stamp == forbidden.Stamp {
			return errors.New("this device may only write its own athlete's records")
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Rejected) != 5 || res.Applied != 0 || res.AckedThrough != 6 {
		t.Fatalf("five bad versions: %+v", res)
	}
	wantFields := []string{"day", "athlete", "op", "kind", ""}
	for i, rej := range res.Rejected {
		if rej.Field != wantFields[i] || rej.Reason == "" {
			t.Errorf("rejection %d: field %q reason %q, want field %q and a reason", i, rej.Field, rej.Reason, wantFields[i])
		}
	}
	if after := rawRecord(t, db, r.ID); !bytes.Equal(before, after) {
		t.Fatalf("stored record changed:\nbefore %s\nafter  %s", before, after)
	}
	if s, _ := db.MaxSeq(); s != seq {
		t.Fatalf("rejected versions moved the sequence from %d to %d", seq, s)
	}
	if h := history(t, db, r.ID); len(h) != 1 {
		t.Fatalf("rejected versions entered the history: %d versions", len(h))
	}
}

func testKindConflict(t *testing.T, db *storage.DB) {
	g := NewGen(10, "dev-a")
	r := g.Checkin(g.ID(), Day(0))
	push(t, db, "dev-a", Mutations(1, r)...)
	other := g.Edit(r)
	other.Kind = "round"
	res := push(t, db, "dev-a", Mutations(2, other)...)
	if len(res.Rejected) != 1 || res.Rejected[0].Field != "kind" || res.Rejected[0].Reason != "this id already belongs to a checkin record" {
		t.Fatalf("kind change under an id: %+v", res.Rejected)
	}
	// Also for a tombstone of the wrong kind.
	del := g.Delete(r)
	del.Kind = "round"
	if res := push(t, db, "dev-a", Mutations(3, del)...); len(res.Rejected) != 1 {
		t.Fatalf("tombstone of another kind: %+v", res)
	}
	if mustGet(t, db, r.ID).Deleted {
		t.Fatal("a tombstone of another kind deleted the record")
	}
}

func testShape(t *testing.T, db *storage.DB) {
	g := NewGen(11, "dev-a")
	base := g.Checkin(g.ID(), Day(0))
	type tc struct {
		mut   func(*devsync.Record)
		field string
	}
	bad := []tc{
		{func(r *devsync.Record) { r.ID = "" }, "id"},
		{func(r *devsync.Record) { r.ID = "not-an-id" }, "id"},
		{func(r *devsync.Record) { r.ID = strings.ToUpper(r.ID) }, "id"},
		{func(r *devsync.Record) { r.ID = strings.ReplaceAll(r.ID, "-", "") }, "id"},
		{func(r *devsync.Record) { r.ID = "01ARZ3NDEKTSV4RRFFQ69G5FAI" }, "id"}, // I is not Crockford
		{func(r *devsync.Record) { r.ID = "81ARZ3NDEKTSV4RRFFQ69G5FAV" }, "id"}, // overflows 128 bits
		{func(r *devsync.Record) { r.Kind = "" }, "kind"},
		{func(r *devsync.Record) { r.Kind = "check|in" }, "kind"},
		{func(r *devsync.Record) { r.Athlete = "athlete 1" }, "athlete"},
		{func(r *devsync.Record) { r.Day = "2026-13-01" }, "day"},
		{func(r *devsync.Record) { r.Day = "2026-3-1" }, "day"},
	}
	for i, c := range bad {
		r := base
		r.ID = g.ID()
		c.mut(&r)
		res := push(t, db, "dev-a", Mutations(uint64(i+1), r)...)
		if len(res.Rejected) != 1 || res.Rejected[0].Field != c.field || res.Rejected[0].Reason == "" {
			t.Errorf("case %d (%+v): rejected %+v, want one rejection naming %s", i, r, res.Rejected, c.field)
		}
	}
	// Good shapes: a ULID, a day-less camp-wide record, a tombstone of a
	// never-seen record.
	ulid := base
	ulid.ID = "01ARZ3NDEKTSV4RRFFQ69G5FAV"
	camp := devsync.Record{ID: g.ID(), Kind: "settings", At: "2026-03-02T08:00:00+02:00", Device: "dev-a", Stamp: g.Stamp(), Body: []byte(`{"gym_name":"Harbour Road Boxing"}`)}
	ghost := g.Delete(g.Checkin(base.Athlete, Day(1)))
	res := push(t, db, "dev-a", Mutations(100, ulid, camp, ghost)...)
	if res.Applied != 3 || len(res.Rejected) != 0 {
		t.Fatalf("well-shaped records: %+v", res)
	}
}

func testRequestLevel(t *testing.T, db *storage.DB) {
	recs := Records(12, 1, 3)
	muts := Mutations(1, recs...)
	muts[2].N = 2 // 1, 2, 2
	_, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: muts}, nil)
	var fe *devsync.FieldError
	if !errors.As(err, &fe) || fe.Field != "mutations[2].n" || !strings.Contains(fe.Reason, "strictly increasing") {
		t.Fatalf("non-increasing counters: err %v, want a field error on mutations[2].n", err)
	}
	muts[2].N = 0
	if _, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: muts}, nil); !errors.As(err, &fe) || fe.Field != "mutations[2].n" {
		t.Fatalf("zero counter: err %v", err)
	}
	if _, err := db.Push(devsync.PushRequest{Mutations: Mutations(1, recs...)}, nil); !errors.As(err, &fe) || fe.Field != "device" {
		t.Fatalf("no device id: err %v", err)
	}
	if _, err := db.Device("dev-a"); !errors.Is(err, storage.ErrNotFound) {
		t.Fatalf("a refused push left device state behind (err %v)", err)
	}
	if s, _ := db.MaxSeq(); s != 0 {
		t.Fatalf("a refused push stored something: max seq %d", s)
	}
}

// forbiddenField is how a rights check may say which field it refuses:
// an error that wraps a *devsync.FieldError.
type forbiddenField struct{ fe *devsync.FieldError }

func (e forbiddenField) Error() string { return "not allowed: " + e.fe.Error() }
func (e forbiddenField) Unwrap() error { return e.fe }

func testAllow(t *testing.T, db *storage.DB) {
	recs := Records(13, 2, 2) // athletes A, B alternate
	a := recs[0].Athlete
	// An athlete's phone may write only that athlete's records, and may not
	// take over another athlete's record by renaming it.
	onlyA := func(stored, rec *devsync.Record) error {
		if rec.Athlete != a {
			return errors.New("an athlete's phone writes only that athlete's records")
		}
		if stored != nil && stored.Athlete != a {
			return forbiddenField{&devsync.FieldError{Field: "athlete", Reason: "this record belongs to another athlete"}}
		}
		return nil
	}
	res, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: Mutations(1, recs...)}, onlyA)
	if err != nil {
		t.Fatal(err)
	}
	if res.Applied != 2 || len(res.Rejected) != 2 || res.AckedThrough != 4 {
		t.Fatalf("allow: %+v", res)
	}
	for _, rej := range res.Rejected {
		if rej.Code != devsync.CodeForbidden || !strings.Contains(rej.Reason, "only that athlete") {
			t.Fatalf("forbidden rejection: %+v", rej)
		}
	}
	// B's record, stored by the coach, cannot be renamed to A by A's phone.
	push(t, db, "dev-coach", Mutations(1, recs[1])...)
	takeover := NewGen(14, "dev-a").Edit(recs[1])
	takeover.Athlete = a
	var sawStored *devsync.Record
	res, _ = db.Push(devsync.PushRequest{Device: "dev-a", Mutations: Mutations(5, takeover)}, func(stored, rec *devsync.Record) error {
		sawStored = stored
		err := onlyA(stored, rec)
		stored.Athlete = "tampered" // a copy: must not reach the store
		return err
	})
	if sawStored == nil || sawStored.ID != recs[1].ID {
		t.Fatalf("allow did not see the stored winner: %+v", sawStored)
	}
	if len(res.Rejected) != 1 || res.Rejected[0].Code != devsync.CodeForbidden || res.Rejected[0].Field != "athlete" {
		t.Fatalf("takeover: %+v", res.Rejected)
	}
	sameRecord(t, "record after a refused takeover", mustGet(t, db, recs[1].ID), recs[1])
	// stored is a copy: an allow that scribbles on it cannot confuse the
	// index update of an accepted edit.
	moved := NewGen(16, "dev-coach").Edit(recs[1])
	moved.Day = Day(7)
	res, _ = db.Push(devsync.PushRequest{Device: "dev-coach", Mutations: Mutations(2, moved)}, func(stored, _ *devsync.Record) error {
		stored.Athlete, stored.Day = a, Day(0)
		return nil
	})
	if res.Applied != 1 {
		t.Fatalf("accepted edit: %+v", res)
	}
	if err := db.Check(); err != nil {
		t.Fatalf("after an allow that changed its copy of the stored record: %v", err)
	}
	// devsync.Forbidden (a *RightsError) is FORBIDDEN with its field.
	res, _ = db.Push(devsync.PushRequest{Device: "dev-a", Mutations: Mutations(7, NewGen(17, "dev-a").Checkin(a, Day(5)))},
		func(_, _ *devsync.Record) error {
			return devsync.Forbidden("kind", "an athlete's phone may not log rounds")
		})
	if len(res.Rejected) != 1 || res.Rejected[0].Code != devsync.CodeForbidden || res.Rejected[0].Field != "kind" || res.Rejected[0].Reason != "an athlete's phone may not log rounds" {
		t.Fatalf("rights error from allow: %+v", res.Rejected)
	}
	// A *FieldError from allow is a validation rejection with its field.
	res, _ = db.Push(devsync.PushRequest{Device: "dev-a", Mutations: Mutations(8, NewGen(15, "dev-a").Checkin(a, Day(4)))},
		func(stored, _ *devsync.Record) error {
			if stored != nil {
				t.Error("allow saw a stored version of a new record")
			}
			return devsync.Invalid("athlete", "is not in this camp")
		})
	if len(res.Rejected) != 1 || res.Rejected[0].Code != devsync.CodeValidation || res.Rejected[0].Field != "athlete" {
		t.Fatalf("field error from allow: %+v", res.Rejected)
	}
}

func testPullPagination(t *testing.T, db *storage.DB) {
	recs := Records(15, 2, 4)
	push(t, db, "dev-a", Mutations(1, recs...)...)
	want := ids(recs)
	for limit := 1; limit <= len(recs)+1; limit++ {
		got, next := pullAll(t, db, 0, limit, nil)
		if !slices.Equal(ids(got), want) {
			t.Fatalf("limit %d: pulled %v, want %v in push order", limit, ids(got), want)
		}
		if max, _ := db.MaxSeq(); next != max {
			t.Fatalf("limit %d: cursor %d after the last page, want %d", limit, next, max)
		}
	}
	recs1, next, more, maxSeq, err := db.Pull(0, 3, nil)
	if err != nil || len(recs1) != 3 || !more || next != 3 || maxSeq != uint64(len(recs)) {
		t.Fatalf("first page: %d records next %d more %v max %d err %v", len(recs1), next, more, maxSeq, err)
	}
	// Past the end, and a limit above the cap.
	if recs, next, more, _, _ := db.Pull(maxSeq, 10, nil); len(recs) != 0 || more || next != maxSeq {
		t.Fatalf("pull at the end: %d records next %d more %v", len(recs), next, more)
	}
	if recs, next, more, _, _ := db.Pull(maxSeq+50, 10, nil); len(recs) != 0 || more || next != maxSeq+50 {
		t.Fatalf("pull beyond the end (old epoch): %d records next %d more %v", len(recs), next, more)
	}
	if big, _, more, _, err := db.Pull(0, devsync.MaxPullLimit*10, nil); err != nil || len(big) != len(recs) || more {
		t.Fatalf("limit above the cap: %d records, more %v, err %v", len(big), more, err)
	}
}

func testPullEditMoves(t *testing.T, db *storage.DB) {
	g := NewGen(16, "dev-a")
	recs := Records(16, 1, 6)
	push(t, db, "dev-a", Mutations(1, recs...)...)
	// A device pulls the first page, then records change.
	page, cursor, _, _, _ := db.Pull(0, 3, nil)
	seen := map[string]int{}
	for _, r := range page {
		seen[r.ID]++
	}
	e0, e4 := g.Edit(recs[0]), g.Delete(recs[4])
	push(t, db, "dev-a", Mutations(7, e0, e4)...)
	rest, _ := pullAll(t, db, cursor, 2, nil)
	for _, r := range rest {
		seen[r.ID]++
	}
	for i, r := range recs {
		want := 1
		if i == 0 {
			want = 2 // seen before the edit, and once more after it
		}
		if seen[r.ID] != want {
			t.Errorf("record %d pulled %d times, want %d", i, seen[r.ID], want)
		}
	}
	if last := rest[len(rest)-2:]; last[0].ID != e0.ID || last[1].ID != e4.ID || !last[1].Deleted {
		t.Fatalf("edited records are not at the end of the feed: %v", ids(rest))
	}
	// A fresh pull lists every record once, edited ones at their new place.
	all, _ := pullAll(t, db, 0, 1, nil)
	wantIDs := append(ids(recs[1:4]), recs[5].ID, e0.ID, e4.ID)
	if !slices.Equal(ids(all), wantIDs) {
		t.Fatalf("fresh pull %v, want %v", ids(all), wantIDs)
	}
}

func testPullVisible(t *testing.T, db *storage.DB) {
	recs := Records(17, 3, 4) // athletes 0,1,2 repeating
	push(t, db, "dev-a", Mutations(1, recs...)...)
	mine := recs[1].Athlete
	visible := func(r *devsync.Record) bool { return r.Athlete == mine }
	for limit := 1; limit <= 5; limit++ {
		got, next := pullAll(t, db, 0, limit, visible)
		if len(got) != 4 {
			t.Fatalf("limit %d: %d visible records, want 4", limit, len(got))
		}
		for _, r := range got {
			if r.Athlete != mine {
				t.Fatalf("filter leaked record of %s", r.Athlete)
			}
		}
		if next != 12 {
			t.Fatalf("limit %d: cursor %d, want 12 (past hidden entries too)", limit, next)
		}
	}
	// A page of only hidden entries still moves the cursor.
	hiddenAll := func(*devsync.Record) bool { return false }
	recs2, next, more, _, _ := db.Pull(0, 5, hiddenAll)
	if len(recs2) != 0 || next != 12 || more {
		t.Fatalf("all hidden: %d records next %d more %v", len(recs2), next, more)
	}
}

func testRange(t *testing.T, db *storage.DB) {
	g := NewGen(18, "dev-a")
	a, b := g.ID(), g.ID()
	var muts []devsync.Record
	want := map[string][]string{} // day → ids of athlete a checkins
	for d := 0; d < 6; d++ {
		for k := 0; k < 2; k++ {
			r := g.Checkin(a, Day(d))
			muts = append(muts, r)
			want[r.Day] = append(want[r.Day], r.ID)
		}
		muts = append(muts, g.Checkin(b, Day(d)))
		round := g.Checkin(a, Day(d))
		round.Kind = "round"
		muts = append(muts, round)
	}
	push(t, db, "dev-a", Mutations(1, muts...)...)
	collect := func(from, to string) []devsync.Record {
		var out []devsync.Record
		if err := db.Range(a, "checkin", from, to, func(r devsync.Record) error { out = append(out, r); return nil }); err != nil {
			t.Fatal(err)
		}
		return out
	}
	got := collect(Day(1), Day(3))
	var wantIDs []string
	for d := 1; d <= 3; d++ {
		w := slices.Clone(want[Day(d)])
		slices.Sort(w)
		wantIDs = append(wantIDs, w...)
	}
	if !slices.Equal(ids(got), wantIDs) {
		t.Fatalf("range days 1–3: %v, want %v (by day, then id)", ids(got), wantIDs)
	}
	for _, r := range got {
		if r.Athlete != a || r.Kind != "checkin" || r.Day < Day(1) || r.Day > Day(3) {
			t.Fatalf("range returned %+v", r)
		}
	}
	if n := len(collect("", "")); n != 12 {
		t.Fatalf("open range: %d records, want 12", n)
	}
	if n := len(collect(Day(5), Day(9))); n != 2 {
		t.Fatalf("range past the end: %d, want 2", n)
	}
	if n := len(collect(Day(4), Day(2))); n != 0 {
		t.Fatalf("empty range: %d", n)
	}
	// Moving a record to another day and athlete moves its index entry;
	// deleting it removes it.
	moved := g.Edit(muts[0])
	moved.Day = Day(9)
	gone := g.Delete(muts[1])
	push(t, db, "dev-a", Mutations(100, moved, gone)...)
	if n := len(collect(Day(0), Day(0))); n != 0 {
		t.Fatalf("day 0 still lists %d records after one moved and one was deleted", n)
	}
	if got := collect(Day(9), Day(9)); len(got) != 1 || got[0].ID != moved.ID {
		t.Fatalf("moved record not found on its new day: %v", ids(got))
	}
	moved2 := g.Edit(moved)
	moved2.Athlete = b
	push(t, db, "dev-a", Mutations(200, moved2)...)
	if n := len(collect(Day(9), Day(9))); n != 0 {
		t.Fatal("record moved to another athlete is still listed under the first")
	}
	var nb int
	db.Range(b, "checkin", Day(9), Day(9), func(devsync.Record) error { nb++; return nil })
	if nb != 1 {
		t.Fatalf("record moved to athlete b: listed %d times under b", nb)
	}
	// Records without a day (bouts, settings) belong to every range, first.
	bout := devsync.Record{ID: g.ID(), Kind: "bout", Athlete: a, Device: "dev-a", Stamp: g.Stamp(), Body: []byte(`{"bout_day":"2026-04-18"}`)}
	dated := g.Checkin(a, Day(2))
	dated.Kind = "bout"
	push(t, db, "dev-a", Mutations(300, bout, dated)...)
	for _, bounds := range [][2]string{{"", ""}, {Day(1), Day(3)}, {"0000-01-01", "9999-12-31"}, {Day(5), Day(6)}} {
		var got []string
		db.Range(a, "bout", bounds[0], bounds[1], func(r devsync.Record) error { got = append(got, r.ID); return nil })
		want := []string{bout.ID}
		if bounds[0] <= Day(2) && (bounds[1] == "" || bounds[1] >= Day(2)) {
			want = append(want, dated.ID)
		}
		if !slices.Equal(got, want) {
			t.Fatalf("bouts in %v: %v, want %v (the day-less bout in every range)", bounds, got, want)
		}
	}
	// An error from fn stops the walk.
	stop := errors.New("stop")
	calls := 0
	if err := db.Range(a, "checkin", "", "", func(devsync.Record) error { calls++; return stop }); err != stop || calls != 1 {
		t.Fatalf("fn error: err %v after %d calls", err, calls)
	}
}

func testKind(t *testing.T, db *storage.DB) {
	g := NewGen(19, "dev-a")
	var recs []devsync.Record
	athletes := []string{g.ID(), g.ID(), g.ID()}
	for _, a := range athletes {
		for _, kind := range []string{"bout", "checkin", "jump", "round"} {
			r := g.Checkin(a, Day(0))
			r.Kind = kind
			recs = append(recs, r)
		}
	}
	camp := devsync.Record{ID: g.ID(), Kind: "checkin", Day: Day(0), Device: "dev-a", Stamp: g.Stamp()}
	recs = append(recs, camp)
	del := g.Delete(recs[1]) // athlete 0's checkin
	push(t, db, "dev-a", Mutations(1, append(recs, del)...)...)
	var got []string
	if err := db.Kind("checkin", func(r devsync.Record) error {
		if r.Kind != "checkin" || r.Deleted {
			t.Fatalf("Kind returned %+v", r)
		}
		got = append(got, r.Athlete)
		return nil
	}); err != nil {
		t.Fatal(err)
	}
	want := slices.Clone(athletes[1:])
	slices.Sort(want)
	want = append(want, "")
	if !slices.Equal(got, want) {
		t.Fatalf("Kind(checkin) athletes %q, want %q", got, want)
	}
	n := 0
	db.Kind("weather", func(devsync.Record) error { n++; return nil })
	if n != 0 {
		t.Fatal("unknown kind returned records")
	}
}

func testAll(t *testing.T, db *storage.DB) {
	g := NewGen(20, "dev-a")
	recs := Records(20, 2, 3)
	push(t, db, "dev-a", Mutations(1, recs...)...)
	del, ed := g.Delete(recs[0]), g.Edit(recs[1])
	push(t, db, "dev-a", Mutations(10, del, ed)...)
	var live, every []string
	db.All(false, func(r devsync.Record) error { live = append(live, r.ID); return nil })
	db.All(true, func(r devsync.Record) error { every = append(every, r.ID); return nil })
	wantEvery := append(ids(recs[2:]), del.ID, ed.ID)
	if !slices.Equal(every, wantEvery) {
		t.Fatalf("All(true) %v, want %v", every, wantEvery)
	}
	wantLive := append(ids(recs[2:]), ed.ID)
	if !slices.Equal(live, wantLive) {
		t.Fatalf("All(false) %v, want %v", live, wantLive)
	}
}

func testHistory(t *testing.T, db *storage.DB) {
	g := NewGen(21, "dev-a")
	v := []devsync.Record{g.Checkin(g.ID(), Day(0))}
	v = append(v, g.Edit(v[0]))
	v = append(v, g.Edit(v[1]))
	v = append(v, g.Delete(v[2]))
	v = append(v, g.Restore(v[3]))
	for i, r := range v {
		push(t, db, "dev-a", Mutations(uint64(i+1), r)...)
	}
	push(t, db, "dev-a", Mutations(10, v[1])...) // a stale re-delivery is not a version
	h := history(t, db, v[0].ID)
	if len(h) != len(v) {
		t.Fatalf("history has %d versions, want %d", len(h), len(v))
	}
	for i := range v {
		sameRecord(t, fmt.Sprintf("version %d", i), h[i], v[i])
	}
	if _, err := db.History(g.ID()); !errors.Is(err, storage.ErrNotFound) {
		t.Fatalf("history of an unknown id: %v", err)
	}
	if _, err := db.Get(g.ID()); !errors.Is(err, storage.ErrNotFound) {
		t.Fatalf("get of an unknown id: %v", err)
	}
}

func testDevice(t *testing.T, db *storage.DB) {
	if _, err := db.Device("dev-new"); !errors.Is(err, storage.ErrNotFound) {
		t.Fatalf("unknown device: %v", err)
	}
	before := time.Now().Add(-time.Second)
	push(t, db, "dev-a", Mutations(5, Records(22, 1, 2)...)...)
	push(t, db, "dev-a") // an empty push is a ping
	st, err := db.Device("dev-a")
	if err != nil || st.LastN != 6 || st.Pushes != 2 || st.LastPush.Before(before) {
		t.Fatalf("device state %+v err %v, want lastN 6, 2 pushes, a recent push time", st, err)
	}
	res := push(t, db, "dev-a")
	if res.AckedThrough != 6 {
		t.Fatalf("empty push acknowledges through %d, want 6", res.AckedThrough)
	}
}

func testLocked(t *testing.T, db *storage.DB) {
	start := time.Now()
	second, err := storage.Open(db.Bolt().Path(), storage.Options{Timeout: 50 * time.Millisecond})
	if err == nil {
		second.Close()
		t.Fatal("a second open of a store in use succeeded")
	}
	if !errors.Is(err, storage.ErrLocked) || err.Error() != "the data folder is in use by another cornerbook" {
		t.Fatalf("second open: %q, want ErrLocked with its plain message", err)
	}
	if d := time.Since(start); d > 5*time.Second {
		t.Fatalf("second open took %v: it must give up after its timeout", d)
	}
}

func testRotateEpoch(t *testing.T, db *storage.DB) {
	e1, err := db.Epoch()
	if err != nil {
		t.Fatal(err)
	}
	if b, err := hex.DecodeString(e1); err != nil || len(b) != 16 {
		t.Fatalf("epoch %q is not 128 bits of hex", e1)
	}
	e2, err := db.RotateEpoch()
	if err != nil || e2 == e1 {
		t.Fatalf("rotate: %q → %q (err %v)", e1, e2, err)
	}
	if now, _ := db.Epoch(); now != e2 {
		t.Fatalf("epoch after rotate %q, want %q", now, e2)
	}
}

func testWriteTo(t *testing.T, db *storage.DB) {
	g := NewGen(23, "dev-a")
	recs := Records(23, 3, 5)
	push(t, db, "dev-a", Mutations(1, recs...)...)
	push(t, db, "dev-a", Mutations(100, g.Delete(recs[2]), g.Edit(recs[3]))...)
	path := filepath.Join(t.TempDir(), "backup.db")
	f, err := os.Create(path)
	if err != nil {
		t.Fatal(err)
	}
	n, err := db.WriteTo(f)
	if err != nil || n == 0 {
		t.Fatalf("write copy: %d bytes, %v", n, err)
	}
	if err := f.Close(); err != nil {
		t.Fatal(err)
	}
	cp, err := storage.Open(path, storage.Options{Timeout: time.Second})
	if err != nil {
		t.Fatal(err)
	}
	defer cp.Close()
	if err := cp.Check(); err != nil {
		t.Fatalf("check of the copy: %v", err)
	}
	dump := func(d *storage.DB) []devsync.Record {
		var out []devsync.Record
		if err := d.All(true, func(r devsync.Record) error { out = append(out, r); return nil }); err != nil {
			t.Fatal(err)
		}
		return out
	}
	if a, b := dump(db), dump(cp); !reflect.DeepEqual(a, b) || len(a) != 15 {
		t.Fatalf("copy holds %d records, original %d, or they differ", len(b), len(a))
	}
	e1, _ := db.Epoch()
	e2, _ := cp.Epoch()
	s1, _ := db.MaxSeq()
	s2, _ := cp.MaxSeq()
	st, _ := cp.Device("dev-a")
	if e1 != e2 || s1 != s2 || st.LastN != 101 {
		t.Fatalf("copy: epoch %s/%s, max seq %d/%d, device lastN %d", e1, e2, s1, s2, st.LastN)
	}
}
