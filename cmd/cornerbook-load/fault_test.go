package main

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"math/rand/v2"
	"net"
	"net/url"
	"path/filepath"
	"slices"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	devsync "cornerbook/sync"
)

var faultKills = flag.Int("fault.kills", 20, "SIGKILLs of the hub in TestFaultHubKilledMidSync (more for the documented long run)")

// ledger is what the devices were told: every acknowledged record, and
// every batch (one push, one hub transaction) ever sent.
type ledger struct {
	mu      sync.Mutex
	acked   map[string]devsync.Record
	batches [][]devsync.Record
	devices map[string]bool
}

func newLedger() *ledger {
	return &ledger{acked: map[string]devsync.Record{}, devices: map[string]bool{}}
}

func (l *ledger) ack(recs []devsync.Record) {
	l.mu.Lock()
	defer l.mu.Unlock()
	for _, r := range recs {
		l.acked[r.ID] = r
		l.devices[r.Device] = true
	}
}

func (l *ledger) addBatches(device string, bs [][]devsync.Record) {
	l.mu.Lock()
	defer l.mu.Unlock()
	l.batches = append(l.batches, bs...)
	l.devices[device] = true
}

// pending counts records of registered batches not yet acknowledged:
// above zero while a round is pushing.
func (l *ledger) pending() int {
	l.mu.Lock()
	defer l.mu.Unlock()
	n := 0
	for _, b := range l.batches {
		for _, r := range b {
			if _, ok := l.acked[r.ID]; !ok {
				n++
			}
		}
	}
	return n
}

func (l *ledger) snapshot() (map[string]devsync.Record, map[string]bool) {
	l.mu.Lock()
	defer l.mu.Unlock()
	a := make(map[string]devsync.Record, len(l.acked))
	for k, v := range l.acked {
		a[k] = v
	}
	d := make(map[string]bool, len(l.devices))
	for k := range l.devices {
		d[k] = true
	}
	return a, d
}

