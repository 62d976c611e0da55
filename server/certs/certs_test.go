package certs

import (
	"context"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/sha256"
	"crypto/tls"
	"crypto/x509"
	"encoding/hex"
	"encoding/pem"
	"errors"
	"io"
	"log"
	"net"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

var t0 = time.Date(2026, 12, 1, 9, 0, 0, 0, time.UTC)

// campNames are invented addresses; nothing is ever sent to them, they
// are only checked against the certificate.
func campNames() Names {
	return Names{
		Host: "ringside-laptop",
		DNS:  []string{"localhost", "ringside-laptop.local"},
		IPs:  []net.IP{net.ParseIP("192.168.50.10"), net.ParseIP("10.42.0.1"), net.ParseIP("fd12:3456::10")},
	}
}

func caPool(b *Bundle) *x509.CertPool {
	p := x509.NewCertPool()
	p.AddCert(b.CA())
	return p
}

func verifyName(t *testing.T, b *Bundle, name string, now time.Time) error {
	t.Helper()
	_, err := b.Leaf().Verify(x509.VerifyOptions{
		DNSName:     name, // an IP literal is matched against the IP SANs
		Roots:       caPool(b),
		CurrentTime: now,
		KeyUsages:   []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth},
	})
	return err
}

func TestEnsureMakesAuthorityAndLeafThatVerifies(t *testing.T) {
	dir := t.TempDir()
	b, err := Ensure(dir, campNames(), t0)
	require.NoError(t, err)

	for _, name := range []string{"localhost", "ringside-laptop.local", "192.168.50.10", "10.42.0.1", "fd12:3456::10", "127.0.0.1", "::1"} {
		assert.NoError(t, verifyName(t, b, name, t0), name)
		// Phones with a clock a few hours slow still accept it.
		assert.NoError(t, verifyName(t, b, name, t0.Add(-12*time.Hour)), name)
	}
	assert.Error(t, verifyName(t, b, "other-laptop.local", t0), "a name the leaf does not carry must fail")
	assert.Error(t, verifyName(t, b, "192.168.50.11", t0))

	leaf := b.Leaf()
	assert.LessOrEqual(t, leaf.NotAfter.Sub(leaf.NotBefore), 397*24*time.Hour, "validity ≤ 397 days")
	assert.Equal(t, t0.Add(-24*time.Hour), leaf.NotBefore)
	assert.Equal(t, []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth}, leaf.ExtKeyUsage)
	assert.Equal(t, x509.KeyUsageDigitalSignature, leaf.KeyUsage)
	assert.False(t, leaf.IsCA)
	lk, ok := leaf.PublicKey.(*ecdsa.PublicKey)
	require.True(t, ok)
	assert.Equal(t, elliptic.P256(), lk.Curve)

	ca := b.CA()
	assert.True(t, strings.HasPrefix(ca.Subject.CommonName, "Cornerbook camp authority (ringside-laptop, 2026-12"), ca.Subject.CommonName)
	assert.True(t, ca.IsCA)
	assert.True(t, ca.BasicConstraintsValid)
	assert.Equal(t, 0, ca.MaxPathLen)
	assert.True(t, ca.MaxPathLenZero)
	assert.Equal(t, x509.KeyUsageCertSign|x509.KeyUsageCRLSign, ca.KeyUsage)
	assert.Greater(t, ca.NotAfter.Sub(t0), 9*365*24*time.Hour)
	assert.LessOrEqual(t, ca.SerialNumber.BitLen(), 128)
	assert.Greater(t, ca.SerialNumber.BitLen(), 64, "serial is random 128-bit (fails with probability 2^-64)")
	ck, ok := ca.PublicKey.(*ecdsa.PublicKey)
	require.True(t, ok)
	assert.Equal(t, elliptic.P256(), ck.Curve)

	for file, mode := range map[string]os.FileMode{CAKeyFile: 0o600, LeafKeyFile: 0o600, CACertFile: 0o644, LeafCertFile: 0o644} {
		fi, err := os.Stat(filepath.Join(dir, file))
		require.NoError(t, err, file)
		assert.Equal(t, mode, fi.Mode().Perm(), file)
	}
	// No temporary files left behind.
	entries, _ := os.ReadDir(dir)
	assert.Len(t, entries, 4)
}

