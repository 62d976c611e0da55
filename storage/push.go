package storage

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"strings"

	bolt "go.etcd.io/bbolt"

	devsync "cornerbook/sync"
)

// PushResult is what one committed push did.
type PushResult struct {
	AckedThrough uint64              // the device's counter after the push: every n ≤ this is settled
	Rejected     []devsync.Rejection // mutations refused, with field and reason
	Applied      int                 // mutations whose version won and was written
	Superseded   int                 // valid, but an equal or greater version was already stored
	// Overtaken are superseded versions whose winner another device wrote.
	Overtaken  []devsync.Overtaken
	Duplicates int    // n at or below the device's counter: skipped
	MaxSeq     uint64 // latest change sequence after the push
	// Changed holds the winning versions written, one per record id (the
	// last one when a batch changes a record twice), in the order the
	// records were first written: for flag recomputation and pokes.
	Changed []devsync.Record
}

// Push applies one device's batch in a single bbolt transaction (see
// ENGINEERING.md §3.6). Per mutation, in order:
//
//  1. n ≤ the device's counter → duplicate, skipped;
//  2. the mutation's own checks and the record's shape (id, kind,
//     athlete, day);
//  3. the kind may not change under an existing id; with
//     Options.CampIntegrity, a record may not move to another athlete
//     and a live per-athlete record must name an athlete record (stored
//     before, or earlier in the same push; deleted athletes count);
//  4. allow(stored, incoming) (nil = allow all), with the current winner
//     (nil for a new record) so a rights check sees whose record it
//     would overwrite: an error rejects the mutation with code FORBIDDEN
//     (with the field of a *devsync.RightsError or of a wrapped
//     *devsync.FieldError), or VALIDATION when the error is itself a
//     *devsync.FieldError;
//  5. Options.Prepare for non-deleted records (validation, derived fields;
//     computed ahead, outside the transaction, and used here when allow
//     left the record unchanged);
//  6. Options.Related for non-deleted records (rules between records);
//  7. last-writer-wins against the stored winner (devsync.Compare, sticky
//     deletes): a winner is written with its history, index and a new
//     change sequence; a loser is kept in the conflicts audit.
//
// The device's counter then moves to n, also for a rejected mutation, so
// a poisoned mutation never blocks the device's queue.
//
// A request-level problem (no device id, n not strictly increasing) is
// returned as a *devsync.FieldError and nothing is applied. Any other
// error means nothing was committed.
func (db *DB) Push(req devsync.PushRequest, allow Allow) (PushResult, error) {
	if err := checkRequest(&req); err != nil {
		return PushResult{}, err
	}
	pre := db.prepareAhead(req.Mutations)
	var res PushResult
	err := db.bolt.Update(func(tx *bolt.Tx) error {
		res = PushResult{Rejected: []devsync.Rejection{}, // [] rather than null in JSON
			Changed: make([]devsync.Record, 0, len(req.Mutations))}
		p := pusher{tx: tx, db: db, changed: make(map[string]int, len(req.Mutations))}
		p.open()
		dev, err := p.device(req.Device)
		if err != nil {
			return err
		}
		for i := range req.Mutations {
			m := &req.Mutations[i]
			if m.N <= dev.LastN {
				res.Duplicates++
				continue
			}
			var pm *prepared
			if pre != nil {
				pm = &pre[i]
			}
			outcome, rej, err := p.apply(m, pm, allow, &res)
			if err != nil {
				return fmt.Errorf("mutation %d (n %d, id %q): %w", i, m.N, m.Record.ID, err)
			}
			switch outcome {
			case applied:
				res.Applied++
			case superseded:
				res.Superseded++
			case rejected:
				res.Rejected = append(res.Rejected, rej)
			}
			dev.LastN = m.N
		}
		dev.LastPush = db.now().UTC()
		dev.Pushes++
		if err := p.putDevice(req.Device, dev); err != nil {
			return err
		}
		res.AckedThrough = dev.LastN
		res.MaxSeq = p.changes.Sequence()
		return nil
	})
	if err != nil {
		return PushResult{}, err
	}
	return res, nil
}

