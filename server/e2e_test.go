// End-to-end tests: the real hub (bbolt file, HTTP server on loopback)
// and the real app in headless Chromium, driven through its screens with
// pwa/pwatest. They skip without a Chromium, except under CI=true.
package server_test

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"net"
	"net/http"
	"os"
	"path/filepath"
	"sort"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/google/uuid"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server"
	"cornerbook/server/auth"
	"cornerbook/server/demo"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// e2eLog collects the page's console for a failing test.
type e2eLog struct {
	mu sync.Mutex
	b  bytes.Buffer
}

func (l *e2eLog) Write(p []byte) (int, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.Write(p)
}

func (l *e2eLog) String() string {
	l.mu.Lock()
	defer l.mu.Unlock()
	return l.b.String()
}

// e2eBrowser starts Chromium on a profile ("" for a fresh one) and returns
// its first tab with a time limit.
func e2eBrowser(t testing.TB, dir string) (*pwatest.Browser, context.Context, *e2eLog) {
	t.Helper()
	log := &e2eLog{}
	b := pwatest.Start(t, pwatest.Options{UserDataDir: dir, Log: log})
	t.Cleanup(func() {
		if t.Failed() {
			t.Logf("page console:\n%s", log.String())
		}
	})
	ctx, cancel := context.WithTimeout(b.Ctx(), 120*time.Second)
	t.Cleanup(cancel)
	return b, ctx, log
}

// e2eHub is the real hub on a real bbolt file on loopback.
type e2eHub struct {
	t    testing.TB
	db   *storage.DB
	srv  *server.Server
	addr string
}

func startE2EHub(t testing.TB, addr, dbPath string) *e2eHub {
	t.Helper()
	db, err := server.OpenStore(dbPath, nil)
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db})
	require.NoError(t, err)
	var lerr error
	for i := 0; i < 100; i++ { // the same port again after a stop
		if lerr = srv.Open(addr); lerr == nil {
			break
		}
		time.Sleep(20 * time.Millisecond)
	}
	require.NoError(t, lerr)
	h := &e2eHub{t: t, db: db, srv: srv, addr: srv.Addr()}
	t.Cleanup(h.stop)
	return h
}

// startDemoHub is the real hub on a bbolt file in a temp dir holding the
// demo camp that ends on demoToday, on 127.0.0.1.
func startDemoHub(t testing.TB, loc *time.Location) *e2eHub {
	t.Helper()
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "hub.db"), nil)
	require.NoError(t, err)
	n, err := demo.SeedIfEmpty(db, demoToday)
	require.NoError(t, err)
	require.Greater(t, n, 1000)
	srv, err := server.New(server.Config{Store: db, Location: loc})
	require.NoError(t, err)
	require.NoError(t, srv.Open("127.0.0.1:0"))
	h := &e2eHub{t: t, db: db, srv: srv, addr: srv.Addr()}
	t.Cleanup(h.stop)
	return h
}

// startPairingHub is the real hub with device pairing (a cheap bcrypt cost
// for speed) on a temp bbolt file, on 127.0.0.1.
func startPairingHub(t testing.TB) (*e2eHub, *auth.Store) {
	t.Helper()
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "hub.db"), nil)
	require.NoError(t, err)
	accounts, err := auth.Open(db.Bolt(), auth.Options{BcryptCost: 4})
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Auth: accounts})
	require.NoError(t, err)
	require.NoError(t, srv.Open("127.0.0.1:0"))
	h := &e2eHub{t: t, db: db, srv: srv, addr: srv.Addr()}
	t.Cleanup(h.stop)
	return h, accounts
}

func (h *e2eHub) stop() {
	if h.srv == nil {
		return
	}
	h.srv.Close()
	require.NoError(h.t, h.db.Check())
	h.db.Close()
	h.srv = nil
}

func (h *e2eHub) url(p string) string { return "http://" + h.addr + p }

