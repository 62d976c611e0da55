// Package pwatest drives Cornerbook's web app in a real headless Chromium
// (Debian's /usr/bin/chromium through chromedp) for tests: start a browser
// on a fresh or given profile, open the app, log entries through its
// screens as a user would, and read the device's IndexedDB.
//
// Without a Chromium the tests skip with a message, except under CI=true,
// where a missing browser is a failure.
package pwatest

import (
	"context"
	"encoding/json"
	"flag"
	"fmt"
	"io"
	"os"
	"os/exec"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/cdproto/runtime"
	"github.com/chromedp/chromedp"
)

// screenshots is where browser tests write their pictures when asked
// (go test ./server -screenshots ../testdata/screenshots refreshes the
// committed set deliberately); by default they go to a temporary folder,
// so a test run never rewrites tracked files.
var screenshots = flag.String("screenshots", "", "folder for the browser tests' screenshots (default: a temporary folder)")

// ShotDir is the folder a test writes its screenshots to: the
// -screenshots folder (or $CORNERBOOK_SCREENSHOTS) when given, else a
// temporary folder removed after the test.
func ShotDir(t testing.TB) string {
	t.Helper()
	dir := *screenshots
	if dir == "" {
		dir = os.Getenv("CORNERBOOK_SCREENSHOTS")
	}
	if dir == "" {
		return t.TempDir()
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		t.Fatalf("screenshots folder: %v", err)
	}
	return dir
}

// DefaultExecPath is where Debian's chromium package installs the browser.
const DefaultExecPath = "/usr/bin/chromium"

// ExecPath finds the browser: $CORNERBOOK_CHROMIUM, /usr/bin/chromium, or
// chromium on $PATH.
func ExecPath() (string, bool) {
	if p := os.Getenv("CORNERBOOK_CHROMIUM"); p != "" {
		if _, err := os.Stat(p); err == nil {
			return p, true
		}
	}
	if _, err := os.Stat(DefaultExecPath); err == nil {
		return DefaultExecPath, true
	}
	if p, err := exec.LookPath("chromium"); err == nil {
		return p, true
	}
	return "", false
}

// Options configure Start.
type Options struct {
	// UserDataDir is the browser profile. Empty: a fresh temporary one.
	// Pass the same directory to two successive browsers to test that the
	// device's data survives a restart.
	UserDataDir string
	// Log receives the page's console messages and uncaught exceptions.
	Log io.Writer
	// BrowserOutput receives Chromium's own stdout and stderr.
	BrowserOutput io.Writer
	// Flags are extra command-line switches, e.g.
	// {"host-resolver-rules": "MAP camp.test 127.0.0.1"} to reach the hub
	// on loopback under a LAN-like name.
	Flags map[string]any
}

// Browser is one running Chromium.
type Browser struct {
	Dir         string
	allocCancel context.CancelFunc
	ctx         context.Context
	cancel      context.CancelFunc
	closed      bool
}

