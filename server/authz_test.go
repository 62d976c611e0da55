package server_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/gorilla/websocket"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"golang.org/x/crypto/bcrypt"

	"cornerbook/server"
	"cornerbook/server/auth"
	devsync "cornerbook/sync"
)

// campHub is a hub with pairing: a coach device, a staff device, two
// athletes' phones and a revoked phone.
type campHub struct {
	*hub
	accounts *auth.Store
	tokens   map[string]string // role name → token
	devices  map[string]string // role name → device id
	athleteA devsync.Record
	athleteB devsync.Record
}

func newCampHub(t *testing.T) *campHub {
	t.Helper()
	h := &hub{t: t, now: fixedNow}
	nowFn := func() time.Time { return h.now }
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "cornerbook.db"), nowFn)
	require.NoError(t, err)
	accounts, err := auth.Open(db.Bolt(), auth.Options{Now: nowFn, BcryptCost: bcrypt.MinCost})
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Now: nowFn, Location: time.UTC, Auth: accounts})
	require.NoError(t, err)
	h.store, h.srv = db, srv
	h.http = httptest.NewServer(srv.Handler())
	t.Cleanup(func() {
		h.http.Close()
		srv.Close()
		require.NoError(t, db.Check())
		db.Close()
	})
	c := &campHub{hub: h, accounts: accounts, tokens: map[string]string{}, devices: map[string]string{}}
	// Athletes are created by the coach at the laptop (loopback, no token).
	c.athleteA = h.athlete("Athlete A", "kg")
	c.athleteB = h.athlete("Athlete B", "lb")
	c.athleteA.Device, c.athleteB.Device = "laptop-browser", "laptop-browser"
	require.Equal(t, 2, h.push("laptop-browser", 1, c.athleteA, c.athleteB).Applied)

	require.NoError(t, accounts.SetPassphrase("correct horse battery"))
	dev, tok, err := accounts.Login("correct horse battery")
	require.NoError(t, err)
	c.tokens["coach"], c.devices["coach"] = tok, dev.ID
	pair := func(name string, role auth.Role, athlete string) {
		j, err := accounts.NewJoin(role, athlete, "test", fixedNow)
		require.NoError(t, err)
		dev, tok, err := accounts.Redeem(j.Code, name+" phone", "192.0.2.1", fixedNow)
		require.NoError(t, err)
		c.tokens[name], c.devices[name] = tok, dev.ID
	}
	pair("staff", auth.RoleStaff, "")
	pair("athleteA", auth.RoleAthlete, c.athleteA.ID)
	pair("athleteB", auth.RoleAthlete, c.athleteB.ID)
	pair("revoked", auth.RoleAthlete, c.athleteA.ID)
	require.NoError(t, accounts.Revoke(c.devices["revoked"]))
	return c
}

// do sends a request as a phone on the camp Wi-Fi would: by the hub's LAN
// name (so it is not the laptop's own screen), with the caller's token.
func (c *campHub) do(as, method, path string, body any) (int, []byte) {
	var rd io.Reader
	if body != nil {
		b, err := json.Marshal(body)
		require.NoError(c.t, err)
		rd = bytes.NewReader(b)
	}
	req, err := http.NewRequest(method, c.http.URL+path, rd)
	require.NoError(c.t, err)
	req.Host = "camp.local"
	if tok := c.tokens[as]; tok != "" {
		req.Header.Set("Authorization", "Bearer "+tok)
	}
	resp, err := http.DefaultClient.Do(req)
	require.NoError(c.t, err)
	defer resp.Body.Close()
	out, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, out
}

// recordAs makes a record written on the caller's device.
func (c *campHub) recordAs(as, kind string, athlete devsync.Record, body any) devsync.Record {
	r := c.rec(kind, athlete.ID, "2026-11-20", body)
	r.Device = c.devices[as]
	return r
}