func TestAddressChangeReissuesLeafKeepsAuthority(t *testing.T) {
	dir := t.TempDir()
	b, err := Ensure(dir, campNames(), t0)
	require.NoError(t, err)
	caDER := b.CADER()
	oldSerial := b.Leaf().SerialNumber

	// Same names, later start: the leaf on disk is reused.
	b2, err := Ensure(dir, campNames(), t0.Add(48*time.Hour))
	require.NoError(t, err)
	assert.Equal(t, 0, b2.Issued())
	assert.Equal(t, oldSerial, b2.Leaf().SerialNumber)

	// New venue: a new address.
	moved := campNames()
	moved.IPs = []net.IP{net.ParseIP("192.168.8.23")}
	t1 := t0.Add(72 * time.Hour)
	b3, err := Ensure(dir, moved, t1)
	require.NoError(t, err)
	assert.Equal(t, 1, b3.Issued())
	assert.NotEqual(t, oldSerial, b3.Leaf().SerialNumber)
	assert.Equal(t, caDER, b3.CADER(), "the authority never changes")
	assert.Equal(t, b.Fingerprint(), b3.Fingerprint())
	assert.NoError(t, verifyName(t, b3, "192.168.8.23", t1))
	assert.NoError(t, verifyName(t, b3, "ringside-laptop.local", t1))

	// The file on disk is the authority too.
	onDisk, err := os.ReadFile(filepath.Join(dir, CACertFile))
	require.NoError(t, err)
	blk, _ := pem.Decode(onDisk)
	require.NotNil(t, blk)
	assert.Equal(t, caDER, blk.Bytes)

	// Renew on a running bundle: same thing, hot.
	again := moved
	again.DNS = append(again.DNS, "camp.local")
	changed, err := b3.Renew(again, t1)
	require.NoError(t, err)
	assert.True(t, changed)
	assert.NoError(t, verifyName(t, b3, "camp.local", t1))
	assert.Equal(t, caDER, b3.CADER())
}

func TestNearExpiryReissues(t *testing.T) {
	b, err := Ensure(t.TempDir(), campNames(), t0)
	require.NoError(t, err)
	end := b.Leaf().NotAfter

	changed, err := b.Renew(campNames(), end.Add(-31*24*time.Hour))
	require.NoError(t, err)
	assert.False(t, changed, "31 days left: keep")
	assert.Empty(t, b.NeedsRenewal(campNames(), end.Add(-31*24*time.Hour)))

	late := end.Add(-29 * 24 * time.Hour)
	assert.Contains(t, b.NeedsRenewal(campNames(), late), "expires")
	changed, err = b.Renew(campNames(), late)
	require.NoError(t, err)
	assert.True(t, changed, "29 days left: re-issue")
	assert.True(t, b.Leaf().NotAfter.After(end))
	assert.NoError(t, verifyName(t, b, "10.42.0.1", late))
}

func TestClockWentBackReissues(t *testing.T) {
	b, err := Ensure(t.TempDir(), campNames(), t0)
	require.NoError(t, err)
	back := t0.Add(-72 * time.Hour)
	changed, err := b.Renew(campNames(), back)
	require.NoError(t, err)
	assert.True(t, changed)
	assert.False(t, b.Leaf().NotBefore.After(back), "the new leaf is valid at the (earlier) clock")
	// The authority itself is backdated by a day only: a clock set more than
	// a day before the authority was made cannot be helped by a new leaf.
	assert.NoError(t, verifyName(t, b, "localhost", t0.Add(-20*time.Hour)))
}