// Start launches Chromium headless, and closes it when the test ends.
func Start(t testing.TB, opt Options) *Browser {
	t.Helper()
	path, ok := ExecPath()
	if !ok {
		if os.Getenv("CI") == "true" {
			t.Fatalf("pwatest: no Chromium at %s (install Debian's chromium package)", DefaultExecPath)
		}
		t.Skipf("pwatest: no Chromium at %s; install Debian's chromium package to run the browser tests", DefaultExecPath)
	}
	dir := opt.UserDataDir
	if dir == "" {
		dir = t.TempDir()
	}
	flags := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(path),
		chromedp.UserDataDir(dir),
		chromedp.Flag("headless", true),
		chromedp.NoSandbox,
		chromedp.DisableGPU,
		chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true),
		chromedp.Flag("disable-sync", true),
		chromedp.NoFirstRun,
		chromedp.WindowSize(412, 915), // a phone-sized window
	)
	for k, v := range opt.Flags {
		flags = append(flags, chromedp.Flag(k, v))
	}
	if opt.BrowserOutput != nil {
		flags = append(flags, chromedp.CombinedOutput(opt.BrowserOutput))
	}
	allocCtx, allocCancel := chromedp.NewExecAllocator(context.Background(), flags...)
	var ctxOpts []chromedp.ContextOption
	if opt.Log != nil {
		ctxOpts = append(ctxOpts, chromedp.WithLogf(func(f string, a ...any) { fmt.Fprintf(opt.Log, f+"\n", a...) }))
	}
	if opt.Log != nil {
		ctxOpts = append(ctxOpts, chromedp.WithListener(func(ev any) {
			switch e := ev.(type) {
			case *runtime.EventConsoleAPICalled:
				var parts []string
				for _, a := range e.Args {
					parts = append(parts, string(a.Value)+a.Description)
				}
				fmt.Fprintf(opt.Log, "console.%s: %s\n", e.Type, strings.Join(parts, " "))
			case *runtime.EventExceptionThrown:
				d := e.ExceptionDetails
				desc := d.Text
				if d.Exception != nil {
					desc += " " + d.Exception.Description
				}
				fmt.Fprintf(opt.Log, "exception: %s\n", desc)
			}
		}))
	}
	ctx, cancel := chromedp.NewContext(allocCtx, ctxOpts...)
	if err := chromedp.Do(ctx); err != nil {
		cancel()
		allocCancel()
		t.Fatalf("pwatest: start chromium: %v", err)
	}
	b := &Browser{Dir: dir, allocCancel: allocCancel, ctx: ctx, cancel: cancel}
	t.Cleanup(b.Close)
	return b
}

// Ctx is the browser's first tab.
func (b *Browser) Ctx() context.Context { return b.ctx }

// NewTab opens another tab in the same browser (same profile and origin data).
func (b *Browser) NewTab() (context.Context, context.CancelFunc) {
	ctx, cancel := chromedp.NewContext(b.ctx)
	return ctx, cancel
}

// Close shuts the browser down gracefully and waits for it to exit, so the
// profile can be reopened.
func (b *Browser) Close() {
	if b.closed {
		return
	}
	b.closed = true
	_ = chromedp.Cancel(b.ctx)
	b.cancel()
	b.allocCancel()
}

// Kill ends the browser at once with SIGKILL, as a phone's battery or the
// system's memory killer would, and waits for it to exit. The profile can
// then be reopened with Start to see what survived.
func (b *Browser) Kill() error {
	if b.closed {
		return nil
	}
	c := chromedp.FromContext(b.ctx)
	if c == nil || c.Browser == nil || c.Browser.Process() == nil {
		return fmt.Errorf("pwatest: no browser process to kill")
	}
	p := c.Browser.Process()
	if err := p.Kill(); err != nil {
		return err
	}
	b.closed = true
	b.cancel()
	b.allocCancel()
	// The profile's lock goes with the process; give the OS a moment to reap children.
	time.Sleep(200 * time.Millisecond)
	return nil
}

// Eval evaluates a JavaScript expression in the page, awaiting a promise,
// and decodes its JSON-able result into out (which may be nil).
func Eval(ctx context.Context, expr string, out any) error {
	raw, err := chromedp.Run(ctx, chromedp.Evaluate[[]byte](expr, chromedp.EvalAwaitPromise))
	if err != nil {
		return fmt.Errorf("eval %.80q: %w", expr, err)
	}
	if out == nil {
		return nil
	}
	return json.Unmarshal(raw, out)
}

// Poll re-evaluates a boolean expression until it is true or the timeout
// passes. A promise is awaited: its value, not the promise, is what counts.
func Poll(ctx context.Context, expr string, timeout time.Duration) error {
	deadline := time.Now().Add(timeout)
	for {
		var ok bool
		err := Eval(ctx, "(async () => !!(await ("+expr+")))()", &ok)
		if err == nil && ok {
			return nil
		}
		if time.Now().After(deadline) {
			if err != nil {
				return fmt.Errorf("waiting for %s: %w", expr, err)
			}
			return fmt.Errorf("waiting for %s: still false after %s", expr, timeout)
		}
		select {
		case <-ctx.Done():
			return ctx.Err()
		case <-time.After(50 * time.Millisecond):
		}
	}
}

