package storage

import (
	"bytes"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"

	bolt "go.etcd.io/bbolt"
)

// maxCheckProblems bounds the report of a badly damaged file.
const maxCheckProblems = 20

// Check verifies the file: bbolt's own page and freelist checks
// (Tx.Check) and the store's invariants:
//
//   - the epoch is 32 hex digits;
//   - every record carries its change sequence, every change entry names
//     a stored record whose current sequence is that entry, and every
//     record has exactly one change entry;
//   - no change entry lies above the bucket's sequence;
//   - every earlier version belongs to a stored record, under a sequence
//     below the current winner's;
//   - every index entry names a live record with that athlete, kind and
//     day, and every live record has its index entry (so exactly one);
//   - every device state decodes.
//
// It runs in a read-write transaction that is rolled back, so no writer
// runs during the check (bbolt's advice for Tx.Check) and nothing changes.
func (db *DB) Check() error {
	tx, err := db.bolt.Begin(true)
	if err != nil {
		return err
	}
	defer tx.Rollback()

	var problems []error
	add := func(format string, args ...any) bool {
		problems = append(problems, fmt.Errorf(format, args...))
		return len(problems) < maxCheckProblems
	}
	full := false
	for err := range tx.Check() { // drained whole: bbolt checks in its own goroutine
		if !full && !add("bbolt: %w", err) {
			full = true
		}
	}
	if len(problems) == 0 {
		checkInvariants(tx, add)
	}
	return errors.Join(problems...)
}

// storedLayout reads a records value in the file's layout: in layout 2
// the sequence leads the value; in layout 1 (a backup from before) it
// sits in the seqs bucket.
type storedLayout struct{ seqsV1 *bolt.Bucket }

// split returns the record's 8-byte sequence (nil if it has none) and its
// JSON.
func (l storedLayout) split(id, v []byte) (seq, js []byte) {
	if l.seqsV1 != nil {
		s := l.seqsV1.Get(id)
		if len(s) != seqLen {
			s = nil
		}
		return s, v
	}
	if len(v) <= seqLen {
		return nil, v
	}
	return v[:seqLen], v[seqLen:]
}

