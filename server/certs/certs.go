// Package certs gives the hub a trusted HTTPS origin on a LAN with no
// internet: a local certificate authority made once and kept in the data
// folder, and a short-lived server (leaf) certificate signed by it whose
// names cover every current LAN address, the host's .local name and
// localhost. Phones trust the authority once; when the laptop moves to a
// new network only the leaf is re-issued, so nothing has to be trusted
// again.
//
// Files in the data folder:
//
//	ca.crt     the authority (PEM, 0644) — the file phones download
//	ca.key     its private key (PEM, 0600) — never served, never logged
//	server.crt the current leaf (PEM, 0644)
//	server.key the leaf's key (PEM, 0600)
//
// The leaf files are disposable: when they are missing, damaged, not
// signed by the authority, short of a current name or near expiry, a new
// leaf is made. The authority files are not: a missing or damaged
// authority is an error, never silently replaced, because replacing it
// would make every paired phone distrust the hub.
package certs

import (
	"bytes"
	"context"
	"crypto"
	"crypto/ecdsa"
	"crypto/elliptic"
	"crypto/rand"
	"crypto/sha256"
	"crypto/tls"
	"crypto/x509"
	"crypto/x509/pkix"
	"encoding/base64"
	"encoding/hex"
	"encoding/pem"
	"errors"
	"fmt"
	"io/fs"
	"math/big"
	"net"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"sync/atomic"
	"time"
)

// File names inside the data folder.
const (
	CACertFile   = "ca.crt"
	CAKeyFile    = "ca.key"
	LeafCertFile = "server.crt"
	LeafKeyFile  = "server.key"
)

// Lifetimes (ENGINEERING.md §1.4 and §1.6).
const (
	// LeafLifetime is the leaf's whole validity, NotBefore to NotAfter:
	// 397 days, under the 398-day limit browsers apply to public CAs and far
	// under Apple's 825-day limit for user-added roots (Apple,
	// support.apple.com HT210176; Chromium net/docs/certificate_lifetimes.md),
	// so it is accepted everywhere. With the one-day backdate the leaf runs
	// out 396 days after it was issued.
	LeafLifetime = 397 * 24 * time.Hour
	// Backdate is how far NotBefore lies in the past, so a phone whose clock
	// is a little slow (no NTP at camp) does not see "not yet valid".
	Backdate = 24 * time.Hour
	// RenewBefore: a leaf with less validity left than this is re-issued.
	RenewBefore = 30 * 24 * time.Hour
	// CALifetime is the authority's validity (common practice for private
	// roots, no source).
	CALifetime = 10 * 365 * 24 * time.Hour
)

// Names are the names the leaf must cover.
type Names struct {
	Host string   // the host name, for the authority's common name
	DNS  []string // e.g. localhost, laptop.local
	IPs  []net.IP // LAN addresses; 127.0.0.1 and ::1 are always added
}

// normalize returns a copy with localhost, 127.0.0.1 and ::1 added, names
// lower-cased, IPv4 addresses in 4-byte form, duplicates removed and both
// lists sorted (so two Names compare by content).
func (n Names) normalize() Names {
	out := Names{Host: n.Host}
	seen := map[string]bool{}
	for _, d := range append([]string{"localhost"}, n.DNS...) {
		d = strings.TrimSuffix(strings.ToLower(strings.TrimSpace(d)), ".")
		if d == "" || seen[d] {
			continue
		}
		seen[d] = true
		out.DNS = append(out.DNS, d)
	}
	seenIP := map[string]bool{}
	for _, ip := range append([]net.IP{net.IPv4(127, 0, 0, 1), net.IPv6loopback}, n.IPs...) {
		if ip == nil {
			continue
		}
		if v4 := ip.To4(); v4 != nil {
			ip = v4
		}
		if k := ip.String(); !seenIP[k] {
			seenIP[k] = true
			out.IPs = append(out.IPs, slices.Clone(ip))
		}
	}
	slices.Sort(out.DNS)
	slices.SortFunc(out.IPs, func(a, b net.IP) int { return bytes.Compare(a.To16(), b.To16()) })
	return out
}

