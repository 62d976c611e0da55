package server_test

import (
	"bytes"
	"context"
	"crypto/tls"
	"crypto/x509"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"sort"
	"strconv"
	"strings"
	"sync/atomic"
	"syscall"
	"testing"
	"time"

	"github.com/chromedp/cdproto/page"
	"github.com/chromedp/chromedp"
	"github.com/google/uuid"
	"github.com/klauspost/compress/gzip"
	"github.com/klauspost/compress/zstd"
	"github.com/stretchr/testify/require"
	bolt "go.etcd.io/bbolt"

	"cornerbook/pwa/pwatest"
	"cornerbook/server"
	"cornerbook/server/certs"
	"cornerbook/server/demo"
	"cornerbook/server/shapedlink"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// The shaped-link benchmarks put a crowded travel router (1.5 Mbit/s down,
// 750 kbit/s up, 150 ms round trip: shapedlink.TravelRouter) between a
// device and the hub's HTTPS, and measure each case with compression on
// and off in the same run:
//
//	go test ./server -run '^$' -bench ShapedLink -benchtime 3x
//
// ShapedLinkSeasonSync: a new device's first full sync of a season's camp
// (demo.Season: 8 fighters × 12 weeks, every kind, ~7,900 records), pulled
// the way the app pulls (pages sized in bytes for the link), decoded.
// ShapedLinkFirstLoad: a fresh Chromium profile opens the app; time to
// the first screen (interactive), to the service worker ready, and the
// bytes the hub sent. ShapedLinkSeasonInBrowser: the same first sync done
// by the app in Chromium, records in IndexedDB. ShapedLinkSaveToBoard: a
// phone on the shaped link saves; the coach's board on the laptop shows it.

// shapedHub is a hub served on the camp's HTTPS (HTTP/2) by its own
// http.Server, so that a switch can turn compression off for a baseline
// (the Accept-Encoding of each request is dropped), and on plain HTTP on
// loopback for the laptop's own screen.
type shapedHub struct {
	srv      *server.Server
	db       *storage.DB
	bundle   *certs.Bundle
	tlsAddr  string
	plain    *httptest.Server
	compress atomic.Bool
	records  int
}

func newShapedHub(b *testing.B, season bool) *shapedHub {
	b.Helper()
	dir := b.TempDir()
	bundle, err := certs.Ensure(filepath.Join(dir, "tls"), certs.Names{Host: "camp-laptop", DNS: []string{"camp.local"}}, time.Now())
	require.NoError(b, err)
	db, err := server.OpenStore(filepath.Join(dir, "hub.db"), nil)
	require.NoError(b, err)
	h := &shapedHub{db: db, bundle: bundle}
	h.compress.Store(true)
	if season {
		recs := demo.Season(time.Now())
		n := uint64(0)
		for start := 0; start < len(recs); start += devsync.MaxMutationsPerPush {
			req := devsync.PushRequest{Device: demo.SeedDevice}
			for _, r := range recs[start:min(start+devsync.MaxMutationsPerPush, len(recs))] {
				n++
				req.Mutations = append(req.Mutations, devsync.Mutation{N: n, Op: devsync.OpUpsert, Record: r})
			}
			res, err := db.Push(req, nil)
			require.NoError(b, err)
			require.Empty(b, res.Rejected)
			h.records += res.Applied
		}
	}
	h.srv, err = server.New(server.Config{Store: db})
	require.NoError(b, err)
	handler := h.srv.Handler()
	switched := http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if !h.compress.Load() {
			r.Header.Del("Accept-Encoding")
		}
		handler.ServeHTTP(w, r)
	})
	raw, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(b, err)
	cfg := bundle.TLSConfig()
	cfg.NextProtos = []string{"h2", "http/1.1"}
	hs := &http.Server{Handler: switched, ReadHeaderTimeout: 10 * time.Second}
	go hs.Serve(tls.NewListener(raw, cfg))
	h.tlsAddr = raw.Addr().String()
	h.plain = httptest.NewServer(switched)
	b.Cleanup(func() { h.plain.Close(); hs.Close(); h.srv.Close(); db.Close() })
	return h
}