func checkInvariants(tx *bolt.Tx, add func(string, ...any) bool) {
	for _, name := range allBuckets {
		if tx.Bucket(name) == nil {
			add("bucket %s is missing", name)
			return
		}
	}
	var lay storedLayout
	if string(tx.Bucket(BucketMeta).Get(keySchema)) == schemaV1 {
		if lay.seqsV1 = tx.Bucket(bucketSeqsV1); lay.seqsV1 == nil {
			add("bucket %s is missing", bucketSeqsV1)
			return
		}
	}
	epoch := tx.Bucket(BucketMeta).Get(keyEpoch)
	if _, err := hex.DecodeString(string(epoch)); err != nil || len(epoch) != 32 {
		if !add("epoch %q is not 32 hex digits", epoch) {
			return
		}
	}

	records := tx.Bucket(BucketRecords)
	versions := tx.Bucket(BucketVersions)
	index := tx.Bucket(BucketIndex)
	changes := tx.Bucket(BucketChanges)

	// Change entries ↔ records.
	nChanges := 0
	var last uint64
	c := changes.Cursor()
	for k, id := c.First(); k != nil; k, id = c.Next() {
		nChanges++
		if len(k) != 8 {
			if !add("change key %x is not 8 bytes", k) {
				return
			}
			continue
		}
		last = binary.BigEndian.Uint64(k)
		if v := records.Get(id); v == nil {
			if !add("change %d names record %q, which is missing", last, id) {
				return
			}
		} else if s, _ := lay.split(id, v); !bytes.Equal(s, k) {
			if !add("change %d names record %q, whose current sequence is %x", last, id, s) {
				return
			}
		}
	}
	if last > changes.Sequence() {
		if !add("change %d lies above the sequence %d", last, changes.Sequence()) {
			return
		}
	}

	// Records: sequence, newest version, index entry.
	nRecords, nLive := 0, 0
	rc := records.Cursor()
	for k, v := rc.First(); k != nil; k, v = rc.Next() {
		nRecords++
		s, js := lay.split(k, v)
		r, err := decode(js)
		if err != nil {
			if !add("record %q is unreadable: %v", k, err) {
				return
			}
			continue
		}
		if r.ID != string(k) {
			if !add("record under key %q carries id %q", k, r.ID) {
				return
			}
		}
		if s == nil {
			if !add("record %q has no sequence", k) {
				return
			}
			continue
		}
		prefix := append(bytes.Clone(k), '|')
		if vk, _ := lastWithPrefix(versions.Cursor(), prefix); vk != nil && bytes.Compare(vk[len(prefix):], s) >= 0 {
			if !add("record %q: an earlier version (seq %d) is not below the winner's sequence %d", k, binary.BigEndian.Uint64(vk[len(prefix):]), binary.BigEndian.Uint64(s)) {
				return
			}
		}
		if !r.Deleted {
			nLive++
			if index.Get(indexKey(&r)) == nil {
				if !add("live record %q has no index entry %q", k, indexKey(&r)) {
					return
				}
			}
		}
	}
	// Every change entry names a record whose sequence it is (above), so
	// no two entries name one record; as many entries as records then
	// means every record has its entry. Only when the counts differ is
	// each record looked up, to say which.
	if nChanges != nRecords {
		if !add("%d change entries for %d records", nChanges, nRecords) {
			return
		}
		for k, v := rc.First(); k != nil; k, v = rc.Next() {
			if s, _ := lay.split(k, v); s != nil {
				if id := changes.Get(s); !bytes.Equal(id, k) {
					if !add("record %q: change %d names %q", k, binary.BigEndian.Uint64(s), id) {
						return
					}
				}
			}
		}
	}

	// Versions belong to stored records.
	vc := versions.Cursor()
	for k, v := vc.First(); k != nil; k, v = vc.Next() {
		if len(k) < 10 || k[len(k)-9] != '|' {
			if !add("version key %x is malformed", k) {
				return
			}
			continue
		}
		id := k[:len(k)-9]
		if records.Get(id) == nil {
			if !add("version %x belongs to no stored record", k) {
				return
			}
		}
		if r, err := decode(v); err != nil || r.ID != string(id) {
			if !add("version %x is unreadable or carries another id", k) {
				return
			}
		}
	}

	// Index entries → live records with matching keys. Every live record's
	// own key is in the index (above) and no two records share a key (it
	// ends in the id), so as many entries as live records means the index
	// holds exactly those keys. Only when the counts differ is each entry
	// read against its record, to say which is wrong.
	nIndex := 0
	ic := index.Cursor()
	for k, _ := ic.First(); k != nil; k, _ = ic.Next() {
		nIndex++
	}
	if nIndex != nLive {
		if !add("%d index entries for %d live records", nIndex, nLive) || !indexDetail(index, records, lay, add) {
			return
		}
	}

	// Device states.
	dc := tx.Bucket(BucketDevices).Cursor()
	for k, v := dc.First(); k != nil; k, v = dc.Next() {
		var st DeviceState
		if err := json.Unmarshal(v, &st); err != nil {
			if !add("device %q: state is unreadable: %v", k, err) {
				return
			}
		}
	}
}

// indexDetail reads every index entry against its record and reports the
// wrong ones; false when the report is full.
func indexDetail(index, records *bolt.Bucket, lay storedLayout, add func(string, ...any) bool) bool {
	ic := index.Cursor()
	for k, _ := ic.First(); k != nil; k, _ = ic.Next() {
		a, kind, day, id, ok := parseIndexKey(k)
		if !ok {
			if !add("index key %q is malformed", k) {
				return false
			}
			continue
		}
		v := records.Get([]byte(id))
		if v == nil {
			if !add("index entry %q names a missing record", k) {
				return false
			}
			continue
		}
		_, js := lay.split([]byte(id), v)
		r, err := decode(js)
		if err != nil {
			continue // reported with the records
		}
		if r.Deleted || r.Athlete != a || r.Kind != kind || r.Day != day {
			if !add("index entry %q does not match record %q (athlete %q, kind %q, day %q, deleted %v)", k, id, r.Athlete, r.Kind, r.Day, r.Deleted) {
				return false
			}
		}
	}
	return true
}

// lastWithPrefix returns the last version key/value of prefix (id "|").
func lastWithPrefix(c *bolt.Cursor, prefix []byte) ([]byte, []byte) {
	// A version key is prefix + 8 bytes, so prefix + 9×0xff is above all.
	var v []byte
	k, _ := c.Seek(append(bytes.Clone(prefix), bytes.Repeat([]byte{0xff}, 9)...))
	if k == nil {
		k, v = c.Last()
	} else {
		k, v = c.Prev()
	}
	if k == nil || !bytes.HasPrefix(k, prefix) {
		return nil, nil
	}
	return k, v
}
