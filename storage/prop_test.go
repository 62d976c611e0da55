package storage_test

import (
	"fmt"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"runtime"
	"slices"
	"strconv"
	"strings"
	"sync"
	"testing"

	"github.com/google/uuid"

	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// TestConvergence is the strong-eventual-consistency property of the
// last-writer-wins register CRDT (Shapiro, Preguiça, Baquero, Zawirski,
// "Conflict-free Replicated Data Types", SSS 2011 / INRIA RR-7506): replicas
// that have received the same set of updates, in any order and with
// duplicates, are in the same state. Here the state of one record is the
// greatest of its versions under devsync.Compare, with sticky deletes.
//
// Each seeded case simulates a camp: 2–4 devices with skewed physical
// clocks (and the odd clock jump backwards) stamp versions with
// devsync.Clock; they create, edit (sometimes moving a record to another
// day or athlete), delete and restore records offline, push random
// prefixes of their outboxes to the real store (lost acknowledgements make
// them re-send, stale batches are re-delivered whole), and pull random
// page sizes, merging with devsync.Compare. The devices are in-memory
// model replicas; the hub is a real bbolt file. After everyone has pushed
// and pulled, every replica must hold the same records, each the greatest
// version ever made of it, deletes must have held unless a later
// generation restored them, and the store must pass Check.
//
// CORNERBOOK_PROP_SEED and CORNERBOOK_PROP_CASES change the run; -short
// runs a tenth of the cases.
func TestConvergence(t *testing.T) {
	cases := 10_000
	if testing.Short() {
		cases = 1_000
	}
	if v, err := strconv.Atoi(os.Getenv("CORNERBOOK_PROP_CASES")); err == nil && v > 0 {
		cases = v
	}
	seed := uint64(20260302)
	if v, err := strconv.ParseUint(os.Getenv("CORNERBOOK_PROP_SEED"), 10, 64); err == nil {
		seed = v
	}
	dir := scratchDir(t)
	workers := 2 * runtime.GOMAXPROCS(0)
	var (
		wg     sync.WaitGroup
		mu     sync.Mutex
		failed []string
		next   = make(chan int)
	)
	for w := 0; w < workers; w++ {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				if err := runCase(filepath.Join(dir, fmt.Sprintf("case-%d.db", i)), seed+uint64(i)); err != nil {
					mu.Lock()
					failed = append(failed, fmt.Sprintf("case seed %d (CORNERBOOK_PROP_SEED=%d CORNERBOOK_PROP_CASES=1): %v", seed+uint64(i), seed+uint64(i), err))
					mu.Unlock()
				}
			}
		}()
	}
	for i := 0; i < cases; i++ {
		mu.Lock()
		stop := len(failed) >= 3
		mu.Unlock()
		if stop {
			break
		}
		next <- i
	}
	close(next)
	wg.Wait()
	for _, f := range failed {
		t.Error(f)
	}
}

// scratchDir is where the property test's many small stores live: a
// RAM-backed directory when the machine has one, because the property is
// about merge logic and thousands of fsyncs on a disk would only make it
// slow. Durability on a real disk is the crash test's job.
func scratchDir(t *testing.T) string {
	if st, err := os.Stat("/dev/shm"); err == nil && st.IsDir() {
		if d, err := os.MkdirTemp("/dev/shm", "cornerbook-prop-"); err == nil {
			t.Cleanup(func() { os.RemoveAll(d) })
			return d
		}
	}
	return t.TempDir()
}

type simDevice struct {
	id      string
	skew    int64 // physical clock offset from true time, ms
	clock   devsync.Clock
	local   map[string]devsync.Record
	outbox  []devsync.Mutation
	nextN   uint64
	cursor  uint64
	sent    [][]devsync.Mutation // batches already acknowledged, for stale re-delivery
	highest uint64               // highest n issued
	hubN    uint64               // highest n the hub has received (the model of its counter)
}

type world struct {
	rnd      *rand.Rand
	now      int64 // true time, Unix ms
	devs     []*simDevice
	hub      *storage.DB
	versions map[string][]devsync.Record // every version ever made, by id
	athletes []string
}

const maxSkewMs = 2_000

func (w *world) id() string {
	var u uuid.UUID
	for i := range u {
		u[i] = byte(w.rnd.Uint32())
	}
	u[6] = u[6]&0x0f | 0x40
	u[8] = u[8]&0x3f | 0x80
	return u.String()
}

func (w *world) day() string { return fmt.Sprintf("2026-03-%02d", 2+w.rnd.IntN(3)) }

func (d *simDevice) pt(w *world) int64 { return w.now + d.skew }