// link puts a fresh travel router in front of the hub's HTTPS.
func (h *shapedHub) link(b *testing.B) *shapedlink.Proxy {
	p, err := shapedlink.Listen(h.tlsAddr, shapedlink.TravelRouter)
	require.NoError(b, err)
	b.Cleanup(func() { p.Close() })
	return p
}

// nextPullBytes is the app's page-sizing rule (pwa/js/sync.js).
func nextPullBytes(bytes int, took time.Duration) int {
	ms := max(float64(took.Milliseconds()), 50)
	scaled := float64(bytes) * 2000 / ms
	return int(min(float64(4<<20), float64(bytes)*4, max(float64(64<<10), scaled)))
}

// syncOver pulls the whole camp through the proxy as the app does, over a
// new TLS connection, offering accept as Accept-Encoding; it returns the
// records and the pages.
func syncOver(b *testing.B, h *shapedHub, p *shapedlink.Proxy, accept string) (int, int) {
	roots := x509.NewCertPool()
	roots.AddCert(h.bundle.CA())
	tr := &http.Transport{TLSClientConfig: &tls.Config{RootCAs: roots, ServerName: "camp.local"}, ForceAttemptHTTP2: true, DisableCompression: true,
		DialContext: func(ctx context.Context, _, _ string) (net.Conn, error) {
			return (&net.Dialer{}).DialContext(ctx, "tcp", p.Addr())
		}}
	defer tr.CloseIdleConnections()
	client := &http.Client{Transport: tr, Timeout: time.Minute}
	since, size, recs, pages := uint64(0), 512<<10, 0, 0
	for {
		t0 := time.Now()
		req, _ := http.NewRequest(http.MethodGet, "https://camp.local/api/pull?since="+strconv.FormatUint(since, 10)+"&limit=10000&bytes="+strconv.Itoa(size), nil)
		req.Header.Set("Accept-Encoding", accept)
		resp, err := client.Do(req)
		require.NoError(b, err)
		require.Equal(b, 2, resp.ProtoMajor, "HTTP/2 over the camp's HTTPS")
		var body io.Reader = resp.Body
		switch resp.Header.Get("Content-Encoding") {
		case "gzip":
			zr, err := gzip.NewReader(resp.Body)
			require.NoError(b, err)
			body = zr
		case "zstd":
			zr, err := zstd.NewReader(resp.Body)
			require.NoError(b, err)
			defer zr.Close()
			body = zr
		}
		var page devsync.PullResponse
		require.NoError(b, json.NewDecoder(body).Decode(&page))
		resp.Body.Close()
		size = nextPullBytes(size, time.Since(t0))
		recs += len(page.Records)
		pages++
		since = page.Next
		if !page.More {
			return recs, pages
		}
	}
}

// BenchmarkShapedLinkSeasonSync: see the top of the file. Each iteration
// syncs three new devices one after the other: Chromium (zstd), Safari
// (gzip) and a hub with compression off.
func BenchmarkShapedLinkSeasonSync(b *testing.B) {
	h := newShapedHub(b, true)
	cases := []struct{ name, accept string }{{"zstd", "gzip, deflate, br, zstd"}, {"gzip", "gzip, deflate, br"}, {"identity", ""}}
	secs := map[string]time.Duration{}
	down := map[string]int64{}
	pages := map[string]int{}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for _, c := range cases {
			h.compress.Store(c.accept != "")
			p := h.link(b)
			t0 := time.Now()
			n, pg := syncOver(b, h, p, c.accept)
			secs[c.name] += time.Since(t0)
			require.Equal(b, h.records, n, "every record once")
			down[c.name] += p.BytesDown()
			pages[c.name] += pg
			p.Close()
		}
	}
	b.StopTimer()
	per := func(d time.Duration) float64 { return d.Seconds() / float64(b.N) }
	b.ReportMetric(float64(h.records), "records")
	for _, c := range cases {
		b.ReportMetric(per(secs[c.name]), c.name+"-s")
		b.ReportMetric(float64(down[c.name])/float64(b.N)/1024, c.name+"-KB")
		b.ReportMetric(float64(pages[c.name])/float64(b.N), c.name+"-pages")
	}
	b.ReportMetric(float64(down["identity"])/float64(down["zstd"]), "identity/zstd-bytes")
	b.ReportMetric(float64(down["identity"])/float64(down["gzip"]), "identity/gzip-bytes")
	b.ReportMetric(secs["identity"].Seconds()/secs["zstd"].Seconds(), "identity/zstd-time")
}

