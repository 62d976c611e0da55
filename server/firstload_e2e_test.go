package server_test

import (
	"context"
	"fmt"
	"net"
	"path/filepath"
	"sort"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	"github.com/chromedp/cdproto/network"
	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server"
	"cornerbook/server/certs"
)

// FirstLoadBudget is what a phone may download to open the app the first
// time, page and service worker together (ENGINEERING.md: ≤ 130 KB on
// the wire).
const FirstLoadBudget = 130 * 1024

// countingListener counts the bytes the hub sends and receives on every
// connection, TLS records included: what crosses the Wi-Fi. Down closes
// every connection and refuses new ones without a byte, as a hub that is
// out of reach.
type countingListener struct {
	net.Listener
	sent, received atomic.Int64
	down           atomic.Bool
	mu             sync.Mutex
	conns          map[net.Conn]bool
}

func newCountingListener(ln net.Listener) *countingListener {
	return &countingListener{Listener: ln, conns: map[net.Conn]bool{}}
}

func (l *countingListener) Accept() (net.Conn, error) {
	for {
		c, err := l.Listener.Accept()
		if err != nil {
			return nil, err
		}
		if l.down.Load() {
			c.Close()
			continue
		}
		cc := &countingConn{Conn: c, l: l}
		l.mu.Lock()
		l.conns[cc] = true
		l.mu.Unlock()
		return cc, nil
	}
}

func (l *countingListener) setDown(down bool) {
	l.down.Store(down)
	if down {
		l.mu.Lock()
		var open []net.Conn
		for c := range l.conns {
			open = append(open, c)
		}
		l.mu.Unlock()
		for _, c := range open {
			c.Close()
		}
	}
}

func (l *countingListener) reset() { l.sent.Store(0); l.received.Store(0) }

type countingConn struct {
	net.Conn
	l *countingListener
}

func (c *countingConn) Read(p []byte) (int, error) {
	n, err := c.Conn.Read(p)
	c.l.received.Add(int64(n))
	return n, err
}

func (c *countingConn) Write(p []byte) (int, error) {
	n, err := c.Conn.Write(p)
	c.l.sent.Add(int64(n))
	return n, err
}

func (c *countingConn) Close() error {
	c.l.mu.Lock()
	delete(c.l.conns, c)
	c.l.mu.Unlock()
	return c.Conn.Close()
}

// pageNetwork sums what the page's own requests cost on the wire
// (Chrome DevTools protocol: Network.loadingFinished encodedDataLength)
// and notes each response's protocol and whether the service worker
// answered it.
type pageNetwork struct {
	mu        sync.Mutex
	bytes     int64
	fromSW    int
	fromNet   int
	protocols map[string]int
	urls      map[network.RequestID]string
	perURL    map[string]int64
}

func watchNetwork(ctx context.Context) (*pageNetwork, error) {
	n := &pageNetwork{protocols: map[string]int{}, urls: map[network.RequestID]string{}, perURL: map[string]int64{}}
	err := chromedp.Listen(ctx, func(ev any) {
		n.mu.Lock()
		defer n.mu.Unlock()
		switch e := ev.(type) {
		case *network.EventResponseReceived:
			n.urls[e.RequestID] = e.Response.URL
			if e.Response.FromServiceWorker {
				n.fromSW++
			} else {
				n.fromNet++
				n.protocols[e.Response.Protocol]++
			}
		case *network.EventLoadingFinished:
			n.bytes += int64(e.EncodedDataLength)
			n.perURL[n.urls[e.RequestID]] += int64(e.EncodedDataLength)
		}
	})
	if err != nil {
		return nil, err
	}
	_, err = chromedp.Call(ctx, network.Enable, network.EnableParams{})
	return n, err
}

func (n *pageNetwork) take() (bytes int64, fromNet, fromSW int, protocols map[string]int, top string) {
	n.mu.Lock()
	defer n.mu.Unlock()
	type kv struct {
		u string
		b int64
	}
	var all []kv
	for u, b := range n.perURL {
		all = append(all, kv{u, b})
	}
	sort.Slice(all, func(i, j int) bool { return all[i].b > all[j].b })
	var lines []string
	for _, x := range all {
		lines = append(lines, fmt.Sprintf("%7d %s", x.b, x.u))
	}
	bytes, fromNet, fromSW, protocols = n.bytes, n.fromNet, n.fromSW, n.protocols
	n.bytes, n.fromNet, n.fromSW, n.protocols, n.perURL = 0, 0, 0, map[string]int{}, map[string]int64{}
	return bytes, fromNet, fromSW, protocols, strings.Join(lines, "\n")
}

// settle waits until the hub has sent nothing for quiet, then returns
// what it sent in all.
func (l *countingListener) settle(ctx context.Context, quiet time.Duration) int64 {
	last, since := l.sent.Load(), time.Now()
	for time.Since(since) < quiet && ctx.Err() == nil {
		time.Sleep(50 * time.Millisecond)
		if n := l.sent.Load(); n != last {
			last, since = n, time.Now()
		}
	}
	return last
}

