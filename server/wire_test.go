package server_test

import (
	"bytes"
	"context"
	"crypto/tls"
	"crypto/x509"
	"encoding/json"
	"io"
	"net"
	"net/http"
	"net/http/httptrace"
	"path/filepath"
	"testing"
	"time"

	"github.com/gorilla/websocket"
	"github.com/klauspost/compress/gzip"
	"github.com/klauspost/compress/zstd"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	"cornerbook/server/certs"
	"cornerbook/server/demo"
	devsync "cornerbook/sync"
)

// getAs fetches a path with the given Accept-Encoding and returns the
// answer and its body exactly as sent (not decoded).
func getAs(t *testing.T, url, accept string) (*http.Response, []byte) {
	t.Helper()
	req, err := http.NewRequest(http.MethodGet, url, nil)
	require.NoError(t, err)
	if accept != "" {
		req.Header.Set("Accept-Encoding", accept)
	}
	resp, err := (&http.Transport{DisableCompression: true}).RoundTrip(req)
	require.NoError(t, err)
	defer resp.Body.Close()
	body, err := io.ReadAll(resp.Body)
	require.NoError(t, err)
	return resp, body
}

// A device that accepts gzip (curl --compressed, Safari, any browser on
// the plain-HTTP port) or zstd (Chromium and Firefox over HTTPS) gets its
// pull pages compressed to at most a quarter of the identity size, and the
// page decodes to exactly the records of the identity answer.
func TestPullIsCompressedForClientsThatAcceptIt(t *testing.T) {
	h := newHub(t)
	n, err := demo.SeedIfEmpty(h.store, h.now)
	require.NoError(t, err)
	require.Greater(t, n, 1000)

	url := h.http.URL + "/api/pull?since=0&limit=500"
	plain, identity := getAs(t, url, "")
	require.Equal(t, http.StatusOK, plain.StatusCode)
	assert.Empty(t, plain.Header.Get("Content-Encoding"))
	var want devsync.PullResponse
	require.NoError(t, json.Unmarshal(identity, &want))
	require.Len(t, want.Records, 500)

	for accept, enc := range map[string]string{"deflate, gzip": "gzip", "gzip, deflate, br, zstd": "zstd"} {
		resp, body := getAs(t, url, accept)
		require.Equal(t, http.StatusOK, resp.StatusCode)
		assert.Equal(t, enc, resp.Header.Get("Content-Encoding"), accept)
		assert.Contains(t, resp.Header.Values("Vary"), "Accept-Encoding")
		assert.LessOrEqual(t, len(body)*4, len(identity), "%s: %d bytes against %d as sent", enc, len(body), len(identity))
		t.Logf("%s: %d bytes, identity %d (%.1f×)", enc, len(body), len(identity), float64(len(identity))/float64(len(body)))
		var r io.Reader
		if enc == "gzip" {
			zr, err := gzip.NewReader(bytes.NewReader(body))
			require.NoError(t, err)
			r = zr
		} else {
			zr, err := zstd.NewReader(bytes.NewReader(body))
			require.NoError(t, err)
			defer zr.Close()
			r = zr
		}
		var got devsync.PullResponse
		require.NoError(t, json.NewDecoder(r).Decode(&got))
		assert.Equal(t, want.Records, got.Records)
		assert.Equal(t, want.Next, got.Next)
	}
}

// A page is sized in bytes as well as records: the device asks for what
// its link carries, and the hub stops a page once its records reach that
// many bytes of JSON, never splitting or losing a record.
func TestPullPagesAreSizedInBytes(t *testing.T) {
	h := newHub(t)
	_, err := demo.SeedIfEmpty(h.store, h.now)
	require.NoError(t, err)
	var all devsync.PullResponse
	require.Equal(t, 200, h.get("/api/pull?since=0&limit=10000&bytes=4194304", &all))
	require.False(t, all.More)

	seen := map[string]bool{}
	since, pages := uint64(0), 0
	for {
		var page devsync.PullResponse
		require.Equal(t, 200, h.get("/api/pull?since="+itoa(since)+"&limit=10000&bytes=65536", &page))
		pages++
		size := 0
		for _, r := range page.Records {
			b, _ := json.Marshal(r)
			size += len(b)
			assert.False(t, seen[r.ID], "record %s came twice", r.ID)
			seen[r.ID] = true
		}
		if page.More {
			// The page ended at the first record that reached the budget.
			last, _ := json.Marshal(page.Records[len(page.Records)-1])
			assert.Less(t, size-len(last), 65536+4096, "page %d", pages)
			assert.GreaterOrEqual(t, size, 60000, "page %d is not cut short", pages)
		}
		since = page.Next
		if !page.More {
			break
		}
	}
	assert.Len(t, seen, len(all.Records), "every record came once")
	assert.Greater(t, pages, 3)

	var e devsync.ErrorBody
	assert.Equal(t, http.StatusBadRequest, h.get("/api/pull?since=0&bytes=12", &e))
	assert.Equal(t, "bytes", e.Field)
	assert.Contains(t, e.Reason, "between")
}

func itoa(n uint64) string { b, _ := json.Marshal(n); return string(b) }

// Over the camp's HTTPS, a client that offers HTTP/2 agrees it: a phone
// loads the page, its files and every sync request over one connection.
// The websocket still opens (over HTTP/1.1, as browsers do).
func TestHTTP2OverTheCampHTTPS(t *testing.T) {
	dir := t.TempDir()
	bundle, err := certs.Ensure(filepath.Join(dir, "tls"), certs.Names{Host: "camp-laptop"}, time.Now())
	require.NoError(t, err)
	db, err := server.OpenStore(filepath.Join(dir, "hub.db"), nil)
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Certs: bundle})
	require.NoError(t, err)
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	require.NoError(t, srv.Serve(ln))
	t.Cleanup(func() { srv.Close(); db.Close() })

	roots := x509.NewCertPool()
	roots.AddCert(bundle.CA())
	tr := &http.Transport{TLSClientConfig: &tls.Config{RootCAs: roots}, ForceAttemptHTTP2: true}
	defer tr.CloseIdleConnections()
	client := &http.Client{Transport: tr}
	newConns := 0
	trace := &httptrace.ClientTrace{GotConn: func(i httptrace.GotConnInfo) {
		if !i.Reused {
			newConns++
		}
	}}
	for _, p := range []string{"/", "/js/main.js", "/css/app.css", "/api/status", "/api/pull?since=0"} {
		req, _ := http.NewRequestWithContext(httptrace.WithClientTrace(context.Background(), trace), http.MethodGet, srv.URL()+p, nil)
		resp, err := client.Do(req)
		require.NoError(t, err)
		io.Copy(io.Discard, resp.Body)
		resp.Body.Close()
		assert.Equal(t, http.StatusOK, resp.StatusCode, p)
		assert.Equal(t, 2, resp.ProtoMajor, "%s answered over %s", p, resp.Proto)
	}
	assert.Equal(t, 1, newConns, "one connection for everything")

	d := websocket.Dialer{TLSClientConfig: &tls.Config{RootCAs: roots}}
	c, resp, err := d.Dial("wss://"+srv.Addr()+"/api/ws", nil)
	require.NoError(t, err, "websocket over the camp's HTTPS")
	assert.Equal(t, 1, resp.ProtoMajor)
	c.Close()
}