// shapedBrowser is a fresh Chromium profile that reaches camp.local
// through the proxy and trusts the camp authority, with a record of when
// the app became ready and every sync milestone from the first instant.
func shapedBrowser(b *testing.B, h *shapedHub, p *shapedlink.Proxy) (*pwatest.Browser, context.Context) {
	br := pwatest.Start(b, pwatest.Options{Flags: map[string]any{
		"host-resolver-rules":                 "MAP camp.local 127.0.0.1",
		"ignore-certificate-errors-spki-list": h.bundle.SPKIHash(),
	}})
	ctx, cancel := context.WithTimeout(br.Ctx(), 3*time.Minute)
	b.Cleanup(cancel)
	_, err := chromedp.Call(ctx, page.AddScriptToEvaluateOnNewDocument, page.AddScriptToEvaluateOnNewDocumentParams{Source: `
		globalThis.__cbTrace = [];
		new MutationObserver(() => {
			const r = document.getElementById('app-root');
			if (r && r.dataset.ready === 'true' && document.querySelector('#screen > *') && !window.__readyAt) window.__readyAt = performance.now();
		}).observe(document, { subtree: true, attributes: true, childList: true });`})
	require.NoError(b, err)
	return br, ctx
}

func proxyURL(p *shapedlink.Proxy, path string) string {
	_, port, _ := net.SplitHostPort(p.Addr())
	return "https://camp.local:" + port + path
}

// waitQuiet waits until nothing has crossed the link for quiet.
func waitQuiet(p *shapedlink.Proxy, quiet time.Duration) {
	last, since := p.BytesDown()+p.BytesUp(), time.Now()
	for time.Since(since) < quiet {
		time.Sleep(50 * time.Millisecond)
		if n := p.BytesDown() + p.BytesUp(); n != last {
			last, since = n, time.Now()
		}
	}
}

// BenchmarkShapedLinkFirstLoad: a fresh profile opens the app on an empty
// camp, compression on and then off in each iteration. ready-ms is from
// the navigation's start to the first screen drawn with the app ready for
// a tap; KB is everything the hub sent (page, service worker, first sync,
// TLS), counted at the link once the worker is active and the link quiet.
func BenchmarkShapedLinkFirstLoad(b *testing.B) {
	h := newShapedHub(b, false)
	sums := map[string][3]float64{}
	conns := map[string]int64{}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for _, on := range []bool{true, false} {
			name := map[bool]string{true: "compressed", false: "identity"}[on]
			h.compress.Store(on)
			p := h.link(b)
			_, ctx := shapedBrowser(b, h, p)
			t0 := time.Now()
			require.NoError(b, pwatest.Open(ctx, proxyURL(p, "/")))
			require.NoError(b, pwatest.WaitControlled(ctx))
			swReady := time.Since(t0)
			var readyAt float64
			require.NoError(b, pwatest.Eval(ctx, `window.__readyAt`, &readyAt))
			if os.Getenv("SHAPED_TRACE") != "" {
				var timeline []string
				pwatest.Eval(ctx, `(() => { const n = performance.getEntriesByType('navigation')[0]; return [['nav', 0, n.responseEnd|0, n.nextHopProtocol].join(' '), ...performance.getEntriesByType('resource').map((e) => [e.name.replace(location.origin, ''), e.startTime|0, e.responseEnd|0, e.nextHopProtocol, e.transferSize].join(' '))] })()`, &timeline)
				b.Logf("%s ready at %.0f ms:\n%s", name, readyAt, strings.Join(timeline, "\n"))
			}
			waitQuiet(p, time.Second)
			s := sums[name]
			s[0] += readyAt
			s[1] += float64(swReady.Milliseconds())
			s[2] += float64(p.BytesDown()) / 1024
			sums[name] = s
			conns[name] += p.Connections()
			p.Close()
		}
	}
	b.StopTimer()
	n := float64(b.N)
	for _, name := range []string{"compressed", "identity"} {
		s := sums[name]
		b.ReportMetric(s[0]/n, name+"-ready-ms")
		b.ReportMetric(s[1]/n, name+"-sw-ms")
		b.ReportMetric(s[2]/n, name+"-KB")
		b.ReportMetric(float64(conns[name])/n, name+"-conns")
	}
	b.ReportMetric(sums["identity"][2]/sums["compressed"][2], "identity/compressed-bytes")
}