// CampName is the name the hub announces on the camp network (package
// lan) for a host label: cornerbook-<host>.local. It stays the same when
// the camp moves to another network, and the certificate covers it.
func CampName(host string) string { return "cornerbook-" + host + ".local" }

// CurrentNames reads this machine's names: the host name (as
// <host>.local, CampName, and camp.local), localhost, and the addresses of every interface that is up —
// IPv4 except loopback, IPv6 except loopback, link-local and multicast.
func CurrentNames() Names {
	var n Names
	if h, err := os.Hostname(); err == nil {
		n.Host = dnsLabel(h)
	}
	if n.Host == "" {
		n.Host = "hub"
	}
	n.DNS = []string{"localhost", n.Host + ".local", CampName(n.Host), "camp.local"}
	ifaces, err := net.Interfaces()
	if err != nil {
		return n
	}
	for _, ifc := range ifaces {
		if ifc.Flags&net.FlagUp == 0 || ifc.Flags&net.FlagLoopback != 0 {
			continue
		}
		addrs, err := ifc.Addrs()
		if err != nil {
			continue
		}
		for _, a := range addrs {
			var ip net.IP
			switch v := a.(type) {
			case *net.IPNet:
				ip = v.IP
			case *net.IPAddr:
				ip = v.IP
			}
			if usable(ip) {
				n.IPs = append(n.IPs, ip)
			}
		}
	}
	return n
}

// usable reports whether a phone on the LAN could reach the hub at ip.
func usable(ip net.IP) bool {
	if ip == nil || ip.IsLoopback() || ip.IsMulticast() || ip.IsUnspecified() {
		return false
	}
	if ip.To4() != nil {
		return true // includes 169.254/16: an ad-hoc network has nothing better
	}
	return !ip.IsLinkLocalUnicast()
}

// dnsLabel turns a host name into one DNS label: the first dot-separated
// part, lower case, with anything but letters, digits and hyphens turned
// into hyphens (macOS names like "Coach's MacBook" have spaces).
func dnsLabel(h string) string {
	h, _, _ = strings.Cut(strings.TrimSpace(h), ".")
	var b strings.Builder
	for _, r := range strings.ToLower(h) {
		switch {
		case r >= 'a' && r <= 'z', r >= '0' && r <= '9':
			b.WriteRune(r)
		default:
			b.WriteByte('-')
		}
	}
	s := strings.Trim(b.String(), "-")
	if len(s) > 63 {
		s = strings.TrimRight(s[:63], "-")
	}
	return s
}

// Bundle is the authority and the current leaf. It is safe for concurrent
// use; Renew swaps the leaf under running servers.
type Bundle struct {
	dir    string
	ca     *x509.Certificate
	caKey  crypto.Signer
	mu     sync.Mutex // serialises Renew
	leaf   atomic.Pointer[tls.Certificate]
	issued atomic.Int64 // leaves issued by this Bundle (for logs and tests)
}

// Ensure loads the authority from dir, creating it on first start, and
// makes sure the leaf covers names and is not near expiry, re-issuing it
// if needed. The authority is never changed once made.
func Ensure(dir string, names Names, now time.Time) (*Bundle, error) {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, fmt.Errorf("certs: data folder %s: %w", dir, err)
	}
	b := &Bundle{dir: dir}
	if err := b.loadOrCreateCA(names, now); err != nil {
		return nil, err
	}
	if leaf, err := b.loadLeaf(); err == nil {
		b.leaf.Store(leaf)
	}
	if _, err := b.Renew(names, now); err != nil {
		return nil, err
	}
	return b, nil
}

