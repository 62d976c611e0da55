package server_test

import (
	"bytes"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"sync/atomic"
	"testing"
	"time"

	"github.com/google/uuid"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	"cornerbook/server/dataio"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// hub is a real hub on a real bbolt file, served by httptest.
type hub struct {
	t     *testing.T
	store *storage.DB
	srv   *server.Server
	http  *httptest.Server
	now   time.Time
}

// fixedNow is the hub clock in these tests: 2026-11-20 09:00 UTC.
var fixedNow = time.Date(2026, 11, 20, 9, 0, 0, 0, time.UTC)

func newHub(t *testing.T) *hub {
	t.Helper()
	h := &hub{t: t, now: fixedNow}
	nowFn := func() time.Time { return h.now }
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "cornerbook.db"), nowFn)
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Now: nowFn, Location: time.UTC})
	require.NoError(t, err)
	h.store, h.srv = db, srv
	h.http = httptest.NewServer(srv.Handler())
	t.Cleanup(func() {
		h.http.Close()
		srv.Close()
		require.NoError(t, db.Check(), "store invariants after the test")
		db.Close()
	})
	return h
}

var idCounter atomic.Int64

// newID makes a fresh UUIDv7.
func newID(t *testing.T) string {
	id, err := uuid.NewV7()
	require.NoError(t, err)
	return id.String()
}

// rec builds a record stamped shortly before the hub's clock.
func (h *hub) rec(kind, athlete, day string, body any) devsync.Record {
	raw, err := json.Marshal(body)
	require.NoError(h.t, err)
	n := idCounter.Add(1)
	at := h.now.Add(-time.Hour).Add(time.Duration(n) * time.Millisecond)
	return devsync.Record{ID: newID(h.t), Kind: kind, Athlete: athlete, Day: day, At: at.Format(time.RFC3339),
		Device: "phone-1", Stamp: devsync.HLC{L: at.UnixMilli()}, Body: raw}
}

func (h *hub) athlete(name, units string) devsync.Record {
	r := h.rec("athlete", "", "2026-11-01", map[string]any{"name": name, "units": units})
	r.Athlete = r.ID
	return r
}

// push sends a push request body and decodes the answer.
func (h *hub) pushRaw(body []byte) (int, []byte) {
	resp, err := http.Post(h.http.URL+"/api/push", "application/json", bytes.NewReader(body))
	require.NoError(h.t, err)
	defer resp.Body.Close()
	b, _ := io.ReadAll(resp.Body)
	return resp.StatusCode, b
}

func (h *hub) push(device string, n0 uint64, recs ...devsync.Record) devsync.PushResponse {
	req := devsync.PushRequest{Device: device}
	for i, r := range recs {
		req.Mutations = append(req.Mutations, devsync.Mutation{N: n0 + uint64(i), Op: devsync.OpOf(r), Record: r})
	}
	b, _ := json.Marshal(req)
	st, out := h.pushRaw(b)
	require.Equal(h.t, 200, st, "push answered %s", out)
	var resp devsync.PushResponse
	require.NoError(h.t, json.Unmarshal(out, &resp))
	return resp
}

func (h *hub) export() []byte {
	var b bytes.Buffer
	require.NoError(h.t, dataio.ExportJSONL(h.store, &b, ""))
	return b.Bytes()
}

func (h *hub) get(path string, v any) int {
	resp, err := http.Get(h.http.URL + path)
	require.NoError(h.t, err)
	defer resp.Body.Close()
	if v != nil {
		b, _ := io.ReadAll(resp.Body)
		require.NoError(h.t, json.Unmarshal(b, v), "body %s", b)
	}
	return resp.StatusCode
}
