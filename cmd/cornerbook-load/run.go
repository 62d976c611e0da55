package main

import (
	"bytes"
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"slices"
	"sync"
	"time"

	bolt "go.etcd.io/bbolt"

	devsync "cornerbook/sync"
)

// Config is one load run.
type Config struct {
	URL     string        // hub base URL on 127.0.0.1 (ignored with Self)
	CAFile  string        // camp authority for an https URL
	Devices int           // simulated devices
	Days    int           // days of offline backlog per device
	Batch   int           // mutations per push
	Timeout time.Duration // bound of the whole run
	Self    bool          // start an in-process hub in a temporary folder
	SelfTLS bool          // the in-process hub serves HTTPS
	// DeviceHost is the Host header of device requests. From 127.0.0.1
	// with a loopback Host the hub treats every request as the coach's
	// laptop and ignores tokens; a LAN-style name makes it authenticate
	// each device by its token and apply its role's rights, as it does
	// for phones on the camp Wi-Fi. "" keeps the URL's host.
	DeviceHost string
	Seed       int64
	Log        io.Writer // progress lines; nil is silent

	// CAPEM is the authority as PEM (instead of CAFile), for tests.
	CAPEM []byte
	// Retry marks a run against a hub that is being killed on purpose:
	// failed requests are retried as always, but counted as Interrupted
	// rather than as errors.
	Retry bool
	// OnAck, if set, is told of every acknowledged record as the hub
	// will store it: in a 200 push answer, with n ≤ ackedThrough and not
	// rejected. Called from many goroutines.
	OnAck func(recs []devsync.Record)
	// OnBatches, if set, is told each device's batches (the expected
	// stored versions) before the pushes start; a batch is one push and
	// one hub transaction.
	OnBatches func(device string, batches [][]devsync.Record)
}

// Report is what a run measured and found.
type Report struct {
	URL      string `json:"url"`
	Devices  int    `json:"devices"`
	Athletes int    `json:"athletes"`
	Days     int    `json:"days"`
	Batch    int    `json:"batch"`

	Records  int `json:"records"` // distinct records sent (athletes included)
	Pushes   int `json:"pushes"`  // push requests answered 200
	Acked    int `json:"acked"`   // records acknowledged
	Rejected int `json:"rejected"`
	// Errors counts failed requests and wrong answers; Interrupted counts
	// requests broken by a deliberate hub kill (Retry runs).
	Errors       int      `json:"errors"`
	Interrupted  int      `json:"interrupted"`
	ErrorSamples []string `json:"errorSamples,omitempty"`

	SetupSeconds  float64 `json:"setupSeconds"` // status, athletes and joins
	PushSeconds   float64 `json:"pushSeconds"`  // from the first push to the last answer
	RecordsPerSec float64 `json:"recordsPerSec"`
	PushP50Ms     float64 `json:"pushP50Ms"`
	PushP95Ms     float64 `json:"pushP95Ms"`
	PushP99Ms     float64 `json:"pushP99Ms"`
	PushMaxMs     float64 `json:"pushMaxMs"`

	PullSeconds float64 `json:"pullSeconds"`
	PullPages   int     `json:"pullPages"`
	Check       Check   `json:"check"`
	// PhoneViews counts athlete phones whose own pull held exactly their
	// athlete's records; PhoneViewErrors those that did not.
	PhoneViews      int `json:"phoneViews"`
	PhoneViewErrors int `json:"phoneViewErrors"`

	// RawBoltRecordsPerSec is the baseline measured after the run on the
	// same machine: the same records' JSON put into a fresh bbolt file,
	// one put each, one transaction per batch of the same size, from one
	// goroutine. LoadVsRaw is RecordsPerSec over it.
	RawBoltRecordsPerSec float64 `json:"rawBoltRecordsPerSec"`
	LoadVsRaw            float64 `json:"loadVsRaw"`
}

// OK reports a clean run: no errors, nothing missing, doubled or changed.
func (r Report) OK() bool {
	return r.Errors == 0 && r.Rejected == 0 && r.Check.OK() && r.PhoneViewErrors == 0 && r.Acked == r.Records
}