// Cached is an expression for Eval or Poll: whether the service worker's
// cache holds path.
func Cached(path string) string {
	b, _ := json.Marshal(path)
	return fmt.Sprintf(`caches.keys().then((k) => caches.open(k[0])).then((c) => c.match(%s)).then((r) => !!r)`, b)
}

// Q is a CSS selector for a data-testid.
func Q(testid string) string { return fmt.Sprintf(`[data-testid=%q]`, testid) }

// Pressed is a JavaScript expression, truthy while the toggle with this
// data-testid is pressed.
func Pressed(testid string) string {
	return fmt.Sprintf(`document.querySelector('%s[aria-pressed="true"]')`, Q(testid))
}

// Open loads the app at url (e.g. "http://127.0.0.1:8080/") and waits
// until it has rendered.
func Open(ctx context.Context, url string) error {
	if err := chromedp.Do(ctx, chromedp.Navigate(url)); err != nil {
		return fmt.Errorf("open %s: %w", url, err)
	}
	return WaitReady(ctx)
}

// WaitReady waits for the app to render after a load or reload.
func WaitReady(ctx context.Context) error {
	return Poll(ctx, `document.querySelector('#app-root[data-ready="true"] main')`, 10*time.Second)
}

// Reload reloads the page and waits for the app.
func Reload(ctx context.Context) error {
	if err := chromedp.Do(ctx, chromedp.Reload()); err != nil {
		return err
	}
	return WaitReady(ctx)
}

// WaitControlled waits until the service worker has installed its cache
// and controls the page, i.e. the app would now open offline.
func WaitControlled(ctx context.Context) error {
	return Poll(ctx, `navigator.serviceWorker && navigator.serviceWorker.controller && navigator.serviceWorker.controller.state === 'activated'`, 15*time.Second)
}

// Route moves the app to a path without reloading (as a tap on a link does).
func Route(ctx context.Context, path string) error {
	b, _ := json.Marshal(path)
	if err := Eval(ctx, fmt.Sprintf(`(() => { history.pushState(null, '', %s); dispatchEvent(new PopStateEvent('popstate')); return true })()`, b), nil); err != nil {
		return err
	}
	// Wait for the screen keyed by the whole address (path and query): a
	// new query on the same path re-mounts the screen, and a tap before
	// that lands on the old one.
	return Poll(ctx, fmt.Sprintf(`(() => { const u = new URL(%s, location.href); const e = document.querySelector('#screen');
		return !!e && e.dataset.address === (u.pathname.replace(/\/+$/, '') || '/') + u.search })()`, b), 5*time.Second)
}

// Click taps the element with a data-testid.
func Click(ctx context.Context, testid string) error {
	sel := Q(testid)
	if err := Poll(ctx, fmt.Sprintf(`document.querySelector(%q) && !document.querySelector(%q).disabled`, sel, sel), 5*time.Second); err != nil {
		return err
	}
	return chromedp.Do(ctx, chromedp.Click(chromedp.CSS(sel), chromedp.NodeVisible))
}

// ClickUntil taps the element with a data-testid until the JavaScript
// condition holds (at most tries taps, a second apart). A tap is a mouse
// event at the element's position: when the page shifts under it (a
// panel scrolling into view, a list re-rendering after a sync), it can
// land on a neighbour, as a finger would.
func ClickUntil(ctx context.Context, testid, cond string, tries int) error {
	for i := 0; i < tries; i++ {
		var ok bool
		if err := Eval(ctx, "!!("+cond+")", &ok); err != nil {
			return err
		}
		if ok {
			return nil
		}
		if err := Click(ctx, testid); err != nil {
			return err
		}
		if Poll(ctx, cond, time.Second) == nil {
			return nil
		}
	}
	return fmt.Errorf("%s: still not %s after %d taps", testid, cond, tries)
}

// Type replaces the text of the input with a data-testid, typing the new
// text as keystrokes.
func Type(ctx context.Context, testid, text string) error {
	sel := Q(testid)
	if err := Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, sel), 5*time.Second); err != nil {
		return err
	}
	if err := Eval(ctx, fmt.Sprintf(`(() => { const e = document.querySelector(%q); if (e.value !== '') { e.value = ''; e.dispatchEvent(new Event('input', { bubbles: true })); } return true })()`, sel), nil); err != nil {
		return err
	}
	return chromedp.Do(ctx, chromedp.SendKeys(chromedp.CSS(sel), text, chromedp.NodeVisible))
}