func TestLoopbackAlwaysCovered(t *testing.T) {
	b, err := Ensure(t.TempDir(), Names{}, t0)
	require.NoError(t, err)
	for _, n := range []string{"localhost", "127.0.0.1", "::1"} {
		assert.NoError(t, verifyName(t, b, n, t0), n)
	}
	assert.Contains(t, b.CA().Subject.CommonName, "(hub, 2026-12)")
}

func TestDamagedAuthorityIsAnErrorNotReplaced(t *testing.T) {
	dir := t.TempDir()
	_, err := Ensure(dir, campNames(), t0)
	require.NoError(t, err)
	caCert, _ := os.ReadFile(filepath.Join(dir, CACertFile))

	// Missing key.
	keyPath := filepath.Join(dir, CAKeyFile)
	key, _ := os.ReadFile(keyPath)
	require.NoError(t, os.Remove(keyPath))
	_, err = Ensure(dir, campNames(), t0)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "ca.key is missing")
	after, _ := os.ReadFile(filepath.Join(dir, CACertFile))
	assert.Equal(t, caCert, after, "the authority is left as it was")

	// A key from somewhere else.
	other := t.TempDir()
	_, err = Ensure(other, campNames(), t0)
	require.NoError(t, err)
	otherKey, _ := os.ReadFile(filepath.Join(other, CAKeyFile))
	require.NoError(t, os.WriteFile(keyPath, otherKey, 0o600))
	_, err = Ensure(dir, campNames(), t0)
	require.Error(t, err)
	assert.Contains(t, err.Error(), "does not belong")

	// Put the real key back with a loose mode: it works and the mode is fixed.
	require.NoError(t, os.WriteFile(keyPath, key, 0o644))
	require.NoError(t, os.Chmod(keyPath, 0o644))
	_, err = Ensure(dir, campNames(), t0)
	require.NoError(t, err)
	fi, _ := os.Stat(keyPath)
	assert.Equal(t, os.FileMode(0o600), fi.Mode().Perm())
}

func TestDamagedLeafIsReplaced(t *testing.T) {
	dir := t.TempDir()
	b, err := Ensure(dir, campNames(), t0)
	require.NoError(t, err)
	require.NoError(t, os.WriteFile(filepath.Join(dir, LeafCertFile), []byte("torn"), 0o644))
	b2, err := Ensure(dir, campNames(), t0)
	require.NoError(t, err)
	assert.Equal(t, 1, b2.Issued())
	assert.Equal(t, b.CADER(), b2.CADER())
	assert.NoError(t, verifyName(t, b2, "192.168.50.10", t0))
}

// serve runs an HTTPS server on loopback with the bundle's TLS config.
func serve(t *testing.T, b *Bundle) string {
	t.Helper()
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	srv := &http.Server{
		Handler:           http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) { io.WriteString(w, "ok") }),
		TLSConfig:         b.TLSConfig(),
		ReadHeaderTimeout: 5 * time.Second,
		ErrorLog:          log.New(io.Discard, "", 0), // refused handshakes are expected here
	}
	go srv.ServeTLS(ln, "", "")
	t.Cleanup(func() { srv.Close() })
	return ln.Addr().String()
}