// TestFaultHubKilledMidSync runs the load against `cornerbook serve` as a
// subprocess and SIGKILLs the hub at random moments — mid-push, mid-pull,
// mid-join, mid-start — then starts it again on the same ports and data
// folder (ENGINEERING.md §3.8 "server crash after/before commit", §9.2).
// After every restart, every mutation acknowledged before the kill (a 200
// answer, n ≤ ackedThrough, not rejected) must be stored exactly once,
// as sent. At the end the hub is killed one last time mid-run and the
// store is opened directly: its invariants hold, every record has one
// version, and every batch is stored whole or not at all.
//
//	go test ./cmd/cornerbook-load -run FaultHubKilled -fault.kills=200 -v
func TestFaultHubKilledMidSync(t *testing.T) {
	if testing.Short() {
		t.Skip("starts and kills a hub subprocess 20 times")
	}
	kills := *faultKills
	data := t.TempDir()
	h := newProcHub(t, data)
	first := h.start()
	ca := h.caPEM()
	led := newLedger()
	rng := rand.New(rand.NewPCG(uint64(time.Now().UnixNano()), 1))

	ctx, cancel := context.WithTimeout(context.Background(), time.Duration(30+kills*3)*time.Second)
	defer cancel()
	loadCtx, stopLoad := context.WithCancel(ctx)
	var rounds []Report
	var roundErrs []error
	loadDone := make(chan struct{})
	go func() {
		defer close(loadDone)
		for round := 1; loadCtx.Err() == nil; round++ {
			rep, err := Run(loadCtx, Config{URL: h.URL(), CAPEM: ca, Devices: 10, Days: 14, Batch: 12,
				Timeout: time.Minute, DeviceHost: DefaultDeviceHost, Seed: int64(round), Retry: true,
				OnAck: led.ack, OnBatches: led.addBatches})
			if loadCtx.Err() != nil {
				return // the final kill interrupted this round on purpose
			}
			rounds, roundErrs = append(rounds, rep), append(roundErrs, err)
		}
	}()

	verifier := h.client()
	var restarts []time.Duration
	for i := 1; i <= kills; i++ {
		time.Sleep(time.Duration(20+rng.IntN(280)) * time.Millisecond)
		if i == kills {
			// The last kill lands mid-push, well before a round's end, so
			// some batches are cut off.
			for deadline := time.Now().Add(30 * time.Second); led.pending() < 200 && time.Now().Before(deadline); {
				time.Sleep(5 * time.Millisecond)
			}
			time.Sleep(time.Duration(rng.IntN(30)) * time.Millisecond)
		}
		h.kill()
		acked, devs := led.snapshot()
		if i == kills {
			break // the last kill is not followed by a restart: the store is examined directly
		}
		restarts = append(restarts, h.start())
		pulled, _, err := verifier.pullAll(ctx, coach)
		require.NoError(t, err, "pull after restart %d", i)
		c := compare(pulled, acked, devs)
		// Records stored but not yet acknowledged are fine (the answer was
		// lost in the kill; the device resends and gets its ack).
		assert.Zero(t, c.Missing, "restart %d: acknowledged records missing: %v", i, c.Samples)
		assert.Zero(t, c.Duplicates, "restart %d: records stored twice: %v", i, c.Samples)
		assert.Zero(t, c.Mismatched, "restart %d: acknowledged records changed: %v", i, c.Samples)
		if t.Failed() {
			t.Fatalf("after restart %d of %d (hub output):\n%s", i, kills, h.out)
		}
	}
	stopLoad()
	<-loadDone
	acked, _ := led.snapshot()

	// Every round that finished between kills ended clean.
	for i, rep := range rounds {
		require.NoError(t, roundErrs[i], "round %d", i+1)
		assert.True(t, rep.Check.OK(), "round %d check: %+v", i+1, rep.Check)
		assert.Zero(t, rep.Errors, "round %d errors: %v", i+1, rep.ErrorSamples)
		assert.Equal(t, rep.Records, rep.Acked, "round %d: every record acknowledged in the end", i+1)
	}

	// The store itself, opened directly with the hub dead.
	db, err := server.OpenStore(filepath.Join(data, "cornerbook.db"), nil)
	require.NoError(t, err)
	defer db.Close()
	require.NoError(t, db.Check(), "store invariants after %d kills", kills)
	stored := map[string]devsync.Record{}
	require.NoError(t, db.All(true, func(r devsync.Record) error { stored[r.ID] = r; return nil }))
	for id, want := range acked {
		got, ok := stored[id]
		if assert.True(t, ok, "acknowledged record %s missing", id) {
			assert.True(t, sameVersion(got, want), "acknowledged record %s changed:\n got %s\nwant %s", id, brief(got), brief(want))
		}
		hist, err := db.History(id)
		require.NoError(t, err)
		assert.Len(t, hist, 1, "record %s stored once, one version", id)
	}
	whole, none := 0, 0
	for _, b := range led.batches {
		n := 0
		for _, r := range b {
			if _, ok := stored[r.ID]; ok {
				n++
			}
		}
		switch n {
		case len(b):
			whole++
		case 0:
			none++
		default:
			t.Errorf("a batch of %d was stored in part: %d records (first %s)", len(b), n, b[0].ID)
		}
	}
	assert.Positive(t, none, "the last kill cut some batches off (else the whole-or-nothing check proves little)")
	t.Logf("%d kills; %d finished rounds of 10 devices × 14 days; %d acknowledged records; %d batches whole, %d not stored; first start %s, restarts median %s max %s",
		kills, len(rounds), len(acked), whole, none, first.Round(time.Millisecond), median(restarts).Round(time.Millisecond), slices.Max(append(restarts, 0)).Round(time.Millisecond))
	assert.GreaterOrEqual(t, len(acked), 100, "the load made progress between kills")
}

func median(ds []time.Duration) time.Duration {
	if len(ds) == 0 {
		return 0
	}
	s := slices.Clone(ds)
	slices.Sort(s)
	return s[len(s)/2]
}