func (c *campHub) pushAs(as string, r devsync.Record) (int, devsync.PushResponse) {
	st, out := c.do(as, "POST", "/api/push", devsync.PushRequest{Device: c.devices[as], Mutations: []devsync.Mutation{{N: uint64(time.Now().UnixNano() / 1000), Op: "upsert", Record: r}}})
	var resp devsync.PushResponse
	if st == 200 {
		require.NoError(c.t, json.Unmarshal(out, &resp))
	}
	return st, resp
}

// outcome of one push: "stored", "FORBIDDEN", or the HTTP status.
func pushOutcome(st int, resp devsync.PushResponse) string {
	switch {
	case st != 200:
		return fmt.Sprint(st)
	case len(resp.Rejected) > 0:
		return resp.Rejected[0].Code
	case resp.Applied == 1:
		return "stored"
	}
	return "superseded"
}

// TestAuthorization_Matrix: every route × every role, own athlete and
// other athlete, revoked token and no token.
func TestAuthorization_Matrix(t *testing.T) {
	c := newCampHub(t)
	roles := []string{"coach", "staff", "athleteA", "revoked", "none"}

	t.Run("reads", func(t *testing.T) {
		a, b := c.athleteA.ID, c.athleteB.ID
		routes := []struct {
			path string
			want map[string]int
		}{
			{"/api/pull?since=0", map[string]int{"coach": 200, "staff": 200, "athleteA": 200, "revoked": 401, "none": 401}},
			{"/api/status", map[string]int{"coach": 200, "staff": 200, "athleteA": 200, "revoked": 401, "none": 401}},
			{"/api/flags?day=2026-11-20", map[string]int{"coach": 200, "staff": 200, "athleteA": 200, "revoked": 401, "none": 401}},
			{"/api/flags?day=2026-11-20&athlete=" + a, map[string]int{"coach": 200, "staff": 200, "athleteA": 200, "revoked": 401, "none": 401}},
			{"/api/flags?day=2026-11-20&athlete=" + b, map[string]int{"coach": 200, "staff": 200, "athleteA": 403, "revoked": 401, "none": 401}},
			{"/api/athletes/" + a + "/series", map[string]int{"coach": 200, "staff": 200, "athleteA": 200, "revoked": 401, "none": 401}},
			{"/api/athletes/" + b + "/series", map[string]int{"coach": 200, "staff": 200, "athleteA": 403, "revoked": 401, "none": 401}},
			{"/api/records/" + a + "/history", map[string]int{"coach": 200, "staff": 200, "athleteA": 200, "revoked": 401, "none": 401}},
			{"/api/records/" + b + "/history", map[string]int{"coach": 200, "staff": 200, "athleteA": 404, "revoked": 401, "none": 401}},
			{"/api/devices", map[string]int{"coach": 200, "staff": 403, "athleteA": 403, "revoked": 401, "none": 401}},
			{"/api/backup", map[string]int{"coach": 200, "staff": 403, "athleteA": 403, "revoked": 401, "none": 401}},
			{"/api/me", map[string]int{"coach": 200, "staff": 200, "athleteA": 200, "revoked": 401, "none": 200}},
		}
		for _, rt := range routes {
			for _, role := range roles {
				st, out := c.do(role, "GET", rt.path, nil)
				assert.Equal(t, rt.want[role], st, "GET %s as %s: %s", rt.path, role, truncate(out))
			}
		}
	})

	t.Run("coach-only changes", func(t *testing.T) {
		for _, role := range roles {
			st, out := c.do(role, "POST", "/api/joins", map[string]string{"role": "staff"})
			want := map[string]int{"coach": 200, "staff": 403, "athleteA": 403, "revoked": 401, "none": 401}[role]
			assert.Equal(t, want, st, "POST /api/joins as %s: %s", role, truncate(out))
		}
		for _, role := range []string{"staff", "athleteA", "revoked", "none"} {
			st, _ := c.do(role, "POST", "/api/devices/"+c.devices["athleteB"]+"/revoke", nil)
			assert.Contains(t, []int{401, 403}, st, "revoke as %s", role)
		}
		_, err := c.accounts.Authenticate(c.tokens["athleteB"], fixedNow)
		require.NoError(t, err, "nobody but the coach revoked athlete B's phone")
	})

	t.Run("writes", func(t *testing.T) {
		cases := []struct {
			kind    string
			athlete devsync.Record
			body    any
			want    map[string]string
		}{
			{"checkin", c.athleteA, map[string]any{"mass_kg": 70.1},
				map[string]string{"coach": "stored", "staff": "stored", "athleteA": "stored", "revoked": "401", "none": "401"}},
			{"checkin", c.athleteB, map[string]any{"mass_kg": 80.1},
				map[string]string{"coach": "stored", "staff": "stored", "athleteA": "FORBIDDEN", "revoked": "401", "none": "401"}},
			{"round", c.athleteA, map[string]any{"activity": "spar", "seconds": 180, "intensity": 2},
				map[string]string{"coach": "stored", "staff": "stored", "athleteA": "FORBIDDEN", "revoked": "401", "none": "401"}},
			{"bout", c.athleteA, map[string]any{"camp_start": "2026-11-01", "weigh_in": "2026-12-19T09:00:00Z", "weigh_in_type": "day_before", "bout_day": "2026-12-20", "weight_class": "custom", "limit_kg": 66, "start_mass_kg": 70},
				map[string]string{"coach": "stored", "staff": "FORBIDDEN", "athleteA": "FORBIDDEN", "revoked": "401", "none": "401"}},
			{"decision", c.athleteA, map[string]any{"rule": "jump_drop", "note": "no hard sparring today"},
				map[string]string{"coach": "stored", "staff": "FORBIDDEN", "athleteA": "FORBIDDEN", "revoked": "401", "none": "401"}},
		}
		for _, tc := range cases {
			for _, role := range roles {
				r := c.recordAs(role, tc.kind, tc.athlete, tc.body)
				if role == "none" {
					r.Device = "stranger"
				}
				st, resp := c.pushAs(role, r)
				assert.Equal(t, tc.want[role], pushOutcome(st, resp), "%s for %s as %s", tc.kind, tc.athlete.ID[:8], role)
			}
		}
		// Pushing under another device's id is refused.
		r := c.recordAs("athleteA", "checkin", c.athleteA, map[string]any{"mass_kg": 70})
		st, out := c.do("athleteA", "POST", "/api/push", devsync.PushRequest{Device: c.devices["staff"], Mutations: []devsync.Mutation{{N: 1, Op: "upsert", Record: r}}})
		assert.Equal(t, 403, st, truncate(out))
	})

	t.Run("an athlete's pull holds only that athlete", func(t *testing.T) {
		st, out := c.do("athleteA", "GET", "/api/pull?since=0&limit=2000", nil)
		require.Equal(t, 200, st)
		var p devsync.PullResponse
		require.NoError(t, json.Unmarshal(out, &p))
		require.NotEmpty(t, p.Records)
		for _, r := range p.Records {
			if r.Kind == "athlete" {
				assert.Equal(t, c.athleteA.ID, r.ID)
			} else if r.Athlete != "" {
				assert.Equal(t, c.athleteA.ID, r.Athlete, "athlete A's phone received %s %s of another athlete", r.Kind, r.ID)
			}
		}
		st, out = c.do("coach", "GET", "/api/pull?since=0&limit=2000", nil)
		require.Equal(t, 200, st)
		var all devsync.PullResponse
		require.NoError(t, json.Unmarshal(out, &all))
		assert.Greater(t, len(all.Records), len(p.Records), "the coach sees more than one athlete's records")
	})

	t.Run("websocket", func(t *testing.T) {
		url := "ws" + strings.TrimPrefix(c.http.URL, "http") + "/api/ws"
		dial := func(tok string) (*websocket.Conn, *http.Response, error) {
			d := websocket.Dialer{Subprotocols: []string{auth.WSProtocol}}
			if tok != "" {
				d.Subprotocols = append(d.Subprotocols, auth.WSTokenPrefix+tok)
			}
			hdr := http.Header{"Host": {"camp.local"}}
			return d.Dial(url, hdr)
		}
		for _, role := range []string{"revoked", "none"} {
			_, resp, err := dial(c.tokens[role])
			require.Error(t, err, role)
			require.NotNil(t, resp)
			assert.Equal(t, 401, resp.StatusCode, role)
		}
		conn, _, err := dial(c.tokens["athleteA"])
		require.NoError(t, err)
		defer conn.Close()
		var hello struct{ T string }
		require.NoError(t, conn.ReadJSON(&hello))
		assert.Equal(t, "hello", hello.T)
	})
}

