package storage

import (
	"bytes"
	"encoding/json"
	"runtime"
	"sync"

	devsync "cornerbook/sync"
)

// prepared is what Options.Prepare made of one mutation's record before
// the write transaction opened.
type prepared struct {
	rec  devsync.Record // the record as Prepare left it
	enc  []byte         // rec as stored (encodeStored), when Prepare accepted it
	err  error          // Prepare's error
	done bool           // Prepare ran (only for records that are not tombstones)
}

// prepareChunk is how many records one worker prepares at least: below it
// a goroutine costs more than it saves.
const prepareChunk = 16

// prepareAhead runs Options.Prepare on a copy of every non-deleted record
// of a push and encodes what it accepts, spread over the machine's cores,
// before the push's write transaction opens. bbolt allows one writer at a
// time, so validation done here overlaps with another push's commit and
// fsync instead of holding the writer. Prepare is a function of the record
// and the clock alone (Options.Prepare), so its answer here is the answer
// it would give inside the transaction; apply uses it only when the record
// reaching step 5 is the one prepared here, and otherwise prepares again.
// Records the transaction then skips (duplicates, bad shapes) were
// prepared for nothing; that costs time, never a different outcome.
func (db *DB) prepareAhead(ms []devsync.Mutation) []prepared {
	if db.prepare == nil || len(ms) == 0 {
		return nil
	}
	out := make([]prepared, len(ms))
	run := func(lo, hi int) {
		for i := lo; i < hi; i++ {
			if ms[i].Record.Deleted {
				continue
			}
			r := ms[i].Record
			r.Body = append(json.RawMessage(nil), r.Body...)
			p := prepared{err: db.prepare(&r), done: true}
			if p.err == nil {
				// An encoding error is left for the transaction to meet
				// again, where it aborts the push as it always has.
				if v, err := encodeStored(&r); err == nil {
					p.enc = v
				}
			}
			p.rec = r
			out[i] = p
		}
	}
	workers := min(runtime.GOMAXPROCS(0), (len(ms)+prepareChunk-1)/prepareChunk)
	if workers <= 1 {
		run(0, len(ms))
		return out
	}
	per := (len(ms) + workers - 1) / workers
	var wg sync.WaitGroup
	var mu sync.Mutex
	var crash any // a panic in a worker is raised again on the caller's goroutine
	for lo := per; lo < len(ms); lo += per {
		wg.Go(func() {
			defer func() {
				if v := recover(); v != nil {
					mu.Lock()
					crash = v
					mu.Unlock()
				}
			}()
			run(lo, min(lo+per, len(ms)))
		})
	}
	run(0, per)
	wg.Wait()
	if crash != nil {
		panic(crash)
	}
	return out
}

// sameRecord reports whether a and b are the same version, field by field.
func sameRecord(a, b *devsync.Record) bool {
	return a.ID == b.ID && a.Kind == b.Kind && a.Athlete == b.Athlete && a.Day == b.Day &&
		a.At == b.At && a.Device == b.Device && a.Stamp == b.Stamp && a.Gen == b.Gen &&
		a.Deleted == b.Deleted && bytes.Equal(a.Body, b.Body)
}