// Text returns the text of the element with a data-testid ("" if absent).
func Text(ctx context.Context, testid string) (string, error) {
	var s string
	err := Eval(ctx, fmt.Sprintf(`(document.querySelector(%q) || {}).textContent || ''`, Q(testid)), &s)
	return s, err
}

// WaitText waits until the element with a data-testid contains want.
// When it gives up, the error says what the element held instead.
func WaitText(ctx context.Context, testid, want string) error {
	err := Poll(ctx, fmt.Sprintf(`((document.querySelector(%q) || {}).textContent || '').includes(%q)`, Q(testid), want), 10*time.Second)
	if err != nil {
		var held string
		if Eval(ctx, fmt.Sprintf(`(() => { const e = document.querySelector(%q); if (e) return JSON.stringify(e.textContent); const a = [...document.querySelectorAll('[role=alert]')].map((x) => x.textContent); return 'no such element on ' + location.pathname + location.search + (a.length ? '; alerts: ' + JSON.stringify(a) : ''); })()`, Q(testid)), &held) == nil {
			return fmt.Errorf("%w; %s held %s", err, testid, held)
		}
	}
	return err
}

// SelectAthlete picks an athlete by name in the screen's athlete list.
func SelectAthlete(ctx context.Context, name string) error {
	n, _ := json.Marshal(name)
	if err := Poll(ctx, fmt.Sprintf(`[...document.querySelectorAll('[data-testid="athlete-select"] option')].some((o) => o.textContent === %s)`, n), 10*time.Second); err != nil {
		return fmt.Errorf("athlete %s not offered: %w", name, err)
	}
	return Eval(ctx, fmt.Sprintf(`(() => {
		const s = document.querySelector('[data-testid="athlete-select"]');
		const o = [...s.options].find((o) => o.textContent === %s);
		s.value = o.value;
		s.dispatchEvent(new Event('change', { bubbles: true }));
		return true })()`, n), nil)
}

// athleteID finds an athlete's id by name among elements carrying
// data-athlete-name and a data-testid prefix.
func athleteID(ctx context.Context, prefix, name string) (string, error) {
	n, _ := json.Marshal(name)
	expr := fmt.Sprintf(`(() => { const e = [...document.querySelectorAll('[data-athlete-name]')].find((e) => e.dataset.athleteName === %s && e.dataset.testid.startsWith(%q)); return e ? e.dataset.testid.slice(%d) : '' })()`, n, prefix, len(prefix))
	if err := Poll(ctx, expr, 10*time.Second); err != nil {
		return "", fmt.Errorf("athlete %s not on screen: %w", name, err)
	}
	var id string
	err := Eval(ctx, expr, &id)
	return id, err
}

const saved = "Saved on this "

// SaveAndWait taps a save button and waits for this tap's confirmation,
// which the app shows only after the IndexedDB transaction completed.
func SaveAndWait(ctx context.Context, testid string) error {
	var before int
	if err := Eval(ctx, `Number((document.querySelector('[data-testid="saved"]') || { dataset: {} }).dataset.seq || 0)`, &before); err != nil {
		return err
	}
	if err := Click(ctx, testid); err != nil {
		return err
	}
	err := Poll(ctx, fmt.Sprintf(`(() => { const e = document.querySelector('[data-testid="saved"]'); return e && Number(e.dataset.seq) > %d && e.textContent.includes(%q) })()`, before, saved), 10*time.Second)
	if err != nil {
		msg, _ := Text(ctx, "save-error")
		return fmt.Errorf("%s: not saved (%q): %w", testid, msg, err)
	}
	return nil
}

