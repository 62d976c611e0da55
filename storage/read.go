package storage

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"fmt"

	bolt "go.etcd.io/bbolt"

	devsync "cornerbook/sync"
)

// The read methods that take a callback run it inside one bbolt read
// transaction, so the records come from one consistent snapshot. The
// callback must not write to the store (Push, RotateEpoch, Bolt().Update):
// a write waiting on a remap behind the open read can deadlock. An error
// from the callback stops the walk and is returned.

// Get returns the current winner of one record, tombstones included, or
// ErrNotFound.
func (db *DB) Get(id string) (devsync.Record, error) {
	var r devsync.Record
	err := db.bolt.View(func(tx *bolt.Tx) error {
		v := tx.Bucket(BucketRecords).Get([]byte(id))
		if v == nil {
			return ErrNotFound
		}
		var err error
		r, err = decodeStored(v)
		return err
	})
	return r, err
}

// History returns every winning version of one record ever stored, oldest
// first; the last is the current winner. ErrNotFound for an unknown id.
func (db *DB) History(id string) ([]devsync.Record, error) {
	var out []devsync.Record
	err := db.bolt.View(func(tx *bolt.Tx) error {
		cur := tx.Bucket(BucketRecords).Get([]byte(id))
		if cur == nil {
			return ErrNotFound
		}
		prefix := append([]byte(id), '|')
		c := tx.Bucket(BucketVersions).Cursor()
		for k, v := c.Seek(prefix); k != nil && bytes.HasPrefix(k, prefix); k, v = c.Next() {
			r, err := decode(v)
			if err != nil {
				return fmt.Errorf("version %x: %w", k, err)
			}
			out = append(out, r)
		}
		r, err := decodeStored(cur)
		if err != nil {
			return err
		}
		out = append(out, r)
		return nil
	})
	return out, err
}

// Overtaken returns the versions of a record that lost to a stored
// winner (the conflicts audit), in the order they arrived.
func (db *DB) Overtaken(id string) ([]devsync.Record, error) {
	var out []devsync.Record
	err := db.bolt.View(func(tx *bolt.Tx) error {
		prefix := append([]byte(id), '|')
		c := tx.Bucket(BucketConflicts).Cursor()
		for k, v := c.Seek(prefix); k != nil && bytes.HasPrefix(k, prefix); k, v = c.Next() {
			r, err := decode(v)
			if err != nil {
				return fmt.Errorf("overtaken version %x: %w", k, err)
			}
			out = append(out, r)
		}
		return nil
	})
	return out, err
}

// Pull returns the records whose latest change sequence is above since,
// in sequence order: at most limit of them (≤ 0 means
// devsync.DefaultPullLimit; capped at devsync.MaxPullLimit). visible
// filters them (nil shows all); next advances over hidden entries too, so
// a filtered device never re-reads them. A page may hold fewer than limit
// records while more is true (a filter hid many entries); the caller
// pulls again from next until more is false. maxSeq is the latest
// sequence at the time of the page. Each page is its own read
// transaction; a record edited between pages moves to a later sequence
// and appears once more in a later page.
func (db *DB) Pull(since uint64, limit int, visible func(*devsync.Record) bool) (recs []devsync.Record, next uint64, more bool, maxSeq uint64, err error) {
	return db.PullBytes(since, limit, 0, visible)
}

// PullBytes is Pull with a page also ended once the records it holds
// reach maxBytes of stored JSON (≤ 0: no byte bound). A page holds at
// least one record whatever its size.
func (db *DB) PullBytes(since uint64, limit, maxBytes int, visible func(*devsync.Record) bool) (recs []devsync.Record, next uint64, more bool, maxSeq uint64, err error) {
	recs, next, more, maxSeq, _, err = db.PullSeen(since, limit, maxBytes, visible)
	return recs, next, more, maxSeq, err
}

// PullSeen is PullBytes that also returns lastSeen, the change sequence
// of the last record of the page that visible passed (0 if none).
func (db *DB) PullSeen(since uint64, limit, maxBytes int, visible func(*devsync.Record) bool) (recs []devsync.Record, next uint64, more bool, maxSeq, lastSeen uint64, err error) {
	p, err := db.PullFor(since, limit, maxBytes, PullFilter{Visible: visible})
	return p.Records, p.Next, p.More, p.MaxSeq, p.LastSeen, err
}

// PullFilter says what one device receives.
type PullFilter struct {
	// Visible passes the records the device may read (nil: all).
	Visible func(*devsync.Record) bool
	// MaybeSeen, when set, picks among the records Visible hides those
	// the device may have read before (for an athlete's device: its own
	// athlete's). For each, the record's earlier winning versions are
	// read: if Visible passes any of them, the device once received the
	// record and the page withdraws it (a note made staff-only after it
	// was shared with the athlete).
	MaybeSeen func(*devsync.Record) bool
}