func truncate(b []byte) string {
	if len(b) > 300 {
		return string(b[:300]) + "…"
	}
	return string(b)
}

// TestLogin_Throttled: over HTTP, ten wrong passphrases within a minute
// are answered 401; the eleventh is refused with 429 and Retry-After
// (the auth package's own test shows it is refused without a hash check).
func TestLogin_Throttled(t *testing.T) {
	c := newCampHub(t)
	for i := 1; i <= 10; i++ {
		st, out := c.do("none", "POST", "/api/login", map[string]string{"passphrase": fmt.Sprintf("wrong guess %02d", i)})
		require.Equal(t, 401, st, "attempt %d: %s", i, out)
	}
	req, _ := http.NewRequest("POST", c.http.URL+"/api/login", strings.NewReader(`{"passphrase":"correct horse battery"}`))
	req.Host = "camp.local"
	resp, err := http.DefaultClient.Do(req)
	require.NoError(t, err)
	resp.Body.Close()
	assert.Equal(t, 429, resp.StatusCode, "the 11th attempt within the minute is refused, even with the right passphrase")
	assert.NotEmpty(t, resp.Header.Get("Retry-After"))
}

// TestLogin_OneAddressCannotLockOutTheCoach: over HTTP, a device at one
// address that used its ten tries is refused with 429, while the coach's
// right passphrase from another address, and from the laptop's own
// screen, still signs in.
func TestLogin_OneAddressCannotLockOutTheCoach(t *testing.T) {
	c := newCampHub(t)
	from := func(local, host, pass string) int {
		cl := &http.Client{Transport: &http.Transport{DialContext: (&net.Dialer{
			LocalAddr: &net.TCPAddr{IP: net.ParseIP(local)}}).DialContext}}
		req, _ := http.NewRequest("POST", c.http.URL+"/api/login", strings.NewReader(`{"passphrase":"`+pass+`"}`))
		req.Host = host
		resp, err := cl.Do(req)
		require.NoError(t, err)
		resp.Body.Close()
		return resp.StatusCode
	}
	for i := 1; i <= 10; i++ {
		require.Equal(t, 401, from("127.0.0.2", "camp.local", fmt.Sprintf("wrong guess %02d", i)))
	}
	assert.Equal(t, 429, from("127.0.0.2", "camp.local", "correct horse battery"), "the guessing address is throttled")
	assert.Equal(t, 200, from("127.0.0.3", "camp.local", "correct horse battery"), "the coach at another address signs in")
	assert.Equal(t, 200, from("127.0.0.1", strings.TrimPrefix(c.http.URL, "http://"), "correct horse battery"), "the laptop signs in")
}

