package auth

import (
	"errors"
	"net"
	"net/http"
	"net/url"
	"strings"

	devsync "cornerbook/sync"
)

// Status is the HTTP status for an error of this package: 429 throttled
// (send RetryAfter from the *ThrottledError), 401 for a missing, unknown
// or revoked token or a wrong passphrase or setup code, 403 forbidden,
// 404 unknown device or join code, 410 used or expired join code, 409 for
// the passphrase being (or not yet being) set, 400 for bad input naming a
// field, 500 for anything else.
func Status(err error) int {
	var fe *devsync.FieldError
	switch {
	case err == nil:
		return http.StatusOK
	case errors.Is(err, ErrThrottled):
		return http.StatusTooManyRequests
	case errors.Is(err, ErrNoToken), errors.Is(err, ErrUnknownToken), errors.Is(err, ErrRevoked),
		errors.Is(err, ErrWrongPassphrase), errors.Is(err, ErrBadSetupCode):
		return http.StatusUnauthorized
	case errors.Is(err, ErrForbidden):
		return http.StatusForbidden
	case errors.Is(err, ErrUnknownDevice), errors.Is(err, ErrJoinUnknown):
		return http.StatusNotFound
	case errors.Is(err, ErrJoinUsed), errors.Is(err, ErrJoinExpired):
		return http.StatusGone
	case errors.Is(err, ErrPassphraseSet), errors.Is(err, ErrNoPassphrase):
		return http.StatusConflict
	case errors.As(err, &fe):
		return http.StatusBadRequest
	}
	return http.StatusInternalServerError
}

// FromLaptop reports whether r comes from a browser on the hub laptop
// itself, the one place that needs no token: the peer is a loopback
// address, the Host names loopback (a DNS-rebinding page would carry its
// own host name), and any Origin is that same loopback origin (another
// site open in the laptop's browser cannot post to the hub). Any program
// running on the laptop passes; the laptop is the coach's.
func FromLaptop(r *http.Request) bool {
	peer, _, err := net.SplitHostPort(r.RemoteAddr)
	if err != nil {
		return false
	}
	if ip := net.ParseIP(peer); ip == nil || !ip.IsLoopback() {
		return false
	}
	if !loopbackHost(r.Host) {
		return false
	}
	if r.Header.Get("Sec-Fetch-Site") == "cross-site" {
		return false
	}
	if o := r.Header.Get("Origin"); o != "" {
		u, err := url.Parse(o)
		if err != nil || !strings.EqualFold(u.Host, r.Host) || !loopbackHost(u.Host) {
			return false
		}
	}
	return true
}

func loopbackHost(hostport string) bool {
	h := hostport
	if host, _, err := net.SplitHostPort(hostport); err == nil {
		h = host
	}
	h = strings.TrimSuffix(strings.ToLower(strings.Trim(h, "[]")), ".")
	if h == "localhost" {
		return true
	}
	ip := net.ParseIP(h)
	return ip != nil && ip.IsLoopback()
}