// PullPage is one page of a pull.
type PullPage struct {
	Records []devsync.Record
	// Withdrawn are the ids of records the device may no longer read but
	// once could: it drops its copy.
	Withdrawn []string
	Next      uint64
	More      bool
	MaxSeq    uint64
	// LastSeen is the change sequence of the last record of the page sent
	// or withdrawn (0 if none).
	LastSeen uint64
}

// PullFor is PullBytes through a device's filter, with withdrawals.
func (db *DB) PullFor(since uint64, limit, maxBytes int, f PullFilter) (PullPage, error) {
	if limit <= 0 {
		limit = devsync.DefaultPullLimit
	}
	limit = min(limit, devsync.MaxPullLimit)
	p := PullPage{Next: since}
	err := db.bolt.View(func(tx *bolt.Tx) error {
		changes := tx.Bucket(BucketChanges)
		records := tx.Bucket(BucketRecords)
		p.MaxSeq = changes.Sequence()
		if since == ^uint64(0) {
			return nil
		}
		c := changes.Cursor()
		scanned, size := 0, 0
		for k, id := c.Seek(u64(since + 1)); k != nil; k, id = c.Next() {
			if len(p.Records) == limit || scanned == scanBudget || (maxBytes > 0 && size >= maxBytes) {
				p.More = true
				return nil
			}
			scanned++
			v := records.Get(id)
			if v == nil {
				return fmt.Errorf("change %d names record %q, which is missing", binary.BigEndian.Uint64(k), id)
			}
			r, err := decodeStored(v)
			if err != nil {
				return fmt.Errorf("record %q: %w", id, err)
			}
			p.Next = binary.BigEndian.Uint64(k)
			if f.Visible == nil || f.Visible(&r) {
				p.Records = append(p.Records, r)
				size += len(v)
				p.LastSeen = p.Next
				continue
			}
			if f.MaybeSeen == nil || !f.MaybeSeen(&r) {
				continue
			}
			seen, err := earlierVisible(tx, r.ID, f.Visible)
			if err != nil {
				return err
			}
			if seen {
				p.Withdrawn = append(p.Withdrawn, r.ID)
				p.LastSeen = p.Next
			}
		}
		return nil
	})
	if err != nil {
		return PullPage{Next: since}, err
	}
	return p, nil
}

// earlierVisible reports whether visible passes any earlier winning
// version of a record.
func earlierVisible(tx *bolt.Tx, id string, visible func(*devsync.Record) bool) (bool, error) {
	prefix := append([]byte(id), '|')
	c := tx.Bucket(BucketVersions).Cursor()
	for k, v := c.Seek(prefix); k != nil && bytes.HasPrefix(k, prefix); k, v = c.Next() {
		r, err := decode(v)
		if err != nil {
			return false, fmt.Errorf("version %x: %w", k, err)
		}
		if visible(&r) {
			return true, nil
		}
	}
	return false, nil
}

// Range calls fn for each live record of one athlete and kind whose day
// lies in [fromDay, toDay], ordered by day then id, through Cursor.Seek on
// the athlete|kind|day|id index. An empty fromDay starts at the first
// day, an empty toDay runs to the last. Records without a day (the
// undated kinds: athlete, settings, bout) belong to every range and come
// first, so Range(athlete, "bout", "", "") and a range with any bounds
// both find a fighter's bouts. Camp-wide kinds use athlete "".
func (db *DB) Range(athlete, kind, fromDay, toDay string, fn func(devsync.Record) error) error {
	return db.bolt.View(func(tx *bolt.Tx) error { return rangeTx(tx, athlete, kind, fromDay, toDay, fn) })
}

// txView is View over one transaction.
type txView struct{ tx *bolt.Tx }

func (v txView) Records(athlete, kind string, fn func(devsync.Record) error) error {
	return rangeTx(v.tx, athlete, kind, "", "", fn)
}