// pushAthletes creates athletes as the coach's laptop would.
func (h *e2eHub) pushAthletes(names map[string]string) map[string]string {
	return h.pushAthletesAs(names, nil)
}

// pushAthletesAs creates athletes with given ids where known (a hub
// restored from a backup holds the same athletes).
func (h *e2eHub) pushAthletesAs(names, known map[string]string) map[string]string {
	ids := map[string]string{}
	var ms []devsync.Mutation
	n := uint64(0)
	for name, units := range names {
		u, _ := uuid.NewV7()
		id := u.String()
		if known[name] != "" {
			id = known[name]
		}
		ids[name] = id
		body, _ := json.Marshal(map[string]any{"name": name, "units": units})
		now := time.Now()
		n++
		ms = append(ms, devsync.Mutation{N: n, Op: devsync.OpUpsert, Record: devsync.Record{ID: id, Kind: "athlete", Athlete: id,
			At: now.Format(time.RFC3339), Device: "coach-laptop", Stamp: devsync.HLC{L: now.UnixMilli()}, Body: body}})
	}
	b, _ := json.Marshal(devsync.PushRequest{Device: "coach-laptop", Mutations: ms})
	res, err := http.Post(h.url("/api/push"), "application/json", bytes.NewReader(b))
	require.NoError(h.t, err)
	defer res.Body.Close()
	var pr devsync.PushResponse
	require.NoError(h.t, json.NewDecoder(res.Body).Decode(&pr))
	require.Equal(h.t, http.StatusOK, res.StatusCode)
	require.Empty(h.t, pr.Rejected)
	return ids
}

// all returns every record the hub holds, by kind.
func (h *e2eHub) all() map[string][]devsync.Record {
	out := map[string][]devsync.Record{}
	since := uint64(0)
	for {
		res, err := http.Get(h.url(fmt.Sprintf("/api/pull?since=%d&limit=2000", since)))
		require.NoError(h.t, err)
		var p devsync.PullResponse
		require.NoError(h.t, json.NewDecoder(res.Body).Decode(&p))
		res.Body.Close()
		for _, r := range p.Records {
			out[r.Kind] = append(out[r.Kind], r)
		}
		if !p.More {
			return out
		}
		since = p.Next
	}
}

// anaOnAFreshPhone is the real hub with one athlete, Ana Pereira, and a
// fresh browser profile that has opened the app and finished its first
// sync.
func anaOnAFreshPhone(t *testing.T) (*e2eHub, map[string]string, context.Context) {
	t.Helper()
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(ctx))
	return h, ids, ctx
}

func TestE2ELogThroughTheScreensLandsOnTheHub(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg", "Beto Lindqvist": "lb"})
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(ctx))

	require.NoError(t, pwatest.LogCheckin(ctx, "Ana Pereira", 64.2))
	require.NoError(t, pwatest.LogJumps(ctx, map[string][]float64{"Ana Pereira": {30.1, 31.4, 29.9}, "Beto Lindqvist": {40, 41.5}}))
	require.NoError(t, pwatest.LogRound(ctx, []string{"Beto Lindqvist"}, "spar", 3))
	require.NoError(t, pwatest.LogRound(ctx, []string{"Beto Lindqvist"}, "spar", 2))
	require.NoError(t, pwatest.WaitSynced(ctx))

	all := h.all()
	kinds := []string{}
	for k := range all {
		kinds = append(kinds, k)
	}
	assert.ElementsMatch(t, []string{"athlete", "checkin", "jump", "round"}, kinds, "nothing else was written")
	require.Len(t, all["checkin"], 1)
	assert.InDelta(t, 64.2, e2eBody(t, all["checkin"][0])["mass_kg"], 1e-9)
	require.Len(t, all["jump"], 2)
	require.Len(t, all["round"], 2)
	for _, r := range all["round"] {
		assert.Equal(t, ids["Beto Lindqvist"], r.Athlete)
	}
	// The hub's derived fields come back to the phone.
	require.NoError(t, pwatest.Poll(ctx, `import('/js/db.js').then((m) => m.byKind('jump')).then((js) => js.length === 2 && js.every((j) => j.body.best_cm > 0))`, 10*time.Second))
	require.NoError(t, pwatest.WaitText(ctx, "status-synced", "Synced"))
}