func (b *Bundle) loadOrCreateCA(names Names, now time.Time) error {
	certPath := filepath.Join(b.dir, CACertFile)
	keyPath := filepath.Join(b.dir, CAKeyFile)
	certPEM, certErr := os.ReadFile(certPath)
	keyPEM, keyErr := os.ReadFile(keyPath)
	switch {
	case errors.Is(certErr, fs.ErrNotExist) && errors.Is(keyErr, fs.ErrNotExist):
		return b.createCA(names, now)
	case certErr != nil:
		if errors.Is(certErr, fs.ErrNotExist) {
			return fmt.Errorf("certs: %s is missing but %s exists; restore %s from a backup (moving %s away makes a new authority that every device must trust again)",
				certPath, CAKeyFile, CACertFile, CAKeyFile)
		}
		return fmt.Errorf("certs: reading the authority: %w", certErr)
	case keyErr != nil:
		if errors.Is(keyErr, fs.ErrNotExist) {
			return fmt.Errorf("certs: %s is missing but %s exists; restore %s from a backup (moving %s away makes a new authority that every device must trust again)",
				keyPath, CACertFile, CAKeyFile, CACertFile)
		}
		return fmt.Errorf("certs: reading the authority's key: %w", keyErr)
	}
	ca, err := parseCertPEM(certPEM)
	if err != nil {
		return fmt.Errorf("certs: %s: %w", certPath, err)
	}
	key, err := parseKeyPEM(keyPEM)
	if err != nil {
		return fmt.Errorf("certs: %s: %w", keyPath, err)
	}
	if !samePublicKey(ca.PublicKey, key.Public()) {
		return fmt.Errorf("certs: %s does not belong to %s; restore the matching pair from a backup", CAKeyFile, CACertFile)
	}
	if !ca.IsCA {
		return fmt.Errorf("certs: %s is not a certificate authority", certPath)
	}
	// A key file copied around may have lost its mode; put it back.
	if fi, err := os.Stat(keyPath); err == nil && fi.Mode().Perm() != 0o600 {
		_ = os.Chmod(keyPath, 0o600)
	}
	b.ca, b.caKey = ca, key
	return nil
}

func (b *Bundle) createCA(names Names, now time.Time) error {
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		return fmt.Errorf("certs: making the authority's key: %w", err)
	}
	serial, err := randomSerial()
	if err != nil {
		return err
	}
	host := names.Host
	if host == "" {
		host = "hub"
	}
	tpl := &x509.Certificate{
		SerialNumber: serial,
		// iOS lists a root in Certificate Trust Settings only when it has a
		// common name (ENGINEERING.md §1.4).
		Subject: pkix.Name{
			CommonName:   fmt.Sprintf("Cornerbook camp authority (%s, %s)", host, now.UTC().Format("2006-01")),
			Organization: []string{"Cornerbook hub"},
		},
		NotBefore:             now.Add(-Backdate),
		NotAfter:              now.Add(-Backdate).Add(CALifetime),
		IsCA:                  true,
		BasicConstraintsValid: true,
		MaxPathLen:            0,
		MaxPathLenZero:        true,
		KeyUsage:              x509.KeyUsageCertSign | x509.KeyUsageCRLSign,
	}
	der, err := x509.CreateCertificate(rand.Reader, tpl, tpl, key.Public(), key)
	if err != nil {
		return fmt.Errorf("certs: signing the authority: %w", err)
	}
	ca, err := x509.ParseCertificate(der)
	if err != nil {
		return fmt.Errorf("certs: reading back the authority: %w", err)
	}
	keyDER, err := x509.MarshalPKCS8PrivateKey(key)
	if err != nil {
		return fmt.Errorf("certs: encoding the authority's key: %w", err)
	}
	// Key first: a crash between the two writes leaves a key without a
	// certificate, which Ensure reports instead of silently replacing.
	if err := writeFileAtomic(filepath.Join(b.dir, CAKeyFile), pemBlock("PRIVATE KEY", keyDER), 0o600); err != nil {
		return err
	}
	if err := writeFileAtomic(filepath.Join(b.dir, CACertFile), pemBlock("CERTIFICATE", der), 0o644); err != nil {
		return err
	}
	b.ca, b.caKey = ca, key
	return nil
}