// rangeTx is Range inside tx.
func rangeTx(tx *bolt.Tx, athlete, kind, fromDay, toDay string, fn func(devsync.Record) error) error {
	records := tx.Bucket(BucketRecords)
	prefix := []byte(athlete + "|" + kind + "|")
	c := tx.Bucket(BucketIndex).Cursor()
	// Day-less keys are prefix + "|" + id; '|' sorts after every
	// digit, so they are the last of the prefix: read them first.
	undated := append(bytes.Clone(prefix), '|')
	for k, _ := c.Seek(undated); k != nil && bytes.HasPrefix(k, undated); k, _ = c.Next() {
		if err := emit(records, k[len(undated):], fn); err != nil {
			return err
		}
	}
	for k, _ := c.Seek(append(bytes.Clone(prefix), fromDay...)); k != nil && bytes.HasPrefix(k, prefix); k, _ = c.Next() {
		rest := k[len(prefix):]
		sep := bytes.IndexByte(rest, '|')
		if sep < 0 {
			return fmt.Errorf("index key %q is malformed", k)
		}
		if sep == 0 || toDay != "" && string(rest[:sep]) > toDay {
			return nil // past the last day (sep 0: the day-less keys, already read)
		}
		if err := emit(records, rest[sep+1:], fn); err != nil {
			return err
		}
	}
	return nil
}

// Kind calls fn for every live record of one kind, all athletes, ordered
// by athlete, day, id (day-less records after an athlete's dated ones;
// camp-wide records, athlete "", after every athlete's). It
// skips from athlete to athlete with Cursor.Seek, so its cost is the
// records it returns plus a seek or two per athlete.
func (db *DB) Kind(kind string, fn func(devsync.Record) error) error {
	return db.bolt.View(func(tx *bolt.Tx) error {
		records := tx.Bucket(BucketRecords)
		c := tx.Bucket(BucketIndex).Cursor()
		k, _ := c.First()
		for k != nil {
			a, kd, _, id, ok := parseIndexKey(k)
			if !ok {
				return fmt.Errorf("index key %q is malformed", k)
			}
			switch {
			case kd < kind:
				k, _ = c.Seek([]byte(a + "|" + kind + "|"))
			case kd > kind:
				// '}' sorts right after '|': the first key of the next athlete.
				k, _ = c.Seek([]byte(a + "}"))
			default:
				if err := emit(records, []byte(id), fn); err != nil {
					return err
				}
				k, _ = c.Next()
			}
		}
		return nil
	})
}

func emit(records *bolt.Bucket, id []byte, fn func(devsync.Record) error) error {
	v := records.Get(id)
	if v == nil {
		return fmt.Errorf("index names record %q, which is missing", id)
	}
	r, err := decodeStored(v)
	if err != nil {
		return fmt.Errorf("record %q: %w", id, err)
	}
	return fn(r)
}

// All calls fn for every current record, with tombstones if
// includeDeleted: first the athlete records, then every other record,
// each group in change-sequence order. Athletes come first because other
// records name them: an export in this order replays into a store with
// Options.CampIntegrity whatever order the records were edited in.
func (db *DB) All(includeDeleted bool, fn func(devsync.Record) error) error {
	return db.bolt.View(func(tx *bolt.Tx) error {
		records := tx.Bucket(BucketRecords)
		for pass := 0; pass < 2; pass++ {
			c := tx.Bucket(BucketChanges).Cursor()
			for k, id := c.First(); k != nil; k, id = c.Next() {
				v := records.Get(id)
				if v == nil {
					return fmt.Errorf("change %d names record %q, which is missing", binary.BigEndian.Uint64(k), id)
				}
				_, js, err := splitStored(v)
				if err != nil {
					return fmt.Errorf("record %q: %w", id, err)
				}
				var head struct {
					Kind string `json:"kind"`
				}
				if err := json.Unmarshal(js, &head); err != nil {
					return fmt.Errorf("record %q: %w", id, err)
				}
				if (head.Kind == athleteKind) != (pass == 0) {
					continue
				}
				r, err := decode(js)
				if err != nil {
					return fmt.Errorf("record %q: %w", id, err)
				}
				if r.Deleted && !includeDeleted {
					continue
				}
				if err := fn(r); err != nil {
					return err
				}
			}
		}
		return nil
	})
}

// Conflicts returns the versions of one record that arrived after a
// greater version was already stored and so lost (the audit kept by
// Push), in arrival order. Exact re-deliveries of the stored version are
// not conflicts. Empty for a record that never lost a version.
func (db *DB) Conflicts(id string) ([]devsync.Record, error) {
	var out []devsync.Record
	err := db.bolt.View(func(tx *bolt.Tx) error {
		prefix := append([]byte(id), '|')
		c := tx.Bucket(BucketConflicts).Cursor()
		for k, v := c.Seek(prefix); k != nil && bytes.HasPrefix(k, prefix); k, v = c.Next() {
			r, err := decode(v)
			if err != nil {
				return fmt.Errorf("conflict %x: %w", k, err)
			}
			out = append(out, r)
		}
		return nil
	})
	return out, err
}