// WriteText prints the report for a person.
func (r Report) WriteText(w io.Writer) {
	fmt.Fprintf(w, "hub %s: %d devices (%d athletes) × %d days, batches of %d\n", r.URL, r.Devices, r.Athletes, r.Days, r.Batch)
	fmt.Fprintf(w, "  setup (athletes, join codes, joins): %.2f s\n", r.SetupSeconds)
	fmt.Fprintf(w, "  pushed %d records in %d pushes in %.2f s: %.0f records/s\n", r.Records, r.Pushes, r.PushSeconds, r.RecordsPerSec)
	if r.RawBoltRecordsPerSec > 0 {
		fmt.Fprintf(w, "  baseline: raw bbolt, same records and batches, one goroutine: %.0f records/s; load/raw %.2f\n", r.RawBoltRecordsPerSec, r.LoadVsRaw)
	}
	fmt.Fprintf(w, "  push latency p50 %.1f ms, p95 %.1f ms, p99 %.1f ms, max %.1f ms\n", r.PushP50Ms, r.PushP95Ms, r.PushP99Ms, r.PushMaxMs)
	fmt.Fprintf(w, "  acknowledged %d, rejected %d, errors %d, interrupted %d\n", r.Acked, r.Rejected, r.Errors, r.Interrupted)
	for _, s := range r.ErrorSamples {
		fmt.Fprintf(w, "    error: %s\n", s)
	}
	fmt.Fprintf(w, "  pulled back %d records in %d pages in %.2f s\n", r.Check.Stored, r.PullPages, r.PullSeconds)
	fmt.Fprintf(w, "  check: %d missing, %d doubled, %d changed, %d unexpected; athlete phones seeing exactly their own: %d of %d\n",
		r.Check.Missing, r.Check.Duplicates, r.Check.Mismatched, r.Check.Unexpected, r.PhoneViews, r.PhoneViews+r.PhoneViewErrors)
	for _, s := range r.Check.Samples {
		fmt.Fprintf(w, "    %s\n", s)
	}
	if r.OK() {
		fmt.Fprintln(w, "  OK: every record stored exactly once, as sent")
	}
}

// tally collects the push phase's counters from all devices.
type tally struct {
	mu          sync.Mutex
	lat         []time.Duration
	pushes      int
	acked       int
	rejected    int
	errors      int
	interrupted int
	samples     []string
}

func (t *tally) fail(format string, args ...any) {
	t.mu.Lock()
	defer t.mu.Unlock()
	t.errors++
	if len(t.samples) < 10 {
		t.samples = append(t.samples, fmt.Sprintf(format, args...))
	}
}

