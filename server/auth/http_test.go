package auth

import (
	"bytes"
	"fmt"
	"image"
	"image/png"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	qrcode "github.com/skip2/go-qrcode"
)

func TestSecurityHeadersOnARealServer(t *testing.T) {
	srv := httptest.NewServer(SecurityHeaders(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		io.WriteString(w, "<!doctype html><title>hub</title>")
	})))
	defer srv.Close()
	res, err := srv.Client().Get(srv.URL + "/")
	require.NoError(t, err)
	res.Body.Close()
	h := res.Header
	csp := h.Get("Content-Security-Policy")
	for _, want := range []string{
		"default-src 'self'", "style-src 'self'", "img-src 'self' data:", "frame-ancestors 'none'",
		"object-src 'none'", "connect-src 'self' ws://" + strings.TrimPrefix(srv.URL, "http://"),
	} {
		assert.Contains(t, csp, want)
	}
	assert.NotContains(t, csp, "unsafe-inline")
	assert.NotContains(t, csp, "*")
	assert.Equal(t, "nosniff", h.Get("X-Content-Type-Options"))
	assert.Equal(t, "DENY", h.Get("X-Frame-Options"))
	assert.Equal(t, "no-referrer", h.Get("Referrer-Policy"))

	tls := httptest.NewTLSServer(SecurityHeaders(http.NotFoundHandler()))
	defer tls.Close()
	res, err = tls.Client().Get(tls.URL + "/")
	require.NoError(t, err)
	res.Body.Close()
	assert.Contains(t, res.Header.Get("Content-Security-Policy"), "connect-src 'self' wss://"+strings.TrimPrefix(tls.URL, "https://")+";")
}

func TestCSPIgnoresForgedHost(t *testing.T) {
	r := httptest.NewRequest("GET", "/", nil)
	r.Host = "evil.example; script-src *"
	csp := CSP(r)
	assert.Contains(t, csp, "connect-src 'self';")
	assert.NotContains(t, csp, "evil")
	r.Host = "[fd12:3456::10]:8443"
	assert.Contains(t, CSP(r), "connect-src 'self' ws://[fd12:3456::10]:8443;")
}

func TestBearerToken(t *testing.T) {
	for _, c := range []struct{ header, value, want string }{
		{"Authorization", "Bearer abc_DEF-123", "abc_DEF-123"},
		{"Authorization", "bearer  abc ", "abc"},
		{"Authorization", "Basic Zm9vOmJhcg==", ""},
		{"Authorization", "Bearer", ""},
		{"Sec-WebSocket-Protocol", "cornerbook, cornerbook.token.abc_DEF", "abc_DEF"},
		{"Sec-WebSocket-Protocol", "cornerbook", ""},
		{"X-Other", "Bearer abc", ""},
	} {
		r := httptest.NewRequest("GET", "/api/ws", nil)
		r.Header.Set(c.header, c.value)
		assert.Equal(t, c.want, BearerToken(r), "%s: %s", c.header, c.value)
	}
}

func TestSameOrigin(t *testing.T) {
	for _, c := range []struct {
		host, origin string
		want         bool
	}{
		{"192.168.50.10:8443", "https://192.168.50.10:8443", true},
		{"laptop.local:8443", "https://LAPTOP.local:8443", true},
		{"localhost:8080", "http://localhost:8080", true},
		{"192.168.50.10:8443", "https://192.168.50.10:9443", false},
		{"192.168.50.10:8443", "https://evil.example", false},
		{"192.168.50.10:8443", "", false},
		{"192.168.50.10:8443", "null", false},
		{"192.168.50.10:8443", "file://192.168.50.10:8443", false},
	} {
		r := httptest.NewRequest("GET", "/api/ws", nil)
		r.Host = c.host
		if c.origin != "" {
			r.Header.Set("Origin", c.origin)
		}
		assert.Equal(t, c.want, SameOrigin(r), "%s from %q", c.host, c.origin)
	}
}

func TestMaxBody(t *testing.T) {
	srv := httptest.NewServer(MaxBody(1024, http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		b, err := io.ReadAll(r.Body)
		if err != nil {
			http.Error(w, err.Error(), http.StatusRequestEntityTooLarge)
			return
		}
		fmt.Fprint(w, len(b))
	})))
	defer srv.Close()
	c := &http.Client{Timeout: 5 * time.Second}
	res, err := c.Post(srv.URL, "application/json", strings.NewReader(strings.Repeat("x", 1024)))
	require.NoError(t, err)
	body, _ := io.ReadAll(res.Body)
	res.Body.Close()
	assert.Equal(t, http.StatusOK, res.StatusCode)
	assert.Equal(t, "1024", string(body))
	res, err = c.Post(srv.URL, "application/json", strings.NewReader(strings.Repeat("x", 1025)))
	require.NoError(t, err)
	res.Body.Close()
	assert.Equal(t, http.StatusRequestEntityTooLarge, res.StatusCode)
	// Without a length up front (chunked), the reader stops it.
	res, err = c.Post(srv.URL, "application/json", io.MultiReader(strings.NewReader(strings.Repeat("x", 2000))))
	require.NoError(t, err)
	res.Body.Close()
	assert.Equal(t, http.StatusRequestEntityTooLarge, res.StatusCode)
}

const appURL = "https://192.168.50.10:8443/"

// The PNG is the library's symbol at medium correction, module for module.
func TestQRPNG(t *testing.T) {
	data, err := QRPNG(appURL)
	require.NoError(t, err)
	img, err := png.Decode(bytes.NewReader(data))
	require.NoError(t, err)

	q, err := qrcode.New(appURL, qrcode.Medium)
	require.NoError(t, err)
	bm := q.Bitmap()
	n := len(bm)
	ppm := QRSize / n
	require.Greater(t, ppm, 1)
	assert.Equal(t, image.Rect(0, 0, n*ppm, n*ppm), img.Bounds())
	for y := range n {
		for x := range n {
			r, _, _, _ := img.At(x*ppm+ppm/2, y*ppm+ppm/2).RGBA()
			require.Equal(t, bm[y][x], r < 0x8000, "module %d,%d", x, y)
		}
	}
}

// The console rendering reads back to the library's symbol.
func TestQRTerminal(t *testing.T) {
	s := QRTerminal(appURL)
	q, err := qrcode.New(appURL, qrcode.Low)
	require.NoError(t, err)
	bm := q.Bitmap()
	lines := strings.Split(strings.TrimSuffix(s, "\n"), "\n")
	require.Len(t, lines, (len(bm)+1)/2)
	for li, line := range lines {
		cells := []rune(line)
		require.Len(t, cells, len(bm))
		for x, c := range cells {
			topLight := c == '█' || c == '▀'
			bottomLight := c == '█' || c == '▄'
			require.Equal(t, !bm[2*li][x], topLight, "row %d col %d", 2*li, x)
			if 2*li+1 < len(bm) {
				require.Equal(t, !bm[2*li+1][x], bottomLight, "row %d col %d", 2*li+1, x)
			}
		}
	}
	assert.Empty(t, QRTerminal(strings.Repeat("x", 5000)), "too long for a QR code")
}