// BenchmarkShapedLinkSeasonInBrowser: the app itself in a fresh profile
// opens on the season's camp and pulls it all into IndexedDB over the
// shaped link, compression on and then off. synced-s is from the
// navigation's start to the last page applied in IndexedDB; pull-s from
// the first pull sent to the last page applied.
func BenchmarkShapedLinkSeasonInBrowser(b *testing.B) {
	h := newShapedHub(b, true)
	sums := map[string][3]float64{}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for _, on := range []bool{true, false} {
			name := map[bool]string{true: "compressed", false: "identity"}[on]
			h.compress.Store(on)
			p := h.link(b)
			_, ctx := shapedBrowser(b, h, p)
			require.NoError(b, pwatest.Open(ctx, proxyURL(p, "/")))
			require.NoError(b, pwatest.Poll(ctx, `await import('/js/db.js').then((m) => m.getMeta('cursor')).then((c) => c === `+strconv.Itoa(h.records)+`)`, 2*time.Minute))
			var tr struct {
				First, Last, Origin float64
				Trace               [][]any
			}
			require.NoError(b, pwatest.Eval(ctx, `(() => { const t = globalThis.__cbTrace || []; const f = t.find(([w]) => w === 'pull-sent'); const l = t.filter(([w]) => w === 'page-applied').pop();
				return { First: f ? f[1] : 0, Last: l ? l[1] : 0, Origin: performance.timeOrigin, Trace: t } })()`, &tr))
			require.NotZero(b, tr.Last, "the app's sync milestones: %v", tr.Trace)
			if os.Getenv("SHAPED_TRACE") != "" {
				var steps []string
				for _, e := range tr.Trace {
					steps = append(steps, fmt.Sprintf("%v +%.0f", e[0], e[1].(float64)-tr.Origin))
				}
				b.Logf("%s: %s", name, strings.Join(steps, ", "))
			}
			s := sums[name]
			s[0] += (tr.Last - tr.Origin) / 1000
			s[1] += (tr.Last - tr.First) / 1000
			s[2] += float64(p.BytesDown()) / 1024
			sums[name] = s
			p.Close()
		}
	}
	b.StopTimer()
	n := float64(b.N)
	b.ReportMetric(float64(h.records), "records")
	for _, name := range []string{"compressed", "identity"} {
		s := sums[name]
		b.ReportMetric(s[0]/n, name+"-synced-s")
		b.ReportMetric(s[1]/n, name+"-pull-s")
		b.ReportMetric(s[2]/n, name+"-KB")
	}
	b.ReportMetric(sums["identity"][2]/sums["compressed"][2], "identity/compressed-bytes")
}