// Run performs one load run: setup, concurrent pushes, pull and check. An
// error means the run could not be carried out (hub unreachable, bad
// configuration, timeout); what it found wrong with the hub is in the
// Report (see Report.OK).
func Run(ctx context.Context, cfg Config) (rep Report, err error) {
	if err := cfg.check(); err != nil {
		return rep, err
	}
	logf := func(format string, args ...any) {
		if cfg.Log != nil {
			fmt.Fprintf(cfg.Log, format+"\n", args...)
		}
	}
	ctx, cancel := context.WithTimeout(ctx, cfg.Timeout)
	defer cancel()
	caPEM := cfg.CAPEM
	if cfg.Self {
		h, err := startSelf("", cfg.SelfTLS, nil)
		if err != nil {
			return rep, fmt.Errorf("starting the in-process hub: %w", err)
		}
		defer func() {
			t := time.Now()
			cerr := h.Close()
			logf("in-process hub stopped and checked (%.2f s)", time.Since(t).Seconds())
			if cerr != nil && err == nil {
				err = cerr
			}
		}()
		cfg.URL, caPEM = h.URL, h.CAPEM()
		logf("in-process hub at %s (folder %s)", h.URL, h.Dir)
	} else if caPEM == nil {
		if caPEM, err = readCA(cfg.CAFile); err != nil {
			return rep, err
		}
	}
	base, err := loopbackURL(cfg.URL)
	if err != nil {
		return rep, err
	}
	c, err := newClient(base, caPEM, cfg.Devices, cfg.DeviceHost)
	if err != nil {
		return rep, err
	}
	// Connections the transport opened but never used count as busy for
	// the hub's graceful shutdown: hang them up first.
	defer c.http.CloseIdleConnections()
	rep.URL, rep.Devices, rep.Days, rep.Batch = base.String(), cfg.Devices, cfg.Days, cfg.Batch
	rng := rand.New(rand.NewPCG(uint64(cfg.Seed), 0x636f726e6572))

	// Setup: the coach on the laptop creates the athletes and pairs every device.
	t0 := time.Now()
	var st status
	if _, err := retry(ctx, func() (err error) { st, err = c.status(ctx); return }); err != nil {
		return rep, fmt.Errorf("the hub at %s does not answer: %w", base, err)
	}
	if st.Role != "coach" {
		return rep, fmt.Errorf("the hub does not treat this machine as the coach's laptop (role %q); run the tool on the hub's own machine", st.Role)
	}
	loc, err := time.LoadLocation(st.TimeZone)
	if err != nil {
		loc = time.Local
	}
	today, err := time.ParseInLocation(time.DateOnly, st.Today, loc)
	if err != nil {
		return rep, fmt.Errorf("the hub's status has no usable day (%q): %v", st.Today, err)
	}
	coachDev := "load-coach-" + newID()[24:]
	rep.Athletes = (cfg.Devices + DevicesPerAthlete - 1) / DevicesPerAthlete
	athletes := newAthletes(rep.Athletes, coachDev, time.Now().In(loc), rng)
	want := map[string]devsync.Record{}
	ours := map[string]bool{coachDev: true}
	req := devsync.PushRequest{Device: coachDev, Epoch: st.Epoch}
	for i, a := range athletes {
		req.Mutations = append(req.Mutations, devsync.Mutation{N: uint64(i + 1), Op: devsync.OpUpsert, Record: a})
		if want[a.ID], err = expected(a); err != nil {
			return rep, err
		}
	}
	var ares devsync.PushResponse
	if _, err := retry(ctx, func() (err error) { ares, err = c.push(ctx, coach, req); return }); err != nil {
		return rep, fmt.Errorf("creating the athletes: %w", err)
	}
	if len(ares.Rejected) > 0 || ares.AckedThrough != uint64(len(athletes)) {
		return rep, fmt.Errorf("creating the athletes: acked through %d of %d, rejected %v", ares.AckedThrough, len(athletes), ares.Rejected)
	}

	sims := make([]*sim, cfg.Devices)
	for i := range sims {
		role := "staff"
		if i%DevicesPerAthlete == 0 {
			role = "athlete"
		}
		sims[i] = &sim{index: i, role: role, athlete: athletes[i/DevicesPerAthlete].ID, name: fmt.Sprintf("load %s %03d", role, i+1)}
	}
	if err := joinAll(ctx, c, sims, cfg.Retry); err != nil {
		return rep, err
	}
	var batches [][]devsync.Mutation
	for _, d := range sims {
		ours[d.id] = true
		d.backlog(today, cfg.Days, rng)
		var exp [][]devsync.Record
		for off := 0; off < len(d.muts); off += cfg.Batch {
			b := d.muts[off:min(off+cfg.Batch, len(d.muts))]
			batches = append(batches, b)
			var eb []devsync.Record
			for _, m := range b {
				e, err := expected(m.Record)
				if err != nil {
					return rep, err
				}
				want[m.Record.ID] = e
				eb = append(eb, e)
			}
			exp = append(exp, eb)
		}
		if cfg.OnBatches != nil {
			cfg.OnBatches(d.id, exp)
		}
	}
	rep.Records = len(want)
	rep.SetupSeconds = time.Since(t0).Seconds()
	if cfg.OnAck != nil {
		cfg.OnAck(athletes2(want, athletes))
	}
	logf("setup: %d athletes, %d devices paired, %d records to push (%.2f s)", rep.Athletes, len(sims), rep.Records, rep.SetupSeconds)

	// Pushes: every device at once, each sending its backlog in order.
	t := &tally{acked: len(athletes), pushes: 1}
	var wg sync.WaitGroup
	gate := make(chan struct{})
	for _, d := range sims {
		wg.Add(1)
		go func() {
			defer wg.Done()
			<-gate
			d.pushAll(ctx, c, cfg, st.Epoch, want, t)
		}()
	}
	t1 := time.Now()
	close(gate)
	wg.Wait()
	push := time.Since(t1)
	rep.PushSeconds = push.Seconds()
	rep.RecordsPerSec = float64(rep.Records-len(athletes)) / push.Seconds()
	rep.Pushes, rep.Acked, rep.Rejected = t.pushes, t.acked, t.rejected
	rep.Errors, rep.Interrupted, rep.ErrorSamples = t.errors, t.interrupted, t.samples
	rep.PushP50Ms, rep.PushP95Ms, rep.PushP99Ms, rep.PushMaxMs = pct(t.lat, 0.50), pct(t.lat, 0.95), pct(t.lat, 0.99), pct(t.lat, 1)
	if ctx.Err() != nil {
		return rep, fmt.Errorf("the run did not finish within --timeout %s", cfg.Timeout)
	}
	logf("pushes: %.0f records/s, p95 %.1f ms, %d errors", rep.RecordsPerSec, rep.PushP95Ms, rep.Errors)

	// Pull everything back as the coach and compare.
	t2 := time.Now()
	pulled, pages, err := c.pullAll(ctx, coach)
	if err != nil {
		return rep, err
	}
	rep.PullSeconds, rep.PullPages = time.Since(t2).Seconds(), pages
	rep.Check = compare(pulled, want, ours)
	logf("pull: %d records in %d pages (%.2f s)", len(pulled), pages, rep.PullSeconds)

	// Each athlete's phone pulls its own view: exactly its athlete's records.
	// (Without a device Host every request is the laptop's, which sees everything.)
	for _, d := range sims {
		if d.role != "athlete" || cfg.DeviceHost == "" {
			continue
		}
		mine, _, err := c.pullAll(ctx, as{token: d.token})
		if err != nil {
			return rep, fmt.Errorf("pull by phone %s: %w", d.id, err)
		}
		if msg := phoneView(mine, want, d.athlete); msg != "" {
			rep.PhoneViewErrors++
			rep.Check.sample("phone %s: %s", d.id, msg)
		} else {
			rep.PhoneViews++
		}
	}
	raw, err := rawBaseline(batches, want)
	if err != nil {
		return rep, fmt.Errorf("raw bbolt baseline: %w", err)
	}
	rep.RawBoltRecordsPerSec, rep.LoadVsRaw = raw, rep.RecordsPerSec/raw
	logf("athlete phones pulled their own records: %d of %d as expected", rep.PhoneViews, rep.PhoneViews+rep.PhoneViewErrors)
	return rep, nil
}