// Allow decides whether the pushing device may write incoming over stored
// (the current winner, tombstones included; nil for a new id). Both are
// copies: changes to stored are ignored, changes to incoming are kept.
// Allow runs inside the push's write transaction: it may read other state
// but must not write to this store.
type Allow func(stored, incoming *devsync.Record) error

// checkRequest refuses a request as a whole.
func checkRequest(req *devsync.PushRequest) error {
	if req.Device == "" {
		return devsync.Invalid("device", "is required: the id of the pushing device")
	}
	if len(req.Device) > 128 {
		return devsync.Invalid("device", "is longer than 128 characters")
	}
	for _, r := range req.Device {
		if r < 0x21 || r == 0x7f {
			return devsync.Invalid("device", "may not contain spaces or control characters")
		}
	}
	var prev uint64
	for i, m := range req.Mutations {
		if m.N == 0 {
			return devsync.Invalid(fmt.Sprintf("mutations[%d].n", i), "must be a counter of 1 or more")
		}
		if i > 0 && m.N <= prev {
			return devsync.Invalid(fmt.Sprintf("mutations[%d].n", i),
				"is %d after %d: mutation counters must be strictly increasing within a push", m.N, prev)
		}
		prev = m.N
		if err := req.Mutations[i].CheckCounters(fmt.Sprintf("mutations[%d]", i)); err != nil {
			return err
		}
	}
	return nil
}

type outcome int

const (
	applied outcome = iota
	superseded
	rejected
)

type pusher struct {
	tx                                               *bolt.Tx
	db                                               *DB
	records, versions, index, changes, devices, conf *bolt.Bucket
	changed                                          map[string]int  // id → index in res.Changed
	athletes                                         map[string]bool // athlete ids already checked in this push
}

func (p *pusher) open() {
	p.records = p.tx.Bucket(BucketRecords)
	p.versions = p.tx.Bucket(BucketVersions)
	p.index = p.tx.Bucket(BucketIndex)
	p.changes = p.tx.Bucket(BucketChanges)
	p.changes.FillPercent = changesFill
	p.records.FillPercent = appendFill
	p.index.FillPercent = appendFill
	p.devices = p.tx.Bucket(BucketDevices)
	p.conf = p.tx.Bucket(BucketConflicts)
}

func (p *pusher) device(id string) (DeviceState, error) {
	var st DeviceState
	if v := p.devices.Get([]byte(id)); v != nil {
		if err := json.Unmarshal(v, &st); err != nil {
			return st, fmt.Errorf("device %q: stored state is unreadable: %w", id, err)
		}
	}
	return st, nil
}

func (p *pusher) putDevice(id string, st DeviceState) error {
	v, err := json.Marshal(st)
	if err != nil {
		return err
	}
	return p.devices.Put([]byte(id), v)
}

// reject turns an error into a rejection with code, the field and reason
// of a (wrapped) *devsync.FieldError if there is one. A
// *devsync.RightsError is always FORBIDDEN, whichever hook returned it.
func reject(m *devsync.Mutation, code string, err error) devsync.Rejection {
	r := devsync.Rejection{N: m.N, ID: m.Record.ID, Code: code, Reason: err.Error()}
	var re *devsync.RightsError
	var fe *devsync.FieldError
	switch {
	case errors.As(err, &re):
		r.Code, r.Field, r.Reason = devsync.CodeForbidden, re.Field, re.Reason
	case errors.As(err, &fe):
		r.Field, r.Reason = fe.Field, fe.Reason
	}
	return r
}