// LogCheckin logs a morning check-in with body mass through the check-in
// screen, typing the mass in the athlete's own units, and waits until the
// screen says it is saved on the device.
func LogCheckin(ctx context.Context, athleteName string, massKg float64) error {
	if err := Route(ctx, "/checkin"); err != nil {
		return err
	}
	if err := SelectAthlete(ctx, athleteName); err != nil {
		return err
	}
	var unit string
	if err := Poll(ctx, `document.querySelector('[data-testid="checkin-mass"]')`, 5*time.Second); err != nil {
		return err
	}
	if err := Eval(ctx, `document.querySelector('[data-testid="checkin-mass"]').dataset.unit`, &unit); err != nil {
		return err
	}
	v := massKg
	if unit == "lb" {
		v = massKg / 0.45359237
	}
	if err := Type(ctx, "checkin-mass", fmt.Sprintf("%.1f", v)); err != nil {
		return err
	}
	return SaveAndWait(ctx, "checkin-save")
}

// LogJumps types each athlete's attempts (cm) into the jump grid and saves.
func LogJumps(ctx context.Context, heightsCm map[string][]float64) error {
	if err := Route(ctx, "/jumps"); err != nil {
		return err
	}
	if err := Click(ctx, "jump-mode-height"); err != nil {
		return err
	}
	for name, hs := range heightsCm {
		id, err := athleteID(ctx, "jump-row-", name)
		if err != nil {
			return err
		}
		for i, h := range hs {
			if err := Type(ctx, fmt.Sprintf("jump-%s-%d", id, i), fmt.Sprintf("%g", h)); err != nil {
				return err
			}
		}
	}
	return SaveAndWait(ctx, "jumps-save")
}

// LogRound taps one finished round for the named athletes.
func LogRound(ctx context.Context, athleteNames []string, activity string, intensity int) error {
	if err := Route(ctx, "/rounds"); err != nil {
		return err
	}
	// Each tap is checked by what it changes: a tap can land on a
	// neighbour while the screen settles, as a finger's can. Every chip
	// ends pressed exactly when its athlete is named.
	want := map[string]bool{}
	for _, name := range athleteNames {
		id, err := athleteID(ctx, "round-athlete-", name)
		if err != nil {
			return err
		}
		want["round-athlete-"+id] = true
	}
	var chips []string
	if err := Eval(ctx, `[...document.querySelectorAll('[data-testid^="round-athlete-"]')].map((e) => e.dataset.testid)`, &chips); err != nil {
		return err
	}
	for _, chip := range chips {
		cond := Pressed(chip)
		if !want[chip] {
			cond = "!" + cond
		}
		if err := ClickUntil(ctx, chip, cond, 3); err != nil {
			return err
		}
	}
	var picked []string
	if err := Eval(ctx, `[...document.querySelectorAll('[data-testid^="round-athlete-"][aria-pressed="true"]')].map((e) => e.dataset.testid)`, &picked); err != nil {
		return err
	}
	ok := len(picked) == len(want)
	for _, p := range picked {
		ok = ok && want[p]
	}
	if !ok {
		return fmt.Errorf("round for %v: the chips pressed are %v", athleteNames, picked)
	}
	for _, choice := range []string{"round-activity-" + activity, fmt.Sprintf("round-intensity-%d", intensity)} {
		if err := ClickUntil(ctx, choice, Pressed(choice), 3); err != nil {
			return err
		}
	}
	return SaveAndWait(ctx, "round-done")
}

// LogSession logs a session RPE (0–10) and duration for an athlete.
func LogSession(ctx context.Context, athleteName string, rpe int, minutes int) error {
	if err := Route(ctx, "/session"); err != nil {
		return err
	}
	if err := SelectAthlete(ctx, athleteName); err != nil {
		return err
	}
	if err := Click(ctx, fmt.Sprintf("rpe-%d", rpe)); err != nil {
		return err
	}
	if err := Type(ctx, "session-minutes", fmt.Sprint(minutes)); err != nil {
		return err
	}
	return SaveAndWait(ctx, "session-save")
}