// athletes2 returns the expected versions of the athlete records.
func athletes2(want map[string]devsync.Record, athletes []devsync.Record) []devsync.Record {
	out := make([]devsync.Record, len(athletes))
	for i, a := range athletes {
		out[i] = want[a.ID]
	}
	return out
}

// joinAll pairs every device, eight at a time. A join whose answer is
// lost is started over with a new code (a code is single-use).
func joinAll(ctx context.Context, c *client, sims []*sim, tolerant bool) error {
	sem := make(chan struct{}, 8)
	errs := make([]error, len(sims))
	var wg sync.WaitGroup
	for i, d := range sims {
		wg.Add(1)
		go func() {
			defer wg.Done()
			sem <- struct{}{}
			defer func() { <-sem }()
			athlete := ""
			if d.role == "athlete" {
				athlete = d.athlete
			}
			var p paired
			_, err := retry(ctx, func() (err error) { p, err = c.join(ctx, d.role, athlete, d.name); return })
			if err != nil {
				errs[i] = fmt.Errorf("pairing device %d: %w", i+1, err)
				return
			}
			d.id, d.token = p.Device.ID, p.Token
			if p.Device.Role != d.role || p.Device.Athlete != athlete {
				errs[i] = fmt.Errorf("pairing device %d: the hub gave role %q athlete %q, asked for %q %q", i+1, p.Device.Role, p.Device.Athlete, d.role, athlete)
			}
		}()
	}
	wg.Wait()
	return errors.Join(errs...)
}