// A save made while a pull waits on a slow link goes to the hub at once,
// beside the pull, instead of queueing behind it; when the pull ends,
// nothing is lost or sent twice.
func TestE2ESaveDuringASlowPullIsPushedAtOnce(t *testing.T) {
	h, ids, ctx := anaOnAFreshPhone(t)

	// Every pull from here on waits until the test lets it through.
	require.NoError(t, pwatest.Eval(ctx, `(() => {
		window.__cbTrace = [];
		const real = window.fetch.bind(window);
		window.__pullGate = new Promise((r) => { window.__openPulls = r; });
		window.fetch = (url, opt) => String(url).includes('/api/pull') ? window.__pullGate.then(() => real(url, opt)) : real(url, opt);
		return true })()`, nil))
	require.NoError(t, pwatest.Eval(ctx, `import('/js/sync.js').then((m) => { m.requestSync('manual'); return true })`, nil))
	require.NoError(t, pwatest.Poll(ctx, `window.__cbTrace.some(([w]) => w === 'pull-sent')`, 10*time.Second))

	var id string
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.save({ kind: 'round', athlete: '`+ids["Ana Pereira"]+`', day: (new Date()).toLocaleDateString('sv'), body: { activity: 'pads', seconds: 180, intensity: 2 } })).then((r) => r.id)`, &id))
	deadline := time.Now().Add(10 * time.Second)
	var err error
	for time.Now().Before(deadline) {
		if _, err = h.db.Get(id); err == nil {
			break
		}
		time.Sleep(20 * time.Millisecond)
	}
	require.NoError(t, err, "the save reached the hub while the pull was still waiting")
	var answered bool
	require.NoError(t, pwatest.Eval(ctx, `window.__cbTrace.some(([w]) => w === 'pull-answered')`, &answered))
	assert.False(t, answered, "the pull had not ended when the save landed")

	require.NoError(t, pwatest.Eval(ctx, `(() => { window.__openPulls(); return true })()`, nil))
	require.NoError(t, pwatest.WaitSynced(ctx))
	rounds := h.all()["round"]
	require.Len(t, rounds, 1, "on the hub once")
	assert.Equal(t, id, rounds[0].ID)
	require.NoError(t, pwatest.Poll(ctx, `import('/js/db.js').then((m) => m.getRecord('`+id+`')).then((r) => !!r && r.body.activity === 'pads')`, 5*time.Second))
	waiting, err := pwatest.Waiting(ctx)
	require.NoError(t, err)
	assert.Zero(t, waiting, "nothing left waiting")
}

// A phone joined as staff keeps the coach's screens (camp set-up among
// them) for offline use from the moment it joins, not from its next start.
func TestE2EStaffDeviceKeepsCoachScreensOnceJoined(t *testing.T) {
	h, accounts := startPairingHub(t)
	join, err := accounts.NewJoin(auth.RoleStaff, "", "coach", time.Now())
	require.NoError(t, err)
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitControlled(ctx))
	var has bool
	require.NoError(t, pwatest.Eval(ctx, pwatest.Cached("/js/camp.js"), &has))
	require.False(t, has, "camp set-up is not part of a phone's install")

	// Within the page, as from Settings: the page has long started and
	// read this device's role (none yet) by now.
	require.NoError(t, pwatest.Route(ctx, "/join?code="+auth.FormatCode(join.Code)))
	require.NoError(t, pwatest.Type(ctx, "join-name", "Ringside phone"))
	require.NoError(t, pwatest.Click(ctx, "join-submit"))
	require.NoError(t, pwatest.WaitText(ctx, "join-done", "joined"))
	for _, p := range []string{"/js/camp.js", "/js/coach/plan.js", "/js/coach/sheet.js"} {
		require.NoError(t, pwatest.Poll(ctx, pwatest.Cached(p), 10*time.Second), "%s kept after joining as staff", p)
	}
}

func e2eBody(t *testing.T, r devsync.Record) map[string]any {
	var m map[string]any
	require.NoError(t, json.Unmarshal(r.Body, &m))
	return m
}

func TestE2EOfflineRelaunchThenSyncExactlyOnce(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	dir := t.TempDir()
	b, ctx, _ := e2eBrowser(t, dir)
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitControlled(ctx))
	require.NoError(t, pwatest.WaitSynced(ctx))

	h.srv.SetDown(true)
	require.NoError(t, pwatest.Reload(ctx))
	require.NoError(t, pwatest.LogCheckin(ctx, "Ana Pereira", 64.2))
	require.NoError(t, pwatest.LogSession(ctx, "Ana Pereira", 5, 50))
	require.NoError(t, pwatest.LogRound(ctx, []string{"Ana Pereira"}, "pads", 2))
	require.NoError(t, pwatest.WaitText(ctx, "status-unreachable", "Hub unreachable"))
	b.Close()

	_, ctx2, _ := e2eBrowser(t, dir)
	require.NoError(t, pwatest.Open(ctx2, h.url("/")))
	n, err := pwatest.Waiting(ctx2)
	require.NoError(t, err)
	require.Equal(t, 3, n)
	require.NoError(t, pwatest.WaitText(ctx2, "status-waiting", "3 entries waiting to sync"))

	h.srv.SetDown(false)
	require.NoError(t, pwatest.WaitSynced(ctx2))
	all := h.all()
	for _, k := range []string{"checkin", "session", "round"} {
		assert.Len(t, all[k], 1, k)
	}
	for _, r := range append(append(all["checkin"], all["session"]...), all["round"]...) {
		vs, err := h.db.History(r.ID)
		require.NoError(t, err)
		assert.Len(t, vs, 1, "stored exactly once: %s", r.Kind)
	}
}

func TestE2ESecondDeviceSeesTheEntryWithoutReload(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	_, a, _ := e2eBrowser(t, "")
	_, bctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(a, h.url("/")))
	require.NoError(t, pwatest.Open(bctx, h.url("/today")))
	require.NoError(t, pwatest.WaitSynced(a))
	require.NoError(t, pwatest.WaitSynced(bctx))
	require.NoError(t, pwatest.Eval(bctx, `(() => { window.__same = true; return true })()`, nil))

	t0 := time.Now()
	require.NoError(t, pwatest.LogRound(a, []string{"Ana Pereira"}, "spar", 3))
	require.NoError(t, pwatest.WaitText(bctx, "today-athlete-"+ids["Ana Pereira"], "sparring, hard, 3 min"))
	t.Logf("save on A → on B's screen: %s", time.Since(t0))
	var same bool
	require.NoError(t, pwatest.Eval(bctx, `window.__same === true`, &same))
	assert.True(t, same, "B did not reload")
}

func TestE2EClockSkewRestampsAndRejectionsAreShown(t *testing.T) {
	h, ids, ctx := anaOnAFreshPhone(t)

	// A stale clock offset puts this phone's stamps two hours ahead of the
	// hub: the hub refuses the push with CLOCK_SKEW, the phone takes the
	// hub's time, re-stamps what waits and sends it again.
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.setMeta('offset', 2 * 3600 * 1000)).then(() => true)`, nil))
	require.NoError(t, pwatest.LogSession(ctx, "Ana Pereira", 3, 30))
	require.NoError(t, pwatest.WaitSynced(ctx))
	s := h.all()["session"]
	require.Len(t, s, 1)
	assert.InDelta(t, time.Now().UnixMilli(), s[0].Stamp.L, 10_000, "re-stamped with the hub's time")
	at, err := time.Parse(time.RFC3339, s[0].At)
	require.NoError(t, err)
	assert.WithinDuration(t, time.Now(), at, 10*time.Second, "its time was corrected too")
	var offset float64
	require.NoError(t, pwatest.Meta(ctx, "offset", &offset))
	assert.InDelta(t, 0, offset, 2000)

	// Entries the hub refuses (here queued as an older app would have,
	// past the app's own checks) are kept, shown with field and reason,
	// and stay until corrected or discarded.
	day := time.Now().Format("2006-01-02")
	for i := 0; i < 2; i++ {
		_, err := pwatest.QueueUnchecked(ctx, `{ kind: 'checkin', athlete: '`+ids["Ana Pereira"]+`', day: '`+day+`', body: { mass_kg: 300 } }`)
		require.NoError(t, err)
	}
	require.NoError(t, pwatest.WaitText(ctx, "status-rejected", "2 entries rejected — tap to see why"))
	require.NoError(t, pwatest.Click(ctx, "status-rejected"))
	raw, err := pwatest.ReadIDB(ctx, "rejected")
	require.NoError(t, err)
	require.Len(t, raw, 2)
	type rejected struct {
		N                       int
		ID, Code, Field, Reason string
	}
	var rows []rejected
	for _, r := range raw {
		var x rejected
		require.NoError(t, json.Unmarshal(r, &x))
		rows = append(rows, x)
		assert.Equal(t, "VALIDATION", x.Code)
		assert.Equal(t, "body.mass_kg", x.Field)
		require.NoError(t, pwatest.WaitText(ctx, fmt.Sprintf("rejected-%d", x.N), x.Reason))
	}
	assert.Empty(t, h.all()["checkin"])

	// Correct the first on its screen: the new version is accepted.
	require.NoError(t, pwatest.Click(ctx, fmt.Sprintf("rejected-edit-%d", rows[0].N)))
	require.NoError(t, pwatest.WaitText(ctx, "editing", "Correcting"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="checkin-mass"]').value === '300.0'`, 5*time.Second), "the form shows the refused value")
	require.NoError(t, pwatest.Type(ctx, "checkin-mass", "64.5"))
	require.NoError(t, pwatest.SaveAndWait(ctx, "checkin-save"))
	// Discard the second.
	require.NoError(t, pwatest.Route(ctx, "/settings"))
	require.NoError(t, pwatest.Click(ctx, fmt.Sprintf("rejected-discard-%d", rows[1].N)))
	require.NoError(t, pwatest.Poll(ctx, `!document.querySelector('[data-testid="status-rejected"]')`, 5*time.Second))
	require.NoError(t, pwatest.WaitSynced(ctx))
	c := h.all()["checkin"]
	require.Len(t, c, 1)
	assert.Equal(t, rows[0].ID, c[0].ID)
	assert.InDelta(t, 64.5, e2eBody(t, c[0])["mass_kg"], 1e-9)
	var left []json.RawMessage
	left, err = pwatest.ReadIDB(ctx, "records")
	require.NoError(t, err)
	for _, r := range left {
		assert.NotContains(t, string(r), rows[1].ID, "the discarded entry is gone from the phone")
	}
}

