package server_test

import (
	"context"
	"encoding/json"
	"net"
	"path/filepath"
	"testing"
	"time"

	"github.com/google/uuid"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server"
	"cornerbook/server/auth"
	"cornerbook/server/certs"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// TestE2EHTTPSTrustOnlyTheCampAuthority: over real HTTPS with the camp's
// certificate, a Chromium that trusts only the camp authority (pinned by
// its public key, as an installed root would be) loads the app, registers
// the service worker, joins with a code and syncs an entry. A Chromium
// that does not trust the authority (the phone that skipped the trust
// step) cannot load the app, so no service worker can ever register; the
// join page on plain HTTP is where such a phone is sent instead.
func TestE2EHTTPSTrustOnlyTheCampAuthority(t *testing.T) {
	dir := t.TempDir()
	bundle, err := certs.Ensure(filepath.Join(dir, "tls"), certs.Names{Host: "camp-laptop", DNS: []string{"camp.local"}}, time.Now())
	require.NoError(t, err)
	db, err := server.OpenStore(filepath.Join(dir, "hub.db"), nil)
	require.NoError(t, err)
	accounts, err := auth.Open(db.Bolt(), auth.Options{BcryptCost: 4})
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Auth: accounts, Certs: bundle})
	require.NoError(t, err)
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	require.NoError(t, srv.Serve(ln))
	t.Cleanup(func() { srv.Close(); db.Check(); db.Close() })
	_, port, _ := net.SplitHostPort(ln.Addr().String())
	base := "https://camp.local:" + port

	// The coach's laptop adds the athlete.
	athlete := pushAthleteDirect(t, db, "Rosa Quintero")
	join, err := accounts.NewJoin(auth.RoleAthlete, athlete, "coach", time.Now())
	require.NoError(t, err)

	t.Run("trusted authority", func(t *testing.T) {
		log := &e2eLog{}
		b := pwatest.Start(t, pwatest.Options{Log: log, Flags: map[string]any{
			"host-resolver-rules":                 "MAP camp.local 127.0.0.1",
			"ignore-certificate-errors-spki-list": bundle.SPKIHash(),
		}})
		ctx, cancel := context.WithTimeout(b.Ctx(), 60*time.Second)
		defer cancel()
		require.NoError(t, pwatest.Open(ctx, base+"/join?code="+auth.FormatCode(join.Code)))
		var secure bool
		require.NoError(t, pwatest.Eval(ctx, `isSecureContext`, &secure))
		assert.True(t, secure, "the page is a secure context")
		require.NoError(t, pwatest.WaitControlled(ctx), "the service worker registers and controls the page")
		require.NoError(t, pwatest.Type(ctx, "join-name", "Rosa's phone"))
		require.NoError(t, pwatest.Click(ctx, "join-submit"))
		require.NoError(t, pwatest.WaitText(ctx, "join-done", "joined"))
		require.NoError(t, pwatest.Click(ctx, "join-continue"))
		require.NoError(t, pwatest.LogCheckin(ctx, "Rosa Quintero", 58.4))
		require.NoError(t, pwatest.WaitSynced(ctx))
		n := 0
		db.Kind("checkin", func(r devsync.Record) error {
			if r.Athlete == athlete {
				n++
			}
			return nil
		})
		assert.Equal(t, 1, n, "the check-in reached the hub over HTTPS, once")
		if t.Failed() {
			t.Log(log.String())
		}
	})

	t.Run("authority not trusted", func(t *testing.T) {
		// Another key pinned: this browser does not trust the camp authority.
		b := pwatest.Start(t, pwatest.Options{Flags: map[string]any{
			"host-resolver-rules":                 "MAP camp.local 127.0.0.1",
			"ignore-certificate-errors-spki-list": "47DEQpj8HBSa+/TImW+5JCeuQeRkm5NMpJWZG3hSuFU=",
		}})
		ctx, cancel := context.WithTimeout(b.Ctx(), 60*time.Second)
		defer cancel()
		err := pwatest.Open(ctx, base+"/")
		require.Error(t, err, "the app does not load from an untrusted certificate")
		assert.Contains(t, err.Error(), "ERR_CERT", "refused for its certificate: %v", err)
	})
}

// pushAthleteDirect stores an athlete record as the coach's laptop.
func pushAthleteDirect(t *testing.T, db *storage.DB, name string) string {
	t.Helper()
	u, _ := uuid.NewV7()
	body, _ := json.Marshal(map[string]any{"name": name, "units": "kg"})
	now := time.Now()
	res, err := db.Push(devsync.PushRequest{Device: "coach-laptop", Mutations: []devsync.Mutation{{N: 1, Op: devsync.OpUpsert,
		Record: devsync.Record{ID: u.String(), Kind: "athlete", Athlete: u.String(), At: now.Format(time.RFC3339),
			Device: "coach-laptop", Stamp: devsync.HLC{L: now.UnixMilli()}, Body: body}}}}, nil)
	require.NoError(t, err)
	require.Equal(t, 1, res.Applied, "%+v", res.Rejected)
	return u.String()
}