func runCase(path string, seed uint64) (err error) {
	hub, err := storage.Open(path, storage.Options{})
	if err != nil {
		return err
	}
	defer func() {
		hub.Close()
		os.Remove(path)
	}()
	w := &world{
		rnd:      rand.New(rand.NewPCG(seed, 0x5eed)),
		now:      1_772_433_000_000,
		hub:      hub,
		versions: map[string][]devsync.Record{},
	}
	w.athletes = []string{w.id(), w.id()}
	for i := range 2 + w.rnd.IntN(3) {
		w.devs = append(w.devs, &simDevice{
			id:    fmt.Sprintf("dev-%d", i),
			skew:  w.rnd.Int64N(2*maxSkewMs+1) - maxSkewMs,
			local: map[string]devsync.Record{},
			nextN: 1 + w.rnd.Uint64N(5),
		})
	}
	steps := 6 + w.rnd.IntN(16)
	for range steps {
		w.now += w.rnd.Int64N(400)
		d := w.devs[w.rnd.IntN(len(w.devs))]
		switch p := w.rnd.IntN(100); {
		case p < 40:
			if err := w.write(d); err != nil {
				return err
			}
		case p < 65:
			if err := w.push(d, false); err != nil {
				return err
			}
		case p < 72:
			if err := w.redeliver(d); err != nil {
				return err
			}
		case p < 95:
			if err := w.pull(d, false); err != nil {
				return err
			}
		default:
			d.skew -= w.rnd.Int64N(3_000) // the phone's clock is set back by hand
		}
	}
	// Everyone reaches the Wi-Fi: push everything, then pull everything.
	for _, d := range w.devs {
		for len(d.outbox) > 0 {
			if err := w.push(d, true); err != nil {
				return err
			}
		}
	}
	for _, d := range w.devs {
		if err := w.pull(d, true); err != nil {
			return err
		}
	}
	return w.verify()
}

// write makes one local change on d: a new record, an edit, a delete or
// a restore of what d currently holds.
func (w *world) write(d *simDevice) error {
	var live, dead []devsync.Record
	for _, r := range sortedRecords(d.local) {
		if r.Deleted {
			dead = append(dead, r)
		} else {
			live = append(live, r)
		}
	}
	stamp := d.clock.Now(d.pt(w))
	var v devsync.Record
	op := devsync.OpUpsert
	switch p := w.rnd.IntN(100); {
	case p < 35 || len(live)+len(dead) == 0:
		v = devsync.Record{ID: w.id(), Kind: "checkin", Athlete: w.athletes[w.rnd.IntN(2)], Day: w.day(), At: "2026-03-02T07:00:00+02:00"}
	case p < 70 && len(live) > 0:
		v = live[w.rnd.IntN(len(live))]
		if w.rnd.IntN(4) == 0 {
			v.Day = w.day()
		}
		if w.rnd.IntN(10) == 0 {
			v.Athlete = w.athletes[w.rnd.IntN(2)]
		}
	case p < 88 && len(live) > 0:
		v = live[w.rnd.IntN(len(live))]
		v.Deleted = true
		op = devsync.OpDelete
	case len(dead) > 0:
		v = dead[w.rnd.IntN(len(dead))]
		v.Deleted = false
		v.Gen++
		op = devsync.OpRestore
	default:
		return nil
	}
	v.Device, v.Stamp = d.id, stamp
	v.Body = []byte(fmt.Sprintf(`{"mass_kg":%d.%d,"by":%q}`, 60+w.rnd.IntN(20), w.rnd.IntN(10), d.id))
	if old, ok := d.local[v.ID]; ok && devsync.Compare(&v, &old) <= 0 {
		// Causality (Kulkarni et al. 2014): d has seen old, so its clock
		// stamps the new version above it and the new version wins.
		return fmt.Errorf("%s: its own new version of %s does not beat the copy it edited", d.id, v.ID)
	}
	d.local[v.ID] = v
	w.versions[v.ID] = append(w.versions[v.ID], v)
	d.outbox = append(d.outbox, devsync.Mutation{N: d.nextN, Op: op, Record: v})
	d.highest = d.nextN
	d.nextN += 1 + w.rnd.Uint64N(2) // gaps are allowed
	return nil
}

// push sends a prefix of d's outbox. Unless all is set, the
// acknowledgement may be lost, so d keeps the batch and sends it again.
func (w *world) push(d *simDevice, all bool) error {
	batch := d.outbox
	if !all && len(batch) > 0 {
		batch = batch[:1+w.rnd.IntN(len(batch))]
	}
	res, err := w.hub.Push(devsync.PushRequest{Device: d.id, Mutations: batch}, nil)
	if err != nil {
		return fmt.Errorf("push from %s: %w", d.id, err)
	}
	if len(res.Rejected) > 0 {
		return fmt.Errorf("push from %s: rejected %+v", d.id, res.Rejected)
	}
	if res.Applied+res.Superseded+res.Duplicates != len(batch) {
		return fmt.Errorf("push from %s: %d mutations but result %+v", d.id, len(batch), res)
	}
	dups := 0
	for _, m := range batch {
		if m.N <= d.hubN {
			dups++
		}
		d.hubN = max(d.hubN, m.N)
	}
	if res.Duplicates != dups || res.AckedThrough != d.hubN {
		return fmt.Errorf("push from %s: %+v, want %d duplicates and acked through %d", d.id, res, dups, d.hubN)
	}
	if !all && w.rnd.IntN(4) == 0 {
		return nil // the response never arrived
	}
	k := 0
	for k < len(d.outbox) && d.outbox[k].N <= res.AckedThrough {
		k++
	}
	if k > 0 {
		d.sent = append(d.sent, d.outbox[:k:k])
	}
	d.outbox = d.outbox[k:]
	return nil
}

