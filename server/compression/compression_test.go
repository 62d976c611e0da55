package compression

import (
	"bytes"
	"encoding/json"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"

	"github.com/klauspost/compress/gzip"
	"github.com/klauspost/compress/zstd"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Accept-Encoding as RFC 9110 §12.5.3 defines it: codings with optional
// q-values, q=0 meaning "not acceptable", "*" any coding not listed.
func TestNegotiate(t *testing.T) {
	for accept, want := range map[string]string{
		"":                              Identity,
		"identity":                      Identity,
		"gzip":                          Gzip,
		"gzip, deflate":                 Gzip, // Chromium over plain HTTP
		"gzip, deflate, br, zstd":       Zstd, // Chromium over HTTPS
		"gzip, deflate, br":             Gzip, // Safari
		"br":                            Identity,
		"zstd;q=0, gzip":                Gzip,
		"gzip;q=0":                      Identity,
		"GZIP;Q=0.5":                    Gzip,
		"*":                             Zstd,
		"*, zstd;q=0":                   Gzip,
		"*;q=0":                         Identity,
		"x-gzip":                        Gzip,
		"gzip;q=0.0, deflate":           Identity,
		" zstd ; q=1 , gzip ; q=0.8 ":   Zstd,
		"zstd;q=nonsense, gzip;q=0.001": Gzip,
	} {
		assert.Equal(t, want, Negotiate(accept), "Accept-Encoding: %q", accept)
	}
}

func page(n int) map[string]any {
	recs := make([]map[string]any, n)
	for i := range recs {
		recs[i] = map[string]any{"id": i, "kind": "checkin", "body": map[string]any{"mass_kg": 70.4, "sleep_h": 7.5}}
	}
	return map[string]any{"records": recs}
}

func serve(t *testing.T, h http.HandlerFunc, accept string) (*http.Response, []byte) {
	t.Helper()
	ts := httptest.NewServer(Middleware(h))
	t.Cleanup(ts.Close)
	req, _ := http.NewRequest(http.MethodGet, ts.URL, nil)
	if accept != "" {
		req.Header.Set("Accept-Encoding", accept)
	}
	// A transport that leaves the body as sent.
	resp, err := (&http.Transport{DisableCompression: true}).RoundTrip(req)
	require.NoError(t, err)
	defer resp.Body.Close()
	body, err := io.ReadAll(resp.Body)
	require.NoError(t, err)
	return resp, body
}

func jsonHandler(v any, status int) http.HandlerFunc {
	return func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "application/json; charset=utf-8")
		w.WriteHeader(status)
		json.NewEncoder(w).Encode(v)
	}
}

func decode(t *testing.T, enc string, body []byte) []byte {
	t.Helper()
	switch enc {
	case Gzip:
		zr, err := gzip.NewReader(bytes.NewReader(body))
		require.NoError(t, err)
		out, err := io.ReadAll(zr)
		require.NoError(t, err)
		return out
	case Zstd:
		zr, err := zstd.NewReader(bytes.NewReader(body))
		require.NoError(t, err)
		defer zr.Close()
		out, err := io.ReadAll(zr)
		require.NoError(t, err)
		return out
	}
	return body
}

// A large JSON answer arrives compressed in the coding the client prefers,
// decodes to exactly the identity answer, keeps its status, and is far
// smaller.
func TestLargeJSONIsCompressed(t *testing.T) {
	v := page(300)
	want, _ := json.Marshal(v)
	want = append(want, '\n')
	for _, c := range []struct{ accept, enc string }{{"gzip", Gzip}, {"gzip, deflate, br, zstd", Zstd}, {"", Identity}} {
		resp, body := serve(t, jsonHandler(v, http.StatusAccepted), c.accept)
		assert.Equal(t, http.StatusAccepted, resp.StatusCode)
		assert.Equal(t, c.enc, resp.Header.Get("Content-Encoding"), c.accept)
		if c.enc != Identity {
			assert.Contains(t, resp.Header.Values("Vary"), "Accept-Encoding")
			assert.Less(t, len(body)*4, len(want), "%s: %d bytes for %d", c.enc, len(body), len(want))
			// Browsers take zstd windows of at most 8 MB (RFC 8878).
			if c.enc == Zstd {
				var h zstd.Header
				require.NoError(t, h.Decode(body))
				assert.LessOrEqual(t, h.WindowSize, uint64(8<<20))
			}
		}
		assert.Equal(t, string(want), string(decode(t, c.enc, body)), c.accept)
	}
}

// Small answers, answers that are not JSON and answers that already carry
// an encoding go out as they are.
func TestWhatIsLeftAlone(t *testing.T) {
	small := page(1)
	resp, body := serve(t, jsonHandler(small, http.StatusBadRequest), "gzip")
	assert.Empty(t, resp.Header.Get("Content-Encoding"))
	assert.Equal(t, http.StatusBadRequest, resp.StatusCode)
	assert.True(t, json.Valid(body))

	text := strings.Repeat("round done\n", 500)
	resp, body = serve(t, func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "text/plain")
		io.WriteString(w, text)
	}, "gzip")
	assert.Empty(t, resp.Header.Get("Content-Encoding"))
	assert.Equal(t, text, string(body))

	pre := []byte("already encoded, not touched again")
	resp, body = serve(t, func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "application/json")
		w.Header().Set("Content-Encoding", "gzip")
		w.Write(bytes.Repeat(pre, 100))
	}, "gzip")
	assert.Equal(t, "gzip", resp.Header.Get("Content-Encoding"))
	assert.Equal(t, bytes.Repeat(pre, 100), body)

	resp, _ = serve(t, func(w http.ResponseWriter, r *http.Request) {}, "gzip")
	assert.Equal(t, http.StatusOK, resp.StatusCode, "an empty answer is still an answer")
}

// An answer written in many small pieces (a streamed list) is compressed
// as a whole.
func TestPiecewiseWrites(t *testing.T) {
	var want bytes.Buffer
	resp, body := serve(t, func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "application/json")
		for i := 0; i < 2000; i++ {
			s := `{"n":` + strings.Repeat("1", i%7+1) + "}\n"
			want.WriteString(s)
			io.WriteString(w, s)
		}
	}, "gzip")
	assert.Equal(t, Gzip, resp.Header.Get("Content-Encoding"))
	assert.Equal(t, want.String(), string(decode(t, Gzip, body)))
}
