package pwa

import (
	"context"
	"io/fs"
	"net"
	"net/http"
	"sync/atomic"
	"testing"
	"testing/fstest"
	"time"

	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
)

// A new build waits until the user taps the banner; then the page reloads
// once onto it and the old cache is gone.
func TestUpdateWaitsForTheTapThenReloadsOnce(t *testing.T) {
	v1 := load()
	// Build 2: the same tree with one file changed.
	next := fstest.MapFS{}
	base, err := withGenerated(app)
	require.NoError(t, err)
	require.NoError(t, fs.WalkDir(base, ".", func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		b, err := fs.ReadFile(base, p)
		next[p] = &fstest.MapFile{Data: b}
		return err
	}))
	next["css/app.css"] = &fstest.MapFile{Data: append(next["css/app.css"].Data, []byte("\n/* build 2 */\n")...)}
	v2, err := build(next, swTemplate)
	require.NoError(t, err)
	require.NotEqual(t, v1.hash, v2.hash)

	var cur atomic.Pointer[http.Handler]
	h1, h2 := v1.handler(), v2.handler()
	cur.Store(&h1)
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	srv := &http.Server{Handler: http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) { (*cur.Load()).ServeHTTP(w, r) })}
	go srv.Serve(ln)
	t.Cleanup(func() { srv.Close() })
	url := "http://" + ln.Addr().String()

	b := pwatest.Start(t, pwatest.Options{})
	ctx, cancel := context.WithTimeout(b.Ctx(), 120*time.Second)
	defer cancel()
	require.NoError(t, pwatest.Open(ctx, url+"/settings"))
	require.NoError(t, pwatest.WaitControlled(ctx))
	require.NoError(t, pwatest.WaitText(ctx, "settings-build", v1.hash))
	var caches []string
	require.NoError(t, pwatest.Eval(ctx, `caches.keys()`, &caches))
	require.Equal(t, []string{"shell-" + v1.hash}, caches)

	cur.Store(&h2)
	require.NoError(t, pwatest.Eval(ctx, `(async () => { window.__sameDocument = true; const r = await navigator.serviceWorker.getRegistration(); await r.update(); return true })()`, nil))
	require.NoError(t, pwatest.WaitText(ctx, "status-update", "Update ready — tap to reload"))
	// Still the old build until the tap.
	require.NoError(t, pwatest.WaitText(ctx, "settings-build", v1.hash))
	var same bool
	require.NoError(t, pwatest.Eval(ctx, `window.__sameDocument === true`, &same))
	require.True(t, same, "no reload before the tap")

	require.NoError(t, pwatest.Click(ctx, "status-update"))
	require.NoError(t, pwatest.Poll(ctx, `window.__sameDocument === undefined && document.querySelector('#app-root[data-ready="true"]')`, 10*time.Second))
	require.NoError(t, pwatest.WaitText(ctx, "settings-build", v2.hash))
	require.NoError(t, pwatest.Poll(ctx, `caches.keys().then((k) => k.length === 1 && k[0] === 'shell-`+v2.hash+`')`, 10*time.Second))
	// The new worker installs through the HTTP cache (revalidating what it
	// already has): the changed file must be the new build's, never the
	// copy the browser held from build 1.
	var css string
	require.NoError(t, pwatest.Eval(ctx, `caches.open('shell-`+v2.hash+`').then((c) => c.match('/css/app.css')).then((r) => r.text())`, &css))
	require.Contains(t, css, "/* build 2 */")
}