func TestRealTLSHandshake(t *testing.T) {
	// Real time here: the handshake checks validity against the clock.
	now := time.Now()
	b, err := Ensure(t.TempDir(), campNames(), now)
	require.NoError(t, err)
	addr := serve(t, b)

	for _, sni := range []string{"", "localhost", "ringside-laptop.local"} {
		conn, err := tls.Dial("tcp", addr, &tls.Config{RootCAs: caPool(b), ServerName: sniOr(sni, "127.0.0.1")})
		require.NoError(t, err, sni)
		st := conn.ConnectionState()
		assert.Equal(t, b.Leaf().SerialNumber, st.PeerCertificates[0].SerialNumber)
		// The authority follows the leaf, so Chromium's SPKI allow-list
		// (SPKIHash) finds it in the chain.
		require.Len(t, st.PeerCertificates, 2)
		assert.Equal(t, b.CADER(), st.PeerCertificates[1].Raw)
		assert.GreaterOrEqual(t, st.Version, uint16(tls.VersionTLS12))
		conn.Close()
	}

	client := &http.Client{Transport: &http.Transport{TLSClientConfig: &tls.Config{RootCAs: caPool(b)}}}
	res, err := client.Get("https://" + addr + "/")
	require.NoError(t, err)
	body, _ := io.ReadAll(res.Body)
	res.Body.Close()
	assert.Equal(t, "ok", string(body))

	// Without the authority: refused.
	_, err = tls.Dial("tcp", addr, &tls.Config{RootCAs: x509.NewCertPool(), ServerName: "127.0.0.1"})
	require.Error(t, err)
	var unknown x509.UnknownAuthorityError
	assert.True(t, errors.As(err, &unknown), "%v", err)

	// TLS 1.1 is refused.
	_, err = tls.Dial("tcp", addr, &tls.Config{RootCAs: caPool(b), MaxVersion: tls.VersionTLS11})
	assert.Error(t, err)

	// Hot swap: a renewal is served on the next handshake without a restart.
	old := b.Leaf().SerialNumber
	moved := campNames()
	moved.IPs = []net.IP{net.ParseIP("192.168.8.23")}
	changed, err := b.Renew(moved, now)
	require.NoError(t, err)
	require.True(t, changed)
	conn, err := tls.Dial("tcp", addr, &tls.Config{RootCAs: caPool(b), ServerName: "localhost"})
	require.NoError(t, err)
	got := conn.ConnectionState().PeerCertificates[0]
	conn.Close()
	assert.NotEqual(t, old, got.SerialNumber)
	assert.Equal(t, b.Leaf().SerialNumber, got.SerialNumber)
}

func sniOr(s, d string) string {
	if s == "" {
		return d
	}
	return s
}

func TestFingerprintAndSPKI(t *testing.T) {
	dir := t.TempDir()
	b, err := Ensure(dir, campNames(), t0)
	require.NoError(t, err)
	fp := b.Fingerprint()
	assert.Regexp(t, regexp.MustCompile(`^([0-9A-F]{2}:){31}[0-9A-F]{2}$`), fp)
	sum := sha256.Sum256(b.CADER())
	assert.Equal(t, strings.ToUpper(strings.ReplaceAll(fp, ":", "")), strings.ToUpper(hex.EncodeToString(sum[:])))

	// Outside check: OpenSSL computes the same fingerprint, and the SPKI
	// hash by the recipe Chromium documents for
	// --ignore-certificate-errors-spki-list (x509 -pubkey | pkey -pubin
	// -outform der | dgst -sha256 -binary | base64).
	if _, err := exec.LookPath("openssl"); err != nil {
		t.Skip("openssl not installed")
	}
	crt := filepath.Join(dir, CACertFile)
	out, err := exec.Command("openssl", "x509", "-in", crt, "-noout", "-fingerprint", "-sha256").Output()
	require.NoError(t, err)
	assert.Equal(t, fp, strings.TrimSpace(strings.SplitN(string(out), "=", 2)[1]))

	spki, err := exec.Command("sh", "-c",
		"openssl x509 -in '"+crt+"' -pubkey -noout | openssl pkey -pubin -outform der | openssl dgst -sha256 -binary | openssl base64 -A").Output()
	require.NoError(t, err)
	assert.Equal(t, strings.TrimSpace(string(spki)), b.SPKIHash())

	// And OpenSSL verifies the leaf against the authority.
	out, err = exec.Command("openssl", "verify", "-CAfile", crt, "-purpose", "sslserver",
		"-attime", strconv.FormatInt(t0.Unix(), 10), filepath.Join(dir, LeafCertFile)).CombinedOutput()
	assert.NoError(t, err, string(out))
}