// refuse turns an error from allow into a rejection: FORBIDDEN, unless
// the error is itself a *devsync.FieldError (a bad value: VALIDATION).
func refuse(m *devsync.Mutation, err error) devsync.Rejection {
	if _, ok := err.(*devsync.FieldError); ok {
		return reject(m, devsync.CodeValidation, err)
	}
	return reject(m, devsync.CodeForbidden, err)
}

// apply runs one mutation; pre is Prepare's answer for its record from
// before the transaction (nil: none). A non-nil error aborts the whole
// transaction.
func (p *pusher) apply(m *devsync.Mutation, pre *prepared, allow Allow, res *PushResult) (outcome, devsync.Rejection, error) {
	if err := m.Check(); err != nil {
		return rejected, reject(m, devsync.CodeValidation, err), nil
	}
	if err := CheckShape(&m.Record); err != nil {
		return rejected, reject(m, devsync.CodeValidation, err), nil
	}
	rec := m.Record // the caller's request is not modified
	var enc []byte  // rec encoded, when it was encoded ahead
	if rec.Body != nil {
		rec.Body = append(json.RawMessage(nil), rec.Body...)
	}

	var stored *devsync.Record
	if v := p.records.Get([]byte(rec.ID)); v != nil {
		s, err := decodeStored(v)
		if err != nil {
			return 0, devsync.Rejection{}, fmt.Errorf("stored record is unreadable: %w", err)
		}
		stored = &s
		if s.Kind != rec.Kind {
			return rejected, reject(m, devsync.CodeValidation,
				devsync.Invalid("kind", "this id already belongs to a %s record", s.Kind)), nil
		}
		// A record never moves to another athlete: a device filtered by
		// athlete would never learn that it left. Delete and log it again.
		if p.db.campIntegrity && s.Athlete != rec.Athlete && rec.Kind != athleteKind {
			return rejected, reject(m, devsync.CodeValidation,
				devsync.Invalid("athlete", "a record cannot move to another athlete; delete it and log it again for the right one")), nil
		}
	}
	if err := p.checkAthlete(&rec); err != nil {
		return rejected, reject(m, devsync.CodeValidation, err), nil
	}
	if allow != nil {
		var view *devsync.Record
		if stored != nil {
			c := *stored
			c.Body = append(json.RawMessage(nil), stored.Body...)
			view = &c
		}
		if err := allow(view, &rec); err != nil {
			return rejected, refuse(m, err), nil
		}
		if err := recheckShape(&m.Record, &rec); err != nil {
			return rejected, reject(m, devsync.CodeValidation, err), nil
		}
	}
	if !rec.Deleted && p.db.prepare != nil {
		var err error
		if pre != nil && pre.done && sameRecord(&rec, &m.Record) {
			rec, enc, err = pre.rec, pre.enc, pre.err // allow left the record as it was prepared
		} else {
			err = p.db.prepare(&rec)
		}
		if err != nil {
			return rejected, reject(m, devsync.CodeValidation, err), nil
		}
		// Prepare may fill fields; it may not move the record to a
		// malformed key.
		if err := recheckShape(&m.Record, &rec); err != nil {
			return rejected, reject(m, devsync.CodeValidation, err), nil
		}
	}
	if stored != nil && stored.Kind != rec.Kind {
		return rejected, reject(m, devsync.CodeValidation,
			devsync.Invalid("kind", "this id already belongs to a %s record", stored.Kind)), nil
	}
	if !rec.Deleted && p.db.related != nil {
		if err := p.db.related(&rec, txView{p.tx}); err != nil {
			return rejected, reject(m, devsync.CodeValidation, err), nil
		}
	}

	if !devsync.Wins(&rec, stored) {
		if devsync.Compare(&rec, stored) < 0 {
			if err := p.keepLoser(&rec, enc); err != nil {
				return 0, devsync.Rejection{}, err
			}
			if stored.Device != rec.Device {
				res.Overtaken = append(res.Overtaken, devsync.Overtaken{N: m.N, ID: rec.ID, Device: stored.Device,
					Stamp: stored.Stamp, At: stored.At, Deleted: stored.Deleted})
			}
		}
		return superseded, devsync.Rejection{}, nil
	}
	if err := p.write(&rec, stored, enc); err != nil {
		return 0, devsync.Rejection{}, err
	}
	if i, ok := p.changed[rec.ID]; ok {
		res.Changed[i] = rec
	} else {
		p.changed[rec.ID] = len(res.Changed)
		res.Changed = append(res.Changed, rec)
	}
	return applied, devsync.Rejection{}, nil
}