// ReadIDB returns every value of one store of the app's IndexedDB
// (records, outbox, meta, rejected), as JSON.
func ReadIDB(ctx context.Context, store string) ([]json.RawMessage, error) {
	var s string
	err := Eval(ctx, fmt.Sprintf(`(async () => {
		const db = await new Promise((ok, bad) => { const r = indexedDB.open('cornerbook'); r.onsuccess = () => ok(r.result); r.onerror = () => bad(r.error); });
		try {
			const all = await new Promise((ok, bad) => { const r = db.transaction(%q).objectStore(%q).getAll(); r.onsuccess = () => ok(r.result); r.onerror = () => bad(r.error); });
			return JSON.stringify(all);
		} finally { db.close(); }
	})()`, store, store), &s)
	if err != nil {
		return nil, err
	}
	var out []json.RawMessage
	return out, json.Unmarshal([]byte(s), &out)
}

// Meta returns one value of the meta store.
func Meta(ctx context.Context, key string, out any) error {
	var s string
	err := Eval(ctx, fmt.Sprintf(`(async () => {
		const db = await new Promise((ok, bad) => { const r = indexedDB.open('cornerbook'); r.onsuccess = () => ok(r.result); r.onerror = () => bad(r.error); });
		try {
			const v = await new Promise((ok, bad) => { const r = db.transaction('meta').objectStore('meta').get(%q); r.onsuccess = () => ok(r.result); r.onerror = () => bad(r.error); });
			return JSON.stringify(v === undefined ? null : v);
		} finally { db.close(); }
	})()`, key), &s)
	if err != nil {
		return err
	}
	return json.Unmarshal([]byte(s), out)
}

// Waiting is the number of mutations in the outbox.
func Waiting(ctx context.Context) (int, error) {
	rows, err := ReadIDB(ctx, "outbox")
	return len(rows), err
}

// Nudge asks the app to sync now, as coming back to the foreground does.
func Nudge(ctx context.Context) error {
	return Eval(ctx, `(() => { document.dispatchEvent(new Event('visibilitychange')); return true })()`, nil)
}

// WaitSynced waits until the outbox is empty and the last sync succeeded
// (the status bar says "Synced"), nudging the app while it waits.
func WaitSynced(ctx context.Context) error {
	deadline := time.Now().Add(15 * time.Second)
	next := time.Now()
	for {
		if time.Now().After(next) {
			_ = Nudge(ctx)
			next = time.Now().Add(time.Second)
		}
		n, err := Waiting(ctx)
		if err == nil && n == 0 {
			var ok bool
			if Eval(ctx, `(() => { const s = document.querySelector('[data-testid="status"]'); return !!s && s.dataset.syncing === 'false' && s.dataset.reachable === 'true' && !!document.querySelector('[data-testid="status-synced"]') })()`, &ok) == nil && ok {
				return nil
			}
		}
		if time.Now().After(deadline) {
			st, _ := Text(ctx, "status")
			return fmt.Errorf("not synced after 15 s: %d waiting; status %q (%v)", n, st, err)
		}
		time.Sleep(100 * time.Millisecond)
	}
}

// QueueUnchecked stores a record and queues it for the hub as an older
// version of the app would have, without the app's checks: the way to put
// in front of the hub an entry the app itself would refuse. rec is a JSON
// object with kind, athlete, day and body; id, device, at and stamp are
// filled in. It answers the record's id.
func QueueUnchecked(ctx context.Context, rec string) (string, error) {
	var id string
	err := Eval(ctx, `Promise.all([import('/js/db.js'), import('/js/hlc.js'), import('/js/uuid.js'), import('/js/record.js')]).then(async ([m, h, u, r]) => {
		const me = await m.deviceId();
		const db = await m.openStore();
		const tx = db.transaction(['records', 'outbox', 'meta'], 'readwrite', { durability: 'strict' });
		const meta = tx.objectStore('meta');
		const n = ((await meta.get('counter')) || 0) + 1;
		await meta.put(n, 'counter');
		const clock = new h.Clock(await meta.get('hlc'));
		const stamp = clock.now(Date.now() + ((await meta.get('offset')) || 0));
		await meta.put(clock.last, 'hlc');
		const rec = { id: u.uuidv7(), at: r.rfc3339(), device: me, stamp, ...`+rec+` };
		await tx.objectStore('records').put(rec);
		await tx.objectStore('outbox').put({ n, op: 'upsert', record: rec });
		await tx.done;
		m.notify({ type: 'changed', local: true });
		return rec.id;
	})`, &id)
	return id, err
}