func TestCADERIsACopy(t *testing.T) {
	b, err := Ensure(t.TempDir(), campNames(), t0)
	require.NoError(t, err)
	d := b.CADER()
	d[0] ^= 0xff
	assert.NotEqual(t, d, b.CADER())
	blk, _ := pem.Decode(b.CAPEM())
	require.NotNil(t, blk)
	assert.Equal(t, b.CADER(), blk.Bytes)
}

func TestCurrentNames(t *testing.T) {
	n := CurrentNames()
	assert.NotEmpty(t, n.Host)
	assert.Contains(t, n.DNS, "localhost")
	assert.Contains(t, n.DNS, n.Host+".local")
	for _, ip := range n.IPs {
		assert.False(t, ip.IsLoopback(), ip.String())
		assert.False(t, ip.IsMulticast(), ip.String())
		if ip.To4() == nil {
			assert.False(t, ip.IsLinkLocalUnicast(), ip.String())
		}
	}
	// Whatever this machine has, Ensure accepts it and the leaf covers it.
	b, err := Ensure(t.TempDir(), n, t0)
	require.NoError(t, err)
	for _, ip := range n.IPs {
		assert.NoError(t, verifyName(t, b, ip.String(), t0), ip.String())
	}
	assert.NoError(t, verifyName(t, b, n.Host+".local", t0))
}

func TestUsable(t *testing.T) {
	for ip, want := range map[string]bool{
		"192.168.1.20": true, "10.0.0.7": true, "169.254.3.4": true, "fd00::7": true, "2001:db8::1": true,
		"127.0.0.1": false, "::1": false, "fe80::1": false, "224.0.0.251": false, "0.0.0.0": false,
	} {
		assert.Equal(t, want, usable(net.ParseIP(ip)), ip)
	}
}

func TestDNSLabel(t *testing.T) {
	for in, want := range map[string]string{
		"ringside-laptop":       "ringside-laptop",
		"Coach's MacBook Pro":   "coach-s-macbook-pro",
		"gym-box.lan":           "gym-box",
		"  UPPER ":              "upper",
		strings.Repeat("a", 80): strings.Repeat("a", 63),
	} {
		assert.Equal(t, want, dnsLabel(in), in)
	}
}

func TestNormalizeDeduplicates(t *testing.T) {
	n := Names{
		DNS: []string{"Laptop.local.", "laptop.local", "localhost"},
		IPs: []net.IP{net.ParseIP("192.168.1.2"), net.IPv4(192, 168, 1, 2), net.ParseIP("::1")},
	}.normalize()
	assert.Equal(t, []string{"laptop.local", "localhost"}, n.DNS)
	assert.Len(t, n.IPs, 3) // 127.0.0.1, 192.168.1.2, ::1
}

func TestKeepFollowsAddressChanges(t *testing.T) {
	b, err := Ensure(t.TempDir(), campNames(), t0)
	require.NoError(t, err)
	caDER := b.CADER()
	var mu sync.Mutex
	current := campNames()
	names := func() Names { mu.Lock(); defer mu.Unlock(); return current }
	renewed := make(chan string, 4)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	go b.Keep(ctx, 5*time.Millisecond, names, func() time.Time { return t0 }, func(reason string, err error) {
		assert.NoError(t, err)
		renewed <- reason
	})

	mu.Lock()
	current.IPs = append(current.IPs, net.ParseIP("192.168.8.23"))
	mu.Unlock()
	select {
	case reason := <-renewed:
		assert.Contains(t, reason, "192.168.8.23")
	case <-time.After(5 * time.Second):
		t.Fatal("the new address was not picked up")
	}
	assert.NoError(t, verifyName(t, b, "192.168.8.23", t0))
	assert.Equal(t, caDER, b.CADER())
	// No further renewals while nothing changes.
	select {
	case r := <-renewed:
		t.Fatalf("renewed again without a change: %s", r)
	case <-time.After(50 * time.Millisecond):
	}
}
