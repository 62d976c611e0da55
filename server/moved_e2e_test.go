package server_test

import (
	"context"
	"io"
	"net"
	"net/http"
	"path/filepath"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server"
	"cornerbook/server/auth"
	"cornerbook/server/certs"
	devsync "cornerbook/sync"
)

// TestE2EPhoneFollowsTheCampName: a phone pairs with the hub by the name
// the hub announces (Chromium maps the name to 127.0.0.1, as a phone's
// multicast DNS lookup would to the laptop), logs an entry; the camp
// moves — the hub now answers at another address (127.0.0.2), same name
// — and the same phone, reopened, is still paired and syncs a new entry,
// without joining again.
func TestE2EPhoneFollowsTheCampName(t *testing.T) {
	const name = "cornerbook-coach.local"
	dir := t.TempDir()
	bundle, err := certs.Ensure(filepath.Join(dir, "tls"), certs.Names{Host: "coach", DNS: []string{name}}, time.Now())
	require.NoError(t, err)
	db, err := server.OpenStore(filepath.Join(dir, "hub.db"), nil)
	require.NoError(t, err)
	t.Cleanup(func() { db.Check(); db.Close() })
	accounts, err := auth.Open(db.Bolt(), auth.Options{BcryptCost: 4})
	require.NoError(t, err)
	serve := func(ip string, port string) *server.Server {
		ln, err := net.Listen("tcp", net.JoinHostPort(ip, port))
		require.NoError(t, err)
		_, port, _ = net.SplitHostPort(ln.Addr().String())
		srv, err := server.New(server.Config{Store: db, Auth: accounts, Certs: bundle, AppURL: "https://" + net.JoinHostPort(name, port) + "/"})
		require.NoError(t, err)
		require.NoError(t, srv.Serve(ln))
		return srv
	}
	first := serve("127.0.0.1", "0")
	_, port, _ := net.SplitHostPort(first.Addr())
	athlete := pushAthleteDirect(t, db, "Rosa Quintero")
	join, err := accounts.NewJoin(auth.RoleAthlete, athlete, "coach", time.Now())
	require.NoError(t, err)
	profile := t.TempDir()
	phone := func(ip string) (context.Context, func()) {
		b := pwatest.Start(t, pwatest.Options{UserDataDir: profile, Flags: map[string]any{
			"host-resolver-rules":                 "MAP " + name + " " + ip,
			"ignore-certificate-errors-spki-list": bundle.SPKIHash(),
		}})
		ctx, cancel := context.WithTimeout(b.Ctx(), 60*time.Second)
		return ctx, func() { cancel(); b.Close() }
	}
	entries := func(kind string) (n int, devices map[string]bool) {
		devices = map[string]bool{}
		db.Kind(kind, func(r devsync.Record) error {
			if r.Athlete == athlete {
				n++
				devices[r.Device] = true
			}
			return nil
		})
		return n, devices
	}

	// The join page, reached by the laptop's address as a phone on the
	// Wi-Fi does, sends the phone to the app at the name.
	bootLn, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	require.NoError(t, first.ServeBootstrap(bootLn))
	req, _ := http.NewRequest("GET", "http://"+bootLn.Addr().String()+"/join?code="+auth.FormatCode(join.Code), nil)
	req.Host = "192.0.2.10:8080"
	res, err := http.DefaultTransport.RoundTrip(req)
	require.NoError(t, err)
	res.Body.Close()
	appURL := res.Header.Get("Location")
	require.Equal(t, "https://"+net.JoinHostPort(name, port)+"/join?code="+auth.FormatCode(join.Code), appURL, "the join page sends phones to the name")
	req, _ = http.NewRequest("GET", "http://"+bootLn.Addr().String()+"/trust", nil)
	req.Host = "192.0.2.10:8080"
	res, err = http.DefaultTransport.RoundTrip(req)
	require.NoError(t, err)
	page, _ := io.ReadAll(res.Body)
	res.Body.Close()
	assert.Contains(t, string(page), "https://192.0.2.10:"+port+"/", "the address is offered as a fallback")

	ctx, done := phone("127.0.0.1")
	require.NoError(t, pwatest.Open(ctx, appURL))
	require.NoError(t, pwatest.Type(ctx, "join-name", "Rosa's phone"))
	require.NoError(t, pwatest.Click(ctx, "join-submit"))
	require.NoError(t, pwatest.WaitText(ctx, "join-done", "joined"))
	require.NoError(t, pwatest.Click(ctx, "join-continue"))
	require.NoError(t, pwatest.LogCheckin(ctx, "Rosa Quintero", 58.4))
	require.NoError(t, pwatest.WaitSynced(ctx))
	done()
	n, devs := entries("checkin")
	require.Equal(t, 1, n)

	// The camp moves: another address, the same name and port.
	require.NoError(t, first.Close())
	second := serve("127.0.0.2", port)
	defer second.Close()
	ctx, done = phone("127.0.0.2")
	defer done()
	require.NoError(t, pwatest.Open(ctx, "https://"+net.JoinHostPort(name, port)+"/"))
	require.NoError(t, pwatest.LogSession(ctx, "Rosa Quintero", 6, 45))
	require.NoError(t, pwatest.WaitSynced(ctx))
	n, devs2 := entries("session")
	assert.Equal(t, 1, n, "the session logged after the move reached the hub")
	assert.Equal(t, devs, devs2, "from the same paired device, not a new one")
	list, err := accounts.Devices()
	require.NoError(t, err)
	assert.Len(t, list, 1, "the phone did not join again")
}

// TestE2ELongUnreachableSaysTheHubMayHaveMoved: after ten minutes
// without the hub, the status says the camp may have moved and what to
// do, naming the address this app was opened at; once the hub answers,
// the words go.
func TestE2ELongUnreachableSaysTheHubMayHaveMoved(t *testing.T) {
	h := startDemoHub(t, time.UTC)
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(ctx))
	h.srv.SetDown(true)
	require.NoError(t, pwatest.Eval(ctx, `import('/js/sync.js').then((m) => { m.syncSoon(); return true })`, nil))
	require.NoError(t, pwatest.WaitText(ctx, "status-unreachable", "Hub unreachable"))
	assert.NoError(t, pwatest.Poll(ctx, `!document.querySelector('[data-testid="status-moved"]')`, time.Second), "not after a moment")
	// Ten minutes and more pass without an answer.
	require.NoError(t, pwatest.Eval(ctx, `import('/js/sync.js').then((m) => { m.status.unreachableSince = Date.now() - 11 * 60000; m.syncSoon(); return true })`, nil))
	require.NoError(t, pwatest.WaitText(ctx, "status-moved", "the hub may have a new address"))
	require.NoError(t, pwatest.WaitText(ctx, "status-moved", "No answer from the hub for 11 min"))
	require.NoError(t, pwatest.WaitText(ctx, "status-moved", "127.0.0.1"))
	h.srv.SetDown(false)
	require.NoError(t, pwatest.Eval(ctx, `import('/js/sync.js').then((m) => { m.syncSoon(); return true })`, nil))
	require.NoError(t, pwatest.WaitSynced(ctx))
	require.NoError(t, pwatest.Poll(ctx, `!document.querySelector('[data-testid="status-moved"]')`, 10*time.Second))
}