// pushAll sends the device's backlog in batches, in order, like the app's
// outbox: a batch is resent until the hub answers; only an answer of 200
// moves on, and only mutations with n ≤ ackedThrough that were not
// rejected count as acknowledged.
func (d *sim) pushAll(ctx context.Context, c *client, cfg Config, epoch string, want map[string]devsync.Record, t *tally) {
	who := as{token: d.token}
	for off := 0; off < len(d.muts); off += cfg.Batch {
		end := min(off+cfg.Batch, len(d.muts))
		b := d.muts[off:end]
		req := devsync.PushRequest{Device: d.id, Epoch: epoch, Mutations: b, Waiting: len(d.muts) - end}
		var res devsync.PushResponse
		wait := 20 * time.Millisecond
		for {
			start := time.Now()
			var err error
			res, err = c.push(ctx, who, req)
			lat := time.Since(start)
			if err == nil {
				t.mu.Lock()
				t.lat = append(t.lat, lat)
				t.pushes++
				t.mu.Unlock()
				break
			}
			if ctx.Err() != nil {
				t.fail("device %s: push of n %d–%d not answered before the timeout: %v", d.id, b[0].N, b[len(b)-1].N, err)
				return
			}
			if !transient(err) {
				t.fail("device %s: push of n %d–%d refused: %v", d.id, b[0].N, b[len(b)-1].N, err)
				return // a real device would park the batch; the check will list it as missing
			}
			if cfg.Retry {
				t.mu.Lock()
				t.interrupted++
				t.mu.Unlock()
			} else {
				t.fail("device %s: push of n %d–%d failed (retrying): %v", d.id, b[0].N, b[len(b)-1].N, err)
			}
			select {
			case <-ctx.Done():
				return
			case <-time.After(wait):
			}
			wait = min(wait*2, 500*time.Millisecond)
		}
		rejected := map[uint64]bool{}
		for _, r := range res.Rejected {
			rejected[r.N] = true
			t.mu.Lock()
			t.rejected++
			t.mu.Unlock()
			t.fail("device %s: n %d (%s) rejected: %s %s: %s", d.id, r.N, r.ID, r.Code, r.Field, r.Reason)
		}
		if res.AckedThrough < b[len(b)-1].N {
			t.fail("device %s: acked through %d after pushing up to n %d", d.id, res.AckedThrough, b[len(b)-1].N)
		}
		var acked []devsync.Record
		for _, m := range b {
			if m.N <= res.AckedThrough && !rejected[m.N] {
				acked = append(acked, want[m.Record.ID])
			}
		}
		t.mu.Lock()
		t.acked += len(acked)
		t.mu.Unlock()
		if cfg.OnAck != nil {
			cfg.OnAck(acked)
		}
	}
}

// pct is the q-quantile of ds in milliseconds (nearest rank).
func pct(ds []time.Duration, q float64) float64 {
	if len(ds) == 0 {
		return 0
	}
	s := slices.Clone(ds)
	slices.Sort(s)
	i := int(math.Ceil(q*float64(len(s)))) - 1
	i = max(0, min(i, len(s)-1))
	return float64(s[i].Microseconds()) / 1000
}

// Check compares what the hub holds with what was sent.
type Check struct {
	Stored     int      `json:"stored"`     // records pulled that came from this run's devices
	Missing    int      `json:"missing"`    // expected, not stored
	Duplicates int      `json:"duplicates"` // ids pulled more than once
	Mismatched int      `json:"mismatched"` // stored, but not the version sent
	Unexpected int      `json:"unexpected"` // from this run's devices, never sent
	Samples    []string `json:"samples,omitempty"`
}