// campHTTPS is a hub on the camp's HTTPS with its own certificate, behind
// a counting listener, and a Chromium that trusts the camp authority.
func campHTTPS(t *testing.T) (*countingListener, string, map[string]any) {
	dir := t.TempDir()
	bundle, err := certs.Ensure(filepath.Join(dir, "tls"), certs.Names{Host: "camp-laptop", DNS: []string{"camp.local"}}, time.Now())
	require.NoError(t, err)
	db, err := server.OpenStore(filepath.Join(dir, "hub.db"), nil)
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Certs: bundle})
	require.NoError(t, err)
	raw, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	ln := newCountingListener(raw)
	require.NoError(t, srv.Serve(ln))
	t.Cleanup(func() { srv.Close(); db.Close() })
	_, port, _ := net.SplitHostPort(raw.Addr().String())
	return ln, "https://camp.local:" + port, map[string]any{
		"host-resolver-rules":                 "MAP camp.local 127.0.0.1",
		"ignore-certificate-errors-spki-list": bundle.SPKIHash(),
	}
}

// TestE2EFirstLoadFitsTheBudgetAndOfflineReloadIsFree: a phone with a
// fresh profile opens the app once over the camp's HTTPS; the service
// worker installs and becomes ready. Everything the hub sent for it —
// page, service worker and the first sync, TLS included — stays within
// the first-load budget: the worker installs the shell from what the
// page already downloaded rather than a second time, and leaves the
// chart library and the large icons for when they are asked for. The
// page's own requests all went over HTTP/2. Then, with the hub out of
// reach, a reload renders the app and costs 0 bytes.
func TestE2EFirstLoadFitsTheBudgetAndOfflineReloadIsFree(t *testing.T) {
	ln, base, flags := campHTTPS(t)
	log := &e2eLog{}
	b := pwatest.Start(t, pwatest.Options{Log: log, Flags: flags})
	ctx, cancel := context.WithTimeout(b.Ctx(), 90*time.Second)
	defer cancel()
	net, err := watchNetwork(ctx)
	require.NoError(t, err)

	require.NoError(t, pwatest.Open(ctx, base+"/"))
	require.NoError(t, pwatest.WaitControlled(ctx), "the service worker becomes ready and controls the page")
	require.NoError(t, pwatest.Poll(ctx, `navigator.serviceWorker.ready.then((r) => !!r.active)`, 10*time.Second))
	sent := ln.settle(ctx, 1500*time.Millisecond)
	pageBytes, fromNet, _, protocols, top := net.take()
	t.Logf("first load: hub sent %.1f KB (received %.1f KB); the page's own requests %.1f KB over %d responses %v\n%s",
		float64(sent)/1024, float64(ln.received.Load())/1024, float64(pageBytes)/1024, fromNet, protocols, top)
	assert.LessOrEqual(t, sent, int64(FirstLoadBudget), "bytes on the wire for the first load, page and service worker")
	assert.LessOrEqual(t, pageBytes, sent, "the page's share is part of what the hub sent")
	assert.Equal(t, fromNet, protocols["h2"], "every response over HTTP/2: %v", protocols)
	var cached int
	require.NoError(t, pwatest.Eval(ctx, `caches.keys().then((k) => caches.open(k[0])).then((c) => c.keys()).then((r) => r.length)`, &cached))
	assert.Greater(t, cached, 20, "the worker holds the shell")
	var coachCached bool
	require.NoError(t, pwatest.Eval(ctx, pwatest.Cached("/js/coach/review.js"), &coachCached))
	assert.False(t, coachCached, "a phone that never opens the coach's screens never downloads them")

	// Offline: the hub is out of reach; the reload renders from the
	// worker's cache and costs nothing.
	ln.setDown(true)
	ln.reset()
	require.NoError(t, pwatest.Reload(ctx))
	require.NoError(t, pwatest.WaitText(ctx, "nav-home", "Cornerbook"))
	time.Sleep(500 * time.Millisecond)
	offBytes, offNet, offSW, _, offTop := net.take()
	assert.Zero(t, ln.sent.Load(), "the hub sent nothing")
	assert.Zero(t, offBytes, "an offline reload costs 0 bytes; from the network:\n%s", offTop)
	assert.Positive(t, offSW, "the worker answered the reload")
	t.Logf("offline reload: %d responses from the service worker, %d attempts at the network, %d bytes", offSW, offNet, offBytes)
	if t.Failed() {
		t.Log(log.String())
	}
}

// The coach's screens are lazy on the wire as on screen: the first one a
// coach's device opens, with the hub at hand, brings the others; then,
// with the hub out of reach, every coach screen still opens from the
// service worker.
func TestE2ECoachScreensStayOfflineOnceOneOpens(t *testing.T) {
	h := startCoachHub(t)
	ctx := coachBrowser(t, h, "/review")
	require.NoError(t, pwatest.WaitControlled(ctx))
	for _, m := range []string{"review", "athlete", "plan", "sheet"} {
		require.NoError(t, pwatest.Poll(ctx, pwatest.Cached("/js/coach/"+m+".js"), 15*time.Second), m)
	}
	h.srv.SetDown(true)
	defer h.srv.SetDown(false)
	require.NoError(t, pwatest.Reload(ctx))
	for _, screen := range []string{"athlete", "plan"} {
		require.NoError(t, pwatest.Route(ctx, "/"+screen))
		require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="screen-`+screen+`"]')`, 10*time.Second), "the %s screen opens offline", screen)
	}
}
