package certs

import (
	"context"
	"io"
	"log"
	"net"
	"net/http"
	"os"
	"os/exec"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

const chromiumPath = "/usr/bin/chromium"

// TestChromiumSecureContextWithSPKI starts the system Chromium against a
// loopback HTTPS server using the bundle: allow-listing the authority's
// SPKIHash makes the page a secure context (what service workers need),
// and a different hash leaves the certificate refused. This is how the
// browser tests reach the hub without installing the authority.
func TestChromiumSecureContextWithSPKI(t *testing.T) {
	if _, err := os.Stat(chromiumPath); err != nil {
		t.Skip("no system Chromium")
	}
	if testing.Short() {
		t.Skip("starts a browser")
	}
	b, err := Ensure(t.TempDir(), Names{Host: "ringside-laptop"}, time.Now())
	require.NoError(t, err)
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	srv := &http.Server{
		Handler: http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
			w.Header().Set("Content-Type", "text/html; charset=utf-8")
			io.WriteString(w, `<!doctype html><body><script>document.body.textContent = isSecureContext ? "SECURE-CONTEXT" : "INSECURE-CONTEXT"</script>`)
		}),
		TLSConfig:         b.TLSConfig(),
		ReadHeaderTimeout: 5 * time.Second,
		ErrorLog:          log.New(io.Discard, "", 0),
	}
	go srv.ServeTLS(ln, "", "")
	defer srv.Close()

	dump := func(spki string) string {
		ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
		defer cancel()
		out, _ := exec.CommandContext(ctx, chromiumPath,
			"--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
			"--disable-component-update", "--disable-sync", "--no-first-run",
			"--user-data-dir="+t.TempDir(),
			"--ignore-certificate-errors-spki-list="+spki,
			"--dump-dom", "https://"+ln.Addr().String()+"/").Output()
		return string(out)
	}
	assert.Contains(t, dump(b.SPKIHash()), "SECURE-CONTEXT")
	other := dump("47DEQpj8HBSa+/TImW+5JCeuQeRkm5NMpJWZG3hSuFU=") // some other key
	assert.NotContains(t, other, "SECURE-CONTEXT")
	assert.False(t, strings.Contains(other, "INSECURE-CONTEXT"), "the page must not load at all")
}