// OK is true when every expected record is stored exactly once, as sent.
func (c Check) OK() bool {
	return c.Missing == 0 && c.Duplicates == 0 && c.Mismatched == 0 && c.Unexpected == 0
}

func (c *Check) sample(format string, args ...any) {
	if len(c.Samples) < 10 {
		c.Samples = append(c.Samples, fmt.Sprintf(format, args...))
	}
}

// compare checks the pulled records against want (id → the version the
// hub must store). Records of other devices (a hub with other data) are
// ignored unless their id was sent.
func compare(pulled []devsync.Record, want map[string]devsync.Record, ours map[string]bool) Check {
	var c Check
	seen := map[string]bool{}
	for _, r := range pulled {
		w, sent := want[r.ID]
		if !sent && !ours[r.Device] {
			continue
		}
		if seen[r.ID] {
			c.Duplicates++
			c.sample("record %s pulled twice", r.ID)
			continue
		}
		seen[r.ID] = true
		c.Stored++
		if !sent {
			c.Unexpected++
			c.sample("record %s from device %s was never sent", r.ID, r.Device)
			continue
		}
		if !sameVersion(r, w) {
			c.Mismatched++
			c.sample("record %s differs: stored %s, sent %s", r.ID, brief(r), brief(w))
		}
	}
	for id := range want {
		if !seen[id] {
			c.Missing++
			c.sample("record %s (%s, %s) is missing", id, want[id].Kind, want[id].Day)
		}
	}
	return c
}

func sameVersion(a, b devsync.Record) bool {
	ab, bb := a.Body, b.Body
	a.Body, b.Body = nil, nil
	return reflect.DeepEqual(a, b) && bytes.Equal(ab, bb)
}

func brief(r devsync.Record) string {
	return fmt.Sprintf("%s/%s/%s stamp %s body %.120s", r.Kind, r.Day, r.Device, r.Stamp, r.Body)
}

// phoneView checks an athlete phone's own pull: every expected record of
// its athlete (and the athlete record itself), nothing of anyone else's.
func phoneView(mine []devsync.Record, want map[string]devsync.Record, athlete string) string {
	got := map[string]bool{}
	for _, r := range mine {
		if r.Athlete != athlete && r.ID != athlete && r.Kind != "settings" {
			return fmt.Sprintf("received record %s of athlete %q", r.ID, r.Athlete)
		}
		got[r.ID] = true
	}
	for id, w := range want {
		if (w.Athlete == athlete || id == athlete) && !got[id] {
			return fmt.Sprintf("did not receive its own record %s (%s)", id, w.Kind)
		}
	}
	return ""
}

// rawBaseline stores the records' JSON in a fresh bbolt file in the
// system's temporary folder, one put per record and one transaction per
// batch, and returns records per second.
func rawBaseline(batches [][]devsync.Mutation, want map[string]devsync.Record) (float64, error) {
	dir, err := os.MkdirTemp("", "cornerbook-load-raw-")
	if err != nil {
		return 0, err
	}
	defer os.RemoveAll(dir)
	db, err := bolt.Open(filepath.Join(dir, "raw.db"), 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		return 0, err
	}
	defer db.Close()
	enc := make([][][2][]byte, len(batches))
	n := 0
	for i, b := range batches {
		for _, m := range b {
			v, err := json.Marshal(want[m.Record.ID])
			if err != nil {
				return 0, err
			}
			enc[i] = append(enc[i], [2][]byte{[]byte(m.Record.ID), v})
			n++
		}
	}
	t0 := time.Now()
	for _, b := range enc {
		err := db.Update(func(tx *bolt.Tx) error {
			bk, err := tx.CreateBucketIfNotExists([]byte("records"))
			if err != nil {
				return err
			}
			for _, kv := range b {
				if err := bk.Put(kv[0], kv[1]); err != nil {
					return err
				}
			}
			return nil
		})
		if err != nil {
			return 0, err
		}
	}
	return float64(n) / time.Since(t0).Seconds(), nil
}