// TestFaultUploadCutOrAnswerLost covers the two network faults of a push
// (ENGINEERING.md §3.8): the connection drops mid-upload (a truncated
// body: nothing may be applied, and the full batch goes through after),
// and the answer is lost after the hub committed (the device resends the
// same batch: every mutation is a duplicate, nothing is applied twice).
func TestFaultUploadCutOrAnswerLost(t *testing.T) {
	h, err := startSelf("", false, nil)
	require.NoError(t, err)
	defer func() { require.NoError(t, h.Close()) }()
	u, _ := url.Parse(h.URL)
	c, err := newClient(u, nil, 2, "")
	require.NoError(t, err)
	ctx := context.Background()
	st, err := c.status(ctx)
	require.NoError(t, err)
	today, _ := time.Parse(time.DateOnly, st.Today)
	rng := rand.New(rand.NewPCG(3, 3))
	ath := newAthletes(1, "cut-laptop", time.Now(), rng)[0]
	_, err = c.push(ctx, coach, devsync.PushRequest{Device: "cut-laptop", Mutations: []devsync.Mutation{{N: 1, Op: devsync.OpUpsert, Record: ath}}})
	require.NoError(t, err)
	s := &sim{role: "staff", athlete: ath.ID, id: "cut-laptop"}
	s.backlog(today, 10, rng)
	for i := range s.muts {
		s.muts[i].N = uint64(i + 2)
	}
	body, err := json.Marshal(devsync.PushRequest{Device: "cut-laptop", Mutations: s.muts})
	require.NoError(t, err)
	stored := func() int {
		recs, _, err := c.pullAll(ctx, coach)
		require.NoError(t, err)
		return len(recs)
	}

	// Send the headers and part of the body, then hang up.
	send := func(part []byte) {
		conn, err := net.Dial("tcp", u.Host)
		require.NoError(t, err)
		defer conn.Close()
		fmt.Fprintf(conn, "POST /api/push HTTP/1.1\r\nHost: %s\r\nContent-Type: application/json\r\nContent-Length: %d\r\n\r\n", u.Host, len(body))
		conn.Write(part)
	}
	for _, cut := range []int{1, len(body) / 3, len(body) - 1} {
		send(body[:cut])
	}
	time.Sleep(100 * time.Millisecond) // let the hub notice the hang-ups
	assert.Equal(t, 1, stored(), "a cut upload applies nothing")

	// The whole body, but the device never reads the answer.
	conn, err := net.Dial("tcp", u.Host)
	require.NoError(t, err)
	fmt.Fprintf(conn, "POST /api/push HTTP/1.1\r\nHost: %s\r\nContent-Type: application/json\r\nContent-Length: %d\r\n\r\n", u.Host, len(body))
	_, err = conn.Write(body)
	require.NoError(t, err)
	conn.Close()
	require.Eventually(t, func() bool { return stored() == 1+len(s.muts) }, 10*time.Second, 20*time.Millisecond,
		"the hub commits a complete push even when the answer is never read")

	// The device resends the same batch: acknowledged, nothing applied twice.
	res, err := c.push(ctx, coach, devsync.PushRequest{Device: "cut-laptop", Mutations: s.muts})
	require.NoError(t, err)
	assert.Equal(t, s.muts[len(s.muts)-1].N, res.AckedThrough)
	assert.Zero(t, res.Applied)
	assert.Equal(t, len(s.muts), res.Duplicates)
	assert.Empty(t, res.Rejected)
	recs, _, err := c.pullAll(ctx, coach)
	require.NoError(t, err)
	want := map[string]devsync.Record{}
	for _, m := range s.muts {
		want[m.Record.ID], err = expected(m.Record)
		require.NoError(t, err)
	}
	chk := compare(recs, want, map[string]bool{"cut-laptop": true})
	assert.Equal(t, Check{Stored: len(s.muts) + 1, Unexpected: 1}, Check{Stored: chk.Stored, Missing: chk.Missing, Duplicates: chk.Duplicates, Mismatched: chk.Mismatched, Unexpected: chk.Unexpected},
		"every record once, as sent (the athlete record is the one not in this batch)")
	for id := range want {
		hist, err := h.Store.History(id)
		require.NoError(t, err)
		assert.Len(t, hist, 1, "record %s has one version", id)
	}
}