// encoded is rec as the records bucket holds it, with seqLen bytes free
// in front for its sequence: enc when it was encoded ahead,
// else encoded now.
func encoded(rec *devsync.Record, enc []byte) ([]byte, error) {
	if enc != nil {
		return enc, nil
	}
	v, err := encodeStored(rec)
	if err != nil {
		return nil, fmt.Errorf("encode record: %w", err)
	}
	return v, nil
}

// encodeStored encodes rec behind seqLen bytes left for its sequence.
func encodeStored(rec *devsync.Record) ([]byte, error) {
	return rec.AppendJSON(make([]byte, seqLen, seqLen+512))
}

// write stores rec as the new winner over stored (nil if new); enc is rec
// encoded ahead, or nil.
func (p *pusher) write(rec, stored *devsync.Record, enc []byte) error {
	v, err := encoded(rec, enc)
	if err != nil {
		return err
	}
	id := []byte(rec.ID)
	if stored != nil {
		oldSeq, js, err := splitStored(p.records.Get(id))
		if err != nil {
			return fmt.Errorf("stored record: %w", err)
		}
		// The replaced winner joins the history under the sequence it held.
		if err := p.versions.Put(versionKey(rec.ID, oldSeq), bytes.Clone(js)); err != nil {
			return err
		}
		if err := p.changes.Delete(u64(oldSeq)); err != nil {
			return err
		}
		if !stored.Deleted {
			if err := p.index.Delete(indexKey(stored)); err != nil {
				return err
			}
		}
	}
	seq, err := p.changes.NextSequence()
	if err != nil {
		return err
	}
	binary.BigEndian.PutUint64(v[:seqLen], seq)
	if err := p.changes.Put(u64(seq), id); err != nil {
		return err
	}
	if err := p.records.Put(id, v); err != nil {
		return err
	}
	if !rec.Deleted {
		if err := p.index.Put(indexKey(rec), nil); err != nil {
			return err
		}
	}
	return nil
}

// keepLoser files a version that lost to the stored winner in the audit
// bucket, keyed id|u64be counter.
func (p *pusher) keepLoser(rec *devsync.Record, enc []byte) error {
	v, err := encoded(rec, enc)
	if err != nil {
		return err
	}
	v = v[seqLen:]
	n, err := p.conf.NextSequence()
	if err != nil {
		return err
	}
	return p.conf.Put(versionKey(rec.ID, n), v)
}

// CheckShape checks the parts of a record that become storage keys: id,
// kind, athlete and day. Tombstones get only this check.
func CheckShape(r *devsync.Record) error {
	if err := CheckID(r.ID); err != nil {
		return devsync.Invalid("id", "%s", err)
	}
	if err := checkKind(r.Kind); err != nil {
		return err
	}
	if r.Athlete != "" {
		if err := CheckID(r.Athlete); err != nil {
			return devsync.Invalid("athlete", "%s (an athlete id)", err)
		}
	}
	if r.Day != "" {
		if err := CheckDay(r.Day); err != nil {
			return devsync.Invalid("day", "%s", err)
		}
	}
	return nil
}

// recheckShape runs CheckShape again after a hook, unless the hook left
// every key field as it was when it was checked.
func recheckShape(checked, r *devsync.Record) error {
	if r.ID == checked.ID && r.Kind == checked.Kind && r.Athlete == checked.Athlete && r.Day == checked.Day {
		return nil
	}
	return CheckShape(r)
}