func TestE2EReplacedHubGetsThisDevicesEntriesAgain(t *testing.T) {
	h, ids, ctx := anaOnAFreshPhone(t)
	require.NoError(t, pwatest.LogCheckin(ctx, "Ana Pereira", 64.2))
	require.NoError(t, pwatest.WaitSynced(ctx))
	var epoch1 string
	require.NoError(t, pwatest.Meta(ctx, "epoch", &epoch1))

	// The laptop is replaced: a new database (a new epoch) on the same
	// address, holding the camp's athletes but not this phone's entries,
	// as after restoring an older backup.
	addr := h.addr
	h.stop()
	h2 := startE2EHub(t, addr, filepath.Join(t.TempDir(), "new.db"))
	h2.pushAthletesAs(map[string]string{"Ana Pereira": "kg"}, ids)
	require.NoError(t, pwatest.Nudge(ctx))
	require.NoError(t, pwatest.Poll(ctx, `import('/js/db.js').then((m) => m.getMeta('epoch')).then((e) => e && e !== '`+epoch1+`')`, 15*time.Second))
	require.NoError(t, pwatest.WaitSynced(ctx))
	rej, err := pwatest.ReadIDB(ctx, "rejected")
	require.NoError(t, err)
	assert.Empty(t, rej, "the new hub accepted the re-sent entries")
	assert.Len(t, h2.all()["checkin"], 1, "this device's check-in is on the new hub")
}