// BenchmarkShapedLinkSaveToBoard: a phone on the shaped link saves a round
// (IndexedDB commit included); the coach's board on the laptop's own
// browser (loopback) shows it on Today after the poke and its pull. The
// baseline, in the same run and alternating save by save, is the same
// phone's browser reaching the hub on loopback. Reports p50 and p95 in ms
// over b.N saves of each.
func BenchmarkShapedLinkSaveToBoard(b *testing.B) {
	h := newShapedHub(b, false)
	p := h.link(b)
	e2e := &e2eHub{t: b, db: h.db, srv: h.srv, addr: h.plain.Listener.Addr().String()}
	ids := e2e.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	br, phone := shapedBrowser(b, h, p)
	local, closeLocal := br.NewTab()
	defer closeLocal()
	_, board, _ := e2eBrowser(b, "")
	require.NoError(b, pwatest.Open(phone, proxyURL(p, "/")))
	require.NoError(b, pwatest.WaitControlled(phone))
	require.NoError(b, pwatest.Open(local, e2e.url("/")))
	require.NoError(b, pwatest.Open(board, e2e.url("/today")))
	for _, ctx := range []context.Context{phone, local, board} {
		require.NoError(b, pwatest.WaitSynced(ctx))
	}
	require.NoError(b, pwatest.Eval(board, `(() => {
		window.__seen = {};
		const mark = () => document.querySelectorAll('[data-testid^="entry-"]').forEach((e) => {
			const id = e.dataset.testid.slice(6);
			if (!(id in window.__seen)) window.__seen[id] = Date.now();
		});
		new MutationObserver(mark).observe(document.body, { childList: true, subtree: true });
		mark();
		return true })()`, nil))
	lat := map[string][]float64{}
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		for _, dev := range []struct {
			name string
			ctx  context.Context
		}{{"shaped", phone}, {"loopback", local}} {
			var r struct {
				ID string
				T  float64
			}
			if os.Getenv("E2E_TRACE") != "" {
				require.NoError(b, pwatest.Eval(dev.ctx, `(() => { globalThis.__cbTrace = []; return true })()`, nil))
			}
			require.NoError(b, pwatest.Eval(dev.ctx, `import('/js/db.js').then((m) => { const t = Date.now(); return m.save({ kind: 'round', athlete: '`+ids["Ana Pereira"]+`', day: (new Date()).toLocaleDateString('sv'), body: { activity: 'pads', seconds: 180, intensity: 2 } }).then((rec) => ({ ID: rec.id, T: t })) })`, &r))
			require.NoError(b, pwatest.Poll(board, `window.__seen['`+r.ID+`'] !== undefined`, 10*time.Second))
			var seen float64
			require.NoError(b, pwatest.Eval(board, `window.__seen['`+r.ID+`']`, &seen))
			lat[dev.name] = append(lat[dev.name], seen-r.T)
			if os.Getenv("E2E_TRACE") != "" {
				var tr [][]any
				require.NoError(b, pwatest.Eval(dev.ctx, `globalThis.__cbTrace.splice(0)`, &tr))
				line := fmt.Sprintf("%s save→board %.0f ms:", dev.name, seen-r.T)
				for _, e := range tr {
					line += fmt.Sprintf(" %v+%.0f", e[0], e[1].(float64)-r.T)
				}
				b.Log(line)
			}
		}
	}
	b.StopTimer()
	q := func(name string, p float64) float64 {
		l := lat[name]
		sort.Float64s(l)
		return l[min(len(l)-1, int(p*float64(len(l))))]
	}
	for _, name := range []string{"shaped", "loopback"} {
		b.ReportMetric(q(name, 0.50), name+"-p50-ms")
		b.ReportMetric(q(name, 0.95), name+"-p95-ms")
	}
	b.ReportMetric(q("shaped", 0.95)/q("loopback", 0.95), "shaped/loopback-p95")
}