func (b *Bundle) loadLeaf() (*tls.Certificate, error) {
	certPEM, err := os.ReadFile(filepath.Join(b.dir, LeafCertFile))
	if err != nil {
		return nil, err
	}
	keyPEM, err := os.ReadFile(filepath.Join(b.dir, LeafKeyFile))
	if err != nil {
		return nil, err
	}
	c, err := tls.X509KeyPair(certPEM, keyPEM)
	if err != nil {
		return nil, err
	}
	if c.Leaf == nil {
		if c.Leaf, err = x509.ParseCertificate(c.Certificate[0]); err != nil {
			return nil, err
		}
	}
	c.Certificate = [][]byte{c.Certificate[0], b.ca.Raw} // served chain: leaf, authority
	return &c, nil
}

// Renew re-issues the leaf if it does not cover every name in names, has
// less than RenewBefore left, is not yet valid at now, or was not signed
// by this authority. It reports whether a new leaf was issued. Running
// servers pick the new leaf up on their next handshake.
func (b *Bundle) Renew(names Names, now time.Time) (bool, error) {
	b.mu.Lock()
	defer b.mu.Unlock()
	names = names.normalize()
	if cur := b.leaf.Load(); cur != nil && b.leafGood(cur.Leaf, names, now) {
		return false, nil
	}
	leaf, err := b.issueLeaf(names, now)
	if err != nil {
		return false, err
	}
	b.leaf.Store(leaf)
	b.issued.Add(1)
	return true, nil
}

// NeedsRenewal reports why the current leaf would be re-issued for names
// at now, or "" if it would not.
func (b *Bundle) NeedsRenewal(names Names, now time.Time) string {
	cur := b.leaf.Load()
	if cur == nil {
		return "no server certificate yet"
	}
	return b.leafProblem(cur.Leaf, names.normalize(), now)
}

func (b *Bundle) leafGood(leaf *x509.Certificate, names Names, now time.Time) bool {
	return b.leafProblem(leaf, names, now) == ""
}

func (b *Bundle) leafProblem(leaf *x509.Certificate, names Names, now time.Time) string {
	if leaf == nil {
		return "no server certificate yet"
	}
	if err := leaf.CheckSignatureFrom(b.ca); err != nil {
		return "the server certificate was not signed by this authority"
	}
	if now.Before(leaf.NotBefore) {
		return "the server certificate is not yet valid (the clock went back)"
	}
	if leaf.NotAfter.Sub(now) < RenewBefore {
		return fmt.Sprintf("the server certificate expires %s", leaf.NotAfter.UTC().Format(time.DateOnly))
	}
	for _, d := range names.DNS {
		if !slices.Contains(leaf.DNSNames, d) {
			return fmt.Sprintf("the server certificate does not name %s", d)
		}
	}
	for _, ip := range names.IPs {
		if !slices.ContainsFunc(leaf.IPAddresses, ip.Equal) {
			return fmt.Sprintf("the server certificate does not name %s", ip)
		}
	}
	return ""
}