func TestE2EBackgroundSyncPushesWithNoPageOpen(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitControlled(ctx))
	require.NoError(t, pwatest.WaitSynced(ctx))

	// A same-origin page that runs no sync loop writes an entry through
	// the app's store: only the service worker can push it.
	require.NoError(t, chromedp.Do(ctx, chromedp.Navigate(h.url("/css/app.css"))))
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.save({ kind: 'session', athlete: '`+ids["Ana Pereira"]+`', day: '2026-12-01', body: { type: 'strength', minutes: 40, rpe: 5 } })).then(() => true)`, nil))
	time.Sleep(300 * time.Millisecond)
	require.Empty(t, h.all()["session"], "nothing pushed it yet")

	require.NoError(t, pwatest.DispatchBackgroundSync(ctx, h.url("")))
	deadline := time.Now().Add(10 * time.Second)
	for len(h.all()["session"]) == 0 && time.Now().Before(deadline) {
		time.Sleep(100 * time.Millisecond)
	}
	require.Len(t, h.all()["session"], 1, "the service worker pushed the outbox")
	n, err := pwatest.Waiting(ctx)
	require.NoError(t, err)
	assert.Equal(t, 0, n, "acknowledged rows left the outbox")
}

func TestE2EJoinWithACodeKeepsEntriesMadeBefore(t *testing.T) {
	h, accounts := startPairingHub(t) // the test itself talks to the hub as the laptop
	srv := h.srv
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	join, err := accounts.NewJoin(auth.RoleAthlete, ids["Ana Pereira"], "coach", time.Now())
	require.NoError(t, err)

	// The phone reaches the hub by a LAN name, not as the laptop.
	_, port, _ := net.SplitHostPort(srv.Addr())
	log := &e2eLog{}
	b := pwatest.Start(t, pwatest.Options{Log: log, Flags: map[string]any{"host-resolver-rules": "MAP camp.test 127.0.0.1"}})
	ctx, cancel := context.WithTimeout(b.Ctx(), 120*time.Second)
	defer cancel()
	base := "http://camp.test:" + port
	require.NoError(t, pwatest.Open(ctx, base+"/"))
	require.NoError(t, pwatest.WaitText(ctx, "status-insecure", "Open the https address"))

	// Before joining: an entry is saved on the phone; the hub refuses to take it.
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.save({ kind: 'session', athlete: '`+ids["Ana Pereira"]+`', day: '2026-12-01', body: { type: 'boxing', minutes: 60, rpe: 6 } })).then(() => true)`, nil))
	require.NoError(t, pwatest.WaitText(ctx, "status-error", "not paired"))
	require.NoError(t, pwatest.WaitText(ctx, "status-waiting", "1 entry waiting"))

	require.NoError(t, pwatest.Open(ctx, base+"/join?code="+auth.FormatCode(join.Code)))
	require.NoError(t, pwatest.Type(ctx, "join-name", "Ana's phone"))
	require.NoError(t, pwatest.Click(ctx, "join-submit"))
	require.NoError(t, pwatest.WaitText(ctx, "join-done", "joined"))
	require.NoError(t, pwatest.Click(ctx, "join-continue"))
	require.NoError(t, pwatest.WaitSynced(ctx))

	var device string
	require.NoError(t, pwatest.Meta(ctx, "deviceId", &device))
	devs, err := accounts.Devices()
	require.NoError(t, err)
	require.Len(t, devs, 1)
	assert.Equal(t, devs[0].ID, device, "the phone uses the id the hub issued")
	s := h.all()["session"]
	require.Len(t, s, 1, "the entry made before joining arrived")
	assert.Equal(t, device, s[0].Device)

	// The paired phone's websocket carries pokes: an entry the coach adds
	// for Ana appears on it without a reload or a timer.
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="status"]').dataset.syncing === 'false'`, 5*time.Second))
	time.Sleep(500 * time.Millisecond) // let any sync in flight finish
	require.NoError(t, pwatest.Eval(ctx, `(() => { window.__cbTrace = []; return true })()`, nil))
	u, _ := uuid.NewV7()
	now := time.Now()
	body, _ := json.Marshal(map[string]any{"type": "strength", "minutes": 45, "rpe": 5})
	req, _ := json.Marshal(devsync.PushRequest{Device: "coach-laptop", Mutations: []devsync.Mutation{{N: 50, Op: devsync.OpUpsert, Record: devsync.Record{
		ID: u.String(), Kind: "session", Athlete: ids["Ana Pereira"], Day: now.Format("2006-01-02"), At: now.Format(time.RFC3339),
		Device: "coach-laptop", Stamp: devsync.HLC{L: now.UnixMilli()}, Body: body}}}})
	res, err := http.Post(h.url("/api/push"), "application/json", bytes.NewReader(req))
	require.NoError(t, err)
	res.Body.Close()
	require.Equal(t, http.StatusOK, res.StatusCode)
	require.NoError(t, pwatest.Poll(ctx, `import('/js/db.js').then((m) => m.getRecord('`+u.String()+`')).then((r) => !!r)`, 5*time.Second), "poked and pulled")
	// A sync already under way may pull the entry first; the poke for it
	// must still arrive and ask for a sync.
	assert.NoError(t, pwatest.Poll(ctx, `window.__cbTrace.some(([w]) => w === 'request:poke' || w === 'request:ws-hello')`, 5*time.Second), "the websocket asked for a sync")
	if t.Failed() {
		t.Log(log.String())
	}
}