// redeliver sends an already acknowledged batch again, as a stale retry
// would: every mutation in it must count as a duplicate.
func (w *world) redeliver(d *simDevice) error {
	if len(d.sent) == 0 {
		return nil
	}
	batch := d.sent[w.rnd.IntN(len(d.sent))]
	before, _ := w.hub.MaxSeq()
	res, err := w.hub.Push(devsync.PushRequest{Device: d.id, Mutations: batch}, nil)
	if err != nil {
		return err
	}
	after, _ := w.hub.MaxSeq()
	if res.Duplicates != len(batch) || res.Applied != 0 || after != before {
		return fmt.Errorf("re-delivery from %s: %+v (seq %d → %d), want all duplicates", d.id, res, before, after)
	}
	return nil
}

// pull reads pages of the change feed and merges them. Unless all is
// set, it may stop early or lose its cursor (a crash before the page's
// transaction committed on the device).
func (w *world) pull(d *simDevice, all bool) error {
	for pages := 0; ; pages++ {
		recs, next, more, _, err := w.hub.Pull(d.cursor, 1+w.rnd.IntN(4), nil)
		if err != nil {
			return err
		}
		for _, r := range recs {
			d.clock.Update(r.Stamp, d.pt(w))
			if old, ok := d.local[r.ID]; !ok || devsync.Compare(&r, &old) > 0 {
				d.local[r.ID] = r
			}
		}
		if all || w.rnd.IntN(10) != 0 {
			d.cursor = next
		}
		if !more || (!all && w.rnd.IntN(3) == 0) {
			return nil
		}
		if pages > 1000 {
			return fmt.Errorf("pull from %s never ends", d.id)
		}
	}
}

func (w *world) verify() error {
	hubState := map[string]devsync.Record{}
	for id, vs := range w.versions {
		want := vs[0]
		for _, v := range vs[1:] {
			if devsync.Compare(&v, &want) > 0 {
				want = v
			}
		}
		got, err := w.hub.Get(id)
		if err != nil {
			return fmt.Errorf("hub lost %s: %v", id, err)
		}
		if !reflect.DeepEqual(got, want) {
			return fmt.Errorf("hub holds %+v for %s, the greatest version is %+v", got, id, want)
		}
		// Sticky delete: a tombstone in the highest generation wins over
		// every live version of that generation, whatever its stamp.
		for _, v := range vs {
			if v.Deleted && v.Gen == want.Gen && !got.Deleted {
				return fmt.Errorf("%s: deleted in generation %d but stored live", id, v.Gen)
			}
		}
		h, err := w.hub.History(id)
		if err != nil {
			return err
		}
		for i := 1; i < len(h); i++ {
			if devsync.Compare(&h[i], &h[i-1]) <= 0 {
				return fmt.Errorf("%s: history version %d does not beat version %d", id, i, i-1)
			}
		}
		if !reflect.DeepEqual(h[len(h)-1], got) {
			return fmt.Errorf("%s: newest history version is not the stored winner", id)
		}
		hubState[id] = got
	}
	for _, d := range w.devs {
		if !reflect.DeepEqual(d.local, hubState) {
			return fmt.Errorf("%s holds %d records, differing from the hub's %d", d.id, len(d.local), len(hubState))
		}
		st, err := w.hub.Device(d.id)
		if d.highest > 0 && (err != nil || st.LastN != d.highest) {
			return fmt.Errorf("%s: hub counter %d (err %v), highest n issued %d", d.id, st.LastN, err, d.highest)
		}
	}
	seen := map[string]bool{}
	recs, _, more, _, err := w.hub.Pull(0, devsync.MaxPullLimit, nil)
	if err != nil || more {
		return fmt.Errorf("full pull: more %v err %v", more, err)
	}
	for _, r := range recs {
		if seen[r.ID] {
			return fmt.Errorf("full pull lists %s twice", r.ID)
		}
		seen[r.ID] = true
	}
	if len(seen) != len(w.versions) {
		return fmt.Errorf("full pull lists %d records, %d were made", len(seen), len(w.versions))
	}
	return w.hub.Check()
}

func sortedRecords(m map[string]devsync.Record) []devsync.Record {
	out := make([]devsync.Record, 0, len(m))
	for _, r := range m {
		out = append(out, r)
	}
	// Map order is random; sort so a seed replays the same case.
	slices.SortFunc(out, func(a, b devsync.Record) int { return strings.Compare(a.ID, b.ID) })
	return out
}