// TestPlan_AthleteSeesOwnOnly: an athlete's device asking for another
// athlete's plan (whose thresholds carry that athlete's sparring cap) is
// refused; its own, and any athlete for the coach, are answered.
func TestPlan_AthleteSeesOwnOnly(t *testing.T) {
	c := newCampHub(t)
	q := "/api/plan/default?camp_start=2026-11-02&bout_day=2026-12-26&athlete="
	st, out := c.do("athleteA", "GET", q+c.athleteB.ID, nil)
	assert.Equal(t, 403, st, "%s", out)
	st, out = c.do("athleteA", "GET", q+c.athleteA.ID, nil)
	assert.Equal(t, 200, st, "%s", out)
	st, out = c.do("coach", "GET", q+c.athleteB.ID, nil)
	assert.Equal(t, 200, st, "%s", out)
	st, out = c.do("athleteA", "POST", "/api/plan/check", map[string]any{"athlete": c.athleteB.ID, "bout": map[string]any{}})
	assert.Equal(t, 403, st, "%s", out)
}

// TestAthleteSeesOnlyOwnActivity: an athlete's device is not poked, and
// its pull's cursor and count do not move, when another athlete's entry
// is logged; its own athlete's entry pokes it and moves them; coach and
// staff devices hear of every change.
func TestAthleteSeesOnlyOwnActivity(t *testing.T) {
	c := newCampHub(t)
	url := "ws" + strings.TrimPrefix(c.http.URL, "http") + "/api/ws"
	type msg struct {
		T     string
		Seq   uint64
		Flags uint64
	}
	listen := func(as string) (<-chan msg, msg) {
		d := websocket.Dialer{Subprotocols: []string{auth.WSProtocol, auth.WSTokenPrefix + c.tokens[as]}}
		conn, _, err := d.Dial(url, http.Header{"Host": {"camp.local"}})
		require.NoError(t, err)
		t.Cleanup(func() { conn.Close() })
		var hello msg
		require.NoError(t, conn.ReadJSON(&hello))
		ch := make(chan msg, 64)
		go func() {
			defer close(ch)
			for {
				var m msg
				if conn.ReadJSON(&m) != nil {
					return
				}
				ch <- m
			}
		}()
		return ch, hello
	}
	quiet := func(ch <-chan msg, who string) {
		select {
		case m := <-ch:
			t.Errorf("%s was poked about another athlete's entry: %+v", who, m)
		case <-time.After(700 * time.Millisecond):
		}
	}
	heard := func(ch <-chan msg, who string) msg {
		select {
		case m := <-ch:
			return m
		case <-time.After(5 * time.Second):
			t.Fatalf("%s was not poked", who)
		}
		return msg{}
	}
	pull := func(as string, since uint64) devsync.PullResponse {
		st, out := c.do(as, "GET", fmt.Sprintf("/api/pull?since=%d&limit=500", since), nil)
		require.Equal(t, 200, st, "%s", out)
		var p devsync.PullResponse
		require.NoError(t, json.Unmarshal(out, &p))
		return p
	}
	status := func(as string) uint64 {
		st, out := c.do(as, "GET", "/api/status", nil)
		require.Equal(t, 200, st)
		var s struct{ MaxSeq uint64 }
		require.NoError(t, json.Unmarshal(out, &s))
		return s.MaxSeq
	}

	a, helloA := listen("athleteA")
	staff, _ := listen("staff")
	before := pull("athleteA", 0)
	statusBefore := status("athleteA")
	assert.Equal(t, helloA.Seq, statusBefore)

	// Athlete B logs a check-in.
	st, resp := c.pushAs("athleteB", c.recordAs("athleteB", "checkin", c.athleteB, map[string]any{"mass_kg": 61.5}))
	require.Equal(t, "stored", pushOutcome(st, resp))
	heard(staff, "staff")
	quiet(a, "athlete A")
	after := pull("athleteA", before.Next)
	assert.Empty(t, after.Records)
	assert.Equal(t, before.Next, after.Next, "athlete A's cursor moved on B's entry")
	assert.Equal(t, before.MaxSeq, after.MaxSeq, "athlete A's count moved on B's entry")
	assert.Equal(t, statusBefore, status("athleteA"))
	again := pull("athleteA", 0)
	assert.Equal(t, before.MaxSeq, again.MaxSeq)

	// Athlete A's own check-in: poked, and it arrives.
	st, resp = c.pushAs("athleteA", c.recordAs("athleteA", "checkin", c.athleteA, map[string]any{"mass_kg": 70.5}))
	require.Equal(t, "stored", pushOutcome(st, resp))
	m := heard(a, "athlete A")
	assert.Greater(t, m.Seq, helloA.Seq)
	own := pull("athleteA", before.Next)
	require.Len(t, own.Records, 1)
	assert.Equal(t, resp.MaxSeq, own.Next)
	assert.Equal(t, resp.MaxSeq, own.MaxSeq)
}