// BenchmarkE2ESaveToScreen measures save-to-screen: from the moment device
// A starts saving a round (IndexedDB commit included) to the moment it is
// on device B's Today screen (push, poke, pull, render), both read off the
// same machine clock inside the pages. Reports p50 and p95 in ms.
//
//	go test ./server/ -run '^$' -bench E2ESaveToScreen -benchtime 30x
func BenchmarkE2ESaveToScreen(b *testing.B) {
	h := startE2EHub(b, "127.0.0.1:0", filepath.Join(b.TempDir(), "hub.db"))
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	_, a, _ := e2eBrowser(b, "")
	_, bctx, _ := e2eBrowser(b, "")
	require.NoError(b, pwatest.Open(a, h.url("/")))
	require.NoError(b, pwatest.Open(bctx, h.url("/today")))
	require.NoError(b, pwatest.WaitSynced(a))
	require.NoError(b, pwatest.WaitSynced(bctx))
	require.NoError(b, pwatest.Eval(bctx, `(() => {
		window.__seen = {};
		const mark = () => document.querySelectorAll('[data-testid^="entry-"]').forEach((e) => {
			const id = e.dataset.testid.slice(6);
			if (!(id in window.__seen)) window.__seen[id] = Date.now();
		});
		new MutationObserver(mark).observe(document.body, { childList: true, subtree: true });
		mark();
		return true })()`, nil))
	var lat []float64
	if os.Getenv("E2E_TRACE") != "" {
		require.NoError(b, pwatest.Eval(a, `(() => { window.__cbTrace = []; return true })()`, nil))
		require.NoError(b, pwatest.Eval(bctx, `(() => { window.__cbTrace = []; return true })()`, nil))
	}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		var r struct {
			ID string
			T  float64
		}
		require.NoError(b, pwatest.Eval(a, `import('/js/db.js').then((m) => { const t = Date.now(); return m.save({ kind: 'round', athlete: '`+ids["Ana Pereira"]+`', day: (new Date()).toLocaleDateString('sv'), body: { activity: 'pads', seconds: 180, intensity: 2 } }).then((rec) => ({ ID: rec.id, T: t })) })`, &r))
		require.NoError(b, pwatest.Poll(bctx, `window.__seen['`+r.ID+`'] !== undefined`, 10*time.Second))
		var seen float64
		require.NoError(b, pwatest.Eval(bctx, `window.__seen['`+r.ID+`']`, &seen))
		lat = append(lat, seen-r.T)
		if os.Getenv("E2E_TRACE") != "" {
			var ta, tb [][2]any
			pwatest.Eval(a, `window.__cbTrace.splice(0)`, &ta)
			pwatest.Eval(bctx, `window.__cbTrace.splice(0)`, &tb)
			b.Logf("t0=%.0f seen=+%.0f\nA %v\nB %v", r.T, seen-r.T, ta, tb)
		}
	}
	b.StopTimer()
	sort.Float64s(lat)
	q := func(p float64) float64 { return lat[min(len(lat)-1, int(p*float64(len(lat))))] }
	b.ReportMetric(q(0.50), "p50-ms")
	b.ReportMetric(q(0.95), "p95-ms")
}