func (b *Bundle) issueLeaf(names Names, now time.Time) (*tls.Certificate, error) {
	key, err := ecdsa.GenerateKey(elliptic.P256(), rand.Reader)
	if err != nil {
		return nil, fmt.Errorf("certs: making the server key: %w", err)
	}
	serial, err := randomSerial()
	if err != nil {
		return nil, err
	}
	notBefore := now.Add(-Backdate)
	notAfter := notBefore.Add(LeafLifetime)
	if notAfter.After(b.ca.NotAfter) {
		notAfter = b.ca.NotAfter // a leaf cannot outlive its authority
	}
	cn := "localhost"
	if len(names.DNS) > 0 {
		cn = names.DNS[0]
		for _, d := range names.DNS {
			if strings.HasSuffix(d, ".local") {
				cn = d
				break
			}
		}
	}
	tpl := &x509.Certificate{
		SerialNumber: serial,
		Subject:      pkix.Name{CommonName: cn}, // informational; names are in the SANs
		NotBefore:    notBefore,
		NotAfter:     notAfter,
		KeyUsage:     x509.KeyUsageDigitalSignature,
		// Apple requires the serverAuth EKU (support.apple.com HT210176).
		ExtKeyUsage:           []x509.ExtKeyUsage{x509.ExtKeyUsageServerAuth},
		BasicConstraintsValid: true,
		DNSNames:              names.DNS,
		IPAddresses:           names.IPs,
	}
	der, err := x509.CreateCertificate(rand.Reader, tpl, b.ca, key.Public(), b.caKey)
	if err != nil {
		return nil, fmt.Errorf("certs: signing the server certificate: %w", err)
	}
	leaf, err := x509.ParseCertificate(der)
	if err != nil {
		return nil, fmt.Errorf("certs: reading back the server certificate: %w", err)
	}
	keyDER, err := x509.MarshalPKCS8PrivateKey(key)
	if err != nil {
		return nil, fmt.Errorf("certs: encoding the server key: %w", err)
	}
	// The leaf on disk saves re-issuing at each start. A failed write is an
	// error (a full disk must not go unnoticed); the old leaf keeps serving.
	if err := writeFileAtomic(filepath.Join(b.dir, LeafKeyFile), pemBlock("PRIVATE KEY", keyDER), 0o600); err != nil {
		return nil, err
	}
	if err := writeFileAtomic(filepath.Join(b.dir, LeafCertFile), pemBlock("CERTIFICATE", der), 0o644); err != nil {
		return nil, err
	}
	return &tls.Certificate{Certificate: [][]byte{der, b.ca.Raw}, PrivateKey: key, Leaf: leaf}, nil
}

// TLSConfig returns a server configuration that always presents the
// current leaf (hot-swapped by Renew), TLS 1.2 or later.
func (b *Bundle) TLSConfig() *tls.Config {
	return &tls.Config{
		MinVersion: tls.VersionTLS12,
		GetCertificate: func(*tls.ClientHelloInfo) (*tls.Certificate, error) {
			if c := b.leaf.Load(); c != nil {
				return c, nil
			}
			return nil, errors.New("certs: no server certificate")
		},
	}
}

// CA returns the authority's certificate.
func (b *Bundle) CA() *x509.Certificate { return b.ca }

// Leaf returns the current server certificate.
func (b *Bundle) Leaf() *x509.Certificate {
	if c := b.leaf.Load(); c != nil {
		return c.Leaf
	}
	return nil
}

// Issued counts the leaves this Bundle has issued since Ensure.
func (b *Bundle) Issued() int { return int(b.issued.Load()) }

// CADER returns the authority's certificate in DER, the form served as
// application/x-x509-ca-cert to phones.
func (b *Bundle) CADER() []byte { return slices.Clone(b.ca.Raw) }

// CAPEM returns the authority's certificate in PEM.
func (b *Bundle) CAPEM() []byte { return pemBlock("CERTIFICATE", b.ca.Raw) }

// Fingerprint is the SHA-256 of the authority's DER as colon-separated
// upper-case hex, the form phones show in their certificate details.
func (b *Bundle) Fingerprint() string {
	sum := sha256.Sum256(b.ca.Raw)
	h := strings.ToUpper(hex.EncodeToString(sum[:]))
	parts := make([]string, 0, len(sum))
	for i := 0; i < len(h); i += 2 {
		parts = append(parts, h[i:i+2])
	}
	return strings.Join(parts, ":")
}

