package storage_test

import (
	"testing"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
	devsync "cornerbook/sync"
)

// Related sees the athlete's live records, those written earlier in the
// same push included, and a refusal stores nothing of that record while
// the rest of the batch is kept.
func TestRelatedChecksAgainstStoredAndSamePush(t *testing.T) {
	// The rule under test: at most two check-ins per athlete (a stand-in
	// for a rule between records).
	related := func(rec *devsync.Record, v storage.View) error {
		n := 0
		err := v.Records(rec.Athlete, rec.Kind, func(r devsync.Record) error {
			if r.ID != rec.ID {
				n++
			}
			return nil
		})
		if err != nil {
			return err
		}
		if n >= 2 {
			return devsync.Invalid("day", "a third check-in for this athlete")
		}
		return nil
	}
	db := storagetest.MustOpen(t, storage.Options{Related: related})
	g := storagetest.NewGen(1, "dev-a")
	a := g.Checkin(g.ID(), storagetest.Day(0))
	b := g.Checkin(a.Athlete, storagetest.Day(1))
	c := g.Checkin(a.Athlete, storagetest.Day(2))
	other := g.Checkin(g.ID(), storagetest.Day(2))
	res, err := db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(1, a, b, c, other)}, nil)
	if err != nil {
		t.Fatal(err)
	}
	if res.Applied != 3 || len(res.Rejected) != 1 || res.Rejected[0].ID != c.ID || res.Rejected[0].Field != "day" ||
		res.Rejected[0].Code != devsync.CodeValidation {
		t.Fatalf("push: %+v", res)
	}
	if _, err := db.Get(c.ID); err == nil {
		t.Fatal("the refused record was stored")
	}
	// A correction of a stored record is checked without its own old
	// version, and a tombstone is never checked.
	b2 := b
	b2.Stamp.L++
	b2.Body = []byte(`{"mass_kg":71}`)
	del := g.Delete(a)
	res, err = db.Push(devsync.PushRequest{Device: "dev-a", Mutations: storagetest.Mutations(10, b2, del)}, nil)
	if err != nil || res.Applied != 2 || len(res.Rejected) != 0 {
		t.Fatalf("correction and delete: %+v %v", res, err)
	}
}