// A device joining a camp with a backlog pulls it page by page (pages
// sized in bytes), each page with its cursor in one transaction, the next
// page asked for while one is written.
func TestE2EFirstSyncPullsABacklogInPages(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	const total = 1200
	n := uint64(100)
	start := time.Now().AddDate(0, 0, -60)
	for sent := 0; sent < total; {
		var ms []devsync.Mutation
		for ; sent < total && len(ms) < devsync.MaxMutationsPerPush; sent++ {
			u, _ := uuid.NewV7()
			at := start.Add(time.Duration(sent) * time.Minute)
			body, _ := json.Marshal(map[string]any{"type": "boxing", "minutes": 30 + sent%60, "rpe": 1 + sent%9})
			n++
			ms = append(ms, devsync.Mutation{N: n, Op: devsync.OpUpsert, Record: devsync.Record{ID: u.String(), Kind: "session", Athlete: ids["Ana Pereira"],
				Day: at.Format("2006-01-02"), At: at.Format(time.RFC3339), Device: "coach-laptop", Stamp: devsync.HLC{L: at.UnixMilli()}, Body: body}})
		}
		b, _ := json.Marshal(devsync.PushRequest{Device: "coach-laptop", Mutations: ms})
		res, err := http.Post(h.url("/api/push"), "application/json", bytes.NewReader(b))
		require.NoError(t, err)
		var pr devsync.PushResponse
		require.NoError(t, json.NewDecoder(res.Body).Decode(&pr))
		res.Body.Close()
		require.Empty(t, pr.Rejected)
	}

	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(ctx))
	recs, err := pwatest.ReadIDB(ctx, "records")
	require.NoError(t, err)
	assert.Len(t, recs, total+1, "every session and the athlete, once each")
	var cursor float64
	require.NoError(t, pwatest.Meta(ctx, "cursor", &cursor))
	res, err := http.Get(h.url("/api/status"))
	require.NoError(t, err)
	var st struct{ MaxSeq float64 }
	require.NoError(t, json.NewDecoder(res.Body).Decode(&st))
	res.Body.Close()
	assert.Equal(t, st.MaxSeq, cursor, "the cursor reached the hub's last sequence")
}