// SPKIHash is the base64 SHA-256 of the authority's SubjectPublicKeyInfo
// (the form Chromium's --ignore-certificate-errors-spki-list takes). The
// hub serves the authority after the leaf in its chain, so the hash
// matches a certificate Chromium is shown.
func (b *Bundle) SPKIHash() string {
	sum := sha256.Sum256(b.ca.RawSubjectPublicKeyInfo)
	return base64.StdEncoding.EncodeToString(sum[:])
}

func randomSerial() (*big.Int, error) {
	s, err := rand.Int(rand.Reader, new(big.Int).Lsh(big.NewInt(1), 128))
	if err != nil {
		return nil, fmt.Errorf("certs: serial number: %w", err)
	}
	return s, nil
}

func pemBlock(typ string, der []byte) []byte {
	return pem.EncodeToMemory(&pem.Block{Type: typ, Bytes: der})
}

func parseCertPEM(data []byte) (*x509.Certificate, error) {
	blk, _ := pem.Decode(data)
	if blk == nil || blk.Type != "CERTIFICATE" {
		return nil, errors.New("not a PEM certificate")
	}
	return x509.ParseCertificate(blk.Bytes)
}

func parseKeyPEM(data []byte) (crypto.Signer, error) {
	blk, _ := pem.Decode(data)
	if blk == nil {
		return nil, errors.New("not a PEM key")
	}
	var k any
	var err error
	switch blk.Type {
	case "PRIVATE KEY":
		k, err = x509.ParsePKCS8PrivateKey(blk.Bytes)
	case "EC PRIVATE KEY":
		k, err = x509.ParseECPrivateKey(blk.Bytes)
	default:
		return nil, fmt.Errorf("unexpected PEM block %q", blk.Type)
	}
	if err != nil {
		return nil, err
	}
	s, ok := k.(crypto.Signer)
	if !ok {
		return nil, errors.New("the key cannot sign")
	}
	return s, nil
}

func samePublicKey(a, b crypto.PublicKey) bool {
	type equaler interface{ Equal(crypto.PublicKey) bool }
	e, ok := a.(equaler)
	return ok && e.Equal(b)
}

// writeFileAtomic writes data to a temporary file in the same folder,
// syncs it, renames it over path and syncs the folder, so a crash leaves
// either the old file or the new one, never a torn one.
func writeFileAtomic(path string, data []byte, mode os.FileMode) error {
	dir := filepath.Dir(path)
	f, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return fmt.Errorf("certs: writing %s: %w", path, err)
	}
	tmp := f.Name()
	fail := func(err error) error {
		f.Close()
		os.Remove(tmp)
		return fmt.Errorf("certs: writing %s: %w", path, err)
	}
	if err := f.Chmod(mode); err != nil {
		return fail(err)
	}
	if _, err := f.Write(data); err != nil {
		return fail(err)
	}
	if err := f.Sync(); err != nil {
		return fail(err)
	}
	if err := f.Close(); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("certs: writing %s: %w", path, err)
	}
	if err := os.Rename(tmp, path); err != nil {
		os.Remove(tmp)
		return fmt.Errorf("certs: writing %s: %w", path, err)
	}
	if d, err := os.Open(dir); err == nil {
		_ = d.Sync() // best effort: not every platform syncs folders
		d.Close()
	}
	return nil
}

// Keep re-checks the names every interval until ctx ends and renews the
// leaf when the laptop's addresses change (a new venue's Wi-Fi while the
// hub runs) or expiry nears. report, if not nil, is told of each renewal
// (with the reason) and each failure; names is usually CurrentNames and
// now time.Now.
func (b *Bundle) Keep(ctx context.Context, every time.Duration, names func() Names, now func() time.Time, report func(reason string, err error)) {
	t := time.NewTicker(every)
	defer t.Stop()
	for {
		select {
		case <-ctx.Done():
			return
		case <-t.C:
		}
		n, at := names(), now()
		reason := b.NeedsRenewal(n, at)
		if reason == "" {
			continue
		}
		changed, err := b.Renew(n, at)
		if report != nil && (changed || err != nil) {
			report(reason, err)
		}
	}
}