func checkKind(k string) error {
	if k == "" {
		return devsync.Invalid("kind", "is required")
	}
	if len(k) > 32 {
		return devsync.Invalid("kind", "is longer than 32 characters")
	}
	for i, c := range k {
		if !(c >= 'a' && c <= 'z' || c == '_' || i > 0 && c >= '0' && c <= '9') {
			return devsync.Invalid("kind", "%q is not a kind name (lower-case letters, digits and _)", k)
		}
	}
	return nil
}

// CheckID accepts a UUID in its canonical lower-case 8-4-4-4-12 form or a
// 26-character ULID in its canonical upper-case Crockford base 32. One
// spelling per id keeps one key per record.
func CheckID(id string) error {
	switch len(id) {
	case 0:
		return errors.New("is required")
	case 36:
		// What uuid.Parse accepts and String gives back unchanged, checked
		// without allocating (this runs several times per pushed record).
		for i := 0; i < 36; i++ {
			c := id[i]
			switch i {
			case 8, 13, 18, 23:
				if c != '-' {
					return fmt.Errorf("%q is not a UUID in lower-case 8-4-4-4-12 form", id)
				}
			default:
				if !(c >= '0' && c <= '9' || c >= 'a' && c <= 'f') {
					return fmt.Errorf("%q is not a UUID in lower-case 8-4-4-4-12 form", id)
				}
			}
		}
		return nil
	case 26:
		if id[0] > '7' {
			return fmt.Errorf("%q is not a ULID: the first character must be 0–7", id)
		}
		for _, c := range id {
			if !strings.ContainsRune(crockford, c) {
				return fmt.Errorf("%q is not a ULID: %q is not an upper-case Crockford base-32 digit", id, c)
			}
		}
		return nil
	}
	return fmt.Errorf("%q is neither a UUID (36 characters) nor a ULID (26 characters)", id)
}

// crockford is the ULID alphabet: Crockford's base 32 without I, L, O, U.
const crockford = "0123456789ABCDEFGHJKMNPQRSTVWXYZ"

// CheckDay accepts a real calendar day written YYYY-MM-DD
// (devsync.CivilDay).
func CheckDay(d string) error {
	if len(d) != 10 || d[4] != '-' || d[7] != '-' {
		return fmt.Errorf("%q is not a day written YYYY-MM-DD", d)
	}
	if _, _, _, ok := devsync.CivilDay(d); !ok {
		return fmt.Errorf("%q is not a calendar day written YYYY-MM-DD", d)
	}
	return nil
}

// checkAthlete: a per-athlete record names an athlete the camp holds (an
// athlete record stored earlier, or earlier in this same push). The
// athlete record itself names its own id; tombstones are not checked, so
// a bad record can always be removed.
func (p *pusher) checkAthlete(rec *devsync.Record) error {
	if !p.db.campIntegrity || rec.Athlete == "" || rec.Deleted || rec.Kind == athleteKind {
		return nil
	}
	if p.athletes[rec.Athlete] {
		return nil // kinds never change, so a checked athlete stays one
	}
	v := p.records.Get([]byte(rec.Athlete))
	if v == nil {
		return devsync.Invalid("athlete", "no athlete with id %q in this camp; add the athlete first", rec.Athlete)
	}
	a, err := decodeStored(v)
	if err != nil {
		return err
	}
	// A deleted athlete still counts: the store holds their records from
	// before the deletion, and its own export must import again (and
	// devices re-push after a restore) whatever the athlete's state.
	if a.Kind != athleteKind {
		return devsync.Invalid("athlete", "%q is a %s record, not an athlete", rec.Athlete, a.Kind)
	}
	if p.athletes == nil {
		p.athletes = map[string]bool{}
	}
	p.athletes[rec.Athlete] = true
	return nil
}

// athleteKind is the record kind whose id other records name in "athlete".
const athleteKind = "athlete"