// BenchmarkPullPageCPUVsPushFsync: the hub's work for one compressed pull
// page against a push of 100 check-ins, both through the real handler on
// the season's camp, in the same run; and raw bbolt committing 100 records
// (its two fsyncs) as the floor of any push. The page's cost is measured
// as CPU time (the process's user and system time across the request) as
// well as wall time: on a busy machine the wall time is mostly waiting.
//
//	go test ./server -run '^$' -bench PullPageCPUVsPushFsync -benchtime 200x
func BenchmarkPullPageCPUVsPushFsync(b *testing.B) {
	h := newShapedHub(b, true)
	handler := h.srv.Handler()
	raw, err := bolt.Open(filepath.Join(b.TempDir(), "raw.db"), 0o600, &bolt.Options{Timeout: time.Second})
	require.NoError(b, err)
	defer raw.Close()
	var athlete string
	var maxSeq uint64
	require.NoError(b, h.db.Kind("athlete", func(r devsync.Record) error { athlete = r.ID; return nil }))
	maxSeq, err = h.db.MaxSeq()
	require.NoError(b, err)
	day := time.Date(2001, 1, 1, 7, 0, 0, 0, time.UTC)
	var tPull, cPull, tPush, tRaw time.Duration
	var pullBytes int
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		// One page as the app's first (512 KB of records), zstd.
		since := uint64(i*97) % (maxSeq / 2)
		req := httptest.NewRequest(http.MethodGet, "/api/pull?since="+strconv.FormatUint(since, 10)+"&limit=10000&bytes=524288", nil)
		req.Header.Set("Accept-Encoding", "gzip, deflate, br, zstd")
		rec := httptest.NewRecorder()
		c0 := cpuTime()
		t0 := time.Now()
		handler.ServeHTTP(rec, req)
		tPull += time.Since(t0)
		cPull += cpuTime() - c0
		require.Equal(b, 200, rec.Code)
		require.Equal(b, "zstd", rec.Header().Get("Content-Encoding"))
		pullBytes += rec.Body.Len()

		// A push of 100 check-ins, 100 days of one athlete.
		push := devsync.PushRequest{Device: "bench-phone"}
		keys, vals := make([][]byte, 0, 100), make([][]byte, 0, 100)
		for j := 0; j < 100; j++ {
			d := day.AddDate(0, 0, i*100+j)
			id, _ := uuid.NewV7()
			body, _ := json.Marshal(map[string]any{"mass_kg": 70.4, "sleep_h": 7.5, "sleep": 4, "fatigue": 3, "soreness": 3, "stress": 4, "mood": 4})
			r := devsync.Record{ID: id.String(), Kind: "checkin", Athlete: athlete, Day: d.Format(time.DateOnly), At: d.Format(time.RFC3339),
				Device: "bench-phone", Stamp: devsync.HLC{L: time.Now().UnixMilli() - 3_600_000 + int64(i*100+j)}, Body: body}
			push.Mutations = append(push.Mutations, devsync.Mutation{N: uint64(i*100 + j + 1), Op: devsync.OpUpsert, Record: r})
			v, _ := json.Marshal(r)
			keys, vals = append(keys, []byte(r.ID)), append(vals, v)
		}
		payload, _ := json.Marshal(push)
		preq := httptest.NewRequest(http.MethodPost, "/api/push", bytes.NewReader(payload))
		prec := httptest.NewRecorder()
		t1 := time.Now()
		handler.ServeHTTP(prec, preq)
		tPush += time.Since(t1)
		require.Equal(b, 200, prec.Code, prec.Body.String())

		t2 := time.Now()
		require.NoError(b, raw.Update(func(tx *bolt.Tx) error {
			bk, err := tx.CreateBucketIfNotExists([]byte("r"))
			if err != nil {
				return err
			}
			for k := range keys {
				if err := bk.Put(keys[k], vals[k]); err != nil {
					return err
				}
			}
			return nil
		}))
		tRaw += time.Since(t2)
	}
	b.StopTimer()
	n := float64(b.N)
	b.ReportMetric(tPull.Seconds()*1000/n, "pull-page-ms")
	b.ReportMetric(cPull.Seconds()*1000/n, "pull-page-cpu-ms")
	b.ReportMetric(cPull.Seconds()/tRaw.Seconds(), "pull-cpu/raw-commit")
	b.ReportMetric(cPull.Seconds()/tPush.Seconds(), "pull-cpu/push")
	b.ReportMetric(float64(pullBytes)/n/1024, "pull-page-KB-sent")
	b.ReportMetric(tPush.Seconds()*1000/n, "push100-ms")
	b.ReportMetric(tRaw.Seconds()*1000/n, "raw-commit100-ms")
	b.ReportMetric(tPull.Seconds()/tPush.Seconds(), "pull/push")
	b.ReportMetric(tPull.Seconds()/tRaw.Seconds(), "pull/raw-commit")
}

// cpuTime is the CPU time the process has used so far.
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}
