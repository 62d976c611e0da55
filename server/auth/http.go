package auth

import (
	"net/http"
	"net/url"
	"strings"
)

// WebSocket token passing. Browsers cannot set headers on a WebSocket, and
// a token in the URL ends up in logs and history, so the app offers two
// subprotocols: new WebSocket(url, [WSProtocol, WSTokenPrefix + token]).
// The server's upgrader must list WSProtocol in Subprotocols so the
// handshake selects it (never echo the token one).
const (
	WSProtocol    = "cornerbook"
	WSTokenPrefix = "cornerbook.token."
)

// BearerToken returns the device token of a request: from
// "Authorization: Bearer <token>", else from the WebSocket subprotocol
// list; "" if none.
func BearerToken(r *http.Request) string {
	if h := r.Header.Get("Authorization"); h != "" {
		scheme, tok, ok := strings.Cut(h, " ")
		if ok && strings.EqualFold(scheme, "Bearer") {
			return strings.TrimSpace(tok)
		}
		return ""
	}
	for _, h := range r.Header.Values("Sec-WebSocket-Protocol") {
		for _, p := range strings.Split(h, ",") {
			if tok, ok := strings.CutPrefix(strings.TrimSpace(p), WSTokenPrefix); ok {
				return tok
			}
		}
	}
	return ""
}

// SameOrigin is a WebSocket CheckOrigin that insists on a browser Origin
// naming the host the request came to. Unlike gorilla's default it
// refuses a missing Origin: every legitimate client is the app in a
// browser (Go test clients must set one).
func SameOrigin(r *http.Request) bool {
	o := r.Header.Get("Origin")
	if o == "" {
		return false
	}
	u, err := url.Parse(o)
	if err != nil || (u.Scheme != "https" && u.Scheme != "http") {
		return false
	}
	return strings.EqualFold(u.Host, r.Host)
}

// SecurityHeaders sets the headers every answer carries: a content
// security policy allowing only the hub's own origin (scripts, styles,
// workers and the manifest from self; data: images for QR codes; no
// framing), no MIME sniffing, no referrer. connect-src names the
// WebSocket origin explicitly because older Safari does not count ws: and
// wss: as 'self' (CSP Level 3 does).
func SecurityHeaders(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		h := w.Header()
		h.Set("Content-Security-Policy", CSP(r))
		h.Set("X-Content-Type-Options", "nosniff")
		h.Set("X-Frame-Options", "DENY")
		h.Set("Referrer-Policy", "no-referrer")
		h.Set("Cross-Origin-Opener-Policy", "same-origin")
		h.Set("Cross-Origin-Resource-Policy", "same-origin")
		next.ServeHTTP(w, r)
	})
}

// CSP is the Content-Security-Policy for a request.
func CSP(r *http.Request) string {
	connect := "'self'"
	if host := r.Host; safeHost(host) {
		ws := "ws://"
		if r.TLS != nil {
			ws = "wss://"
		}
		connect += " " + ws + host
	}
	return "default-src 'self'; script-src 'self'; style-src 'self'; img-src 'self' data:; " +
		"connect-src " + connect + "; worker-src 'self'; manifest-src 'self'; object-src 'none'; " +
		"base-uri 'none'; form-action 'self'; frame-ancestors 'none'"
}

// safeHost accepts host[:port] made of the characters host names and IP
// literals use, so a forged Host header cannot inject policy.
func safeHost(h string) bool {
	if h == "" || len(h) > 255 {
		return false
	}
	for _, c := range h {
		switch {
		case c >= 'a' && c <= 'z', c >= 'A' && c <= 'Z', c >= '0' && c <= '9':
		case c == '.' || c == '-' || c == ':' || c == '[' || c == ']':
		default:
			return false
		}
	}
	return true
}

// MaxBody limits request bodies to n bytes; reading past it fails and the
// handler answers 413 (http.MaxBytesError).
func MaxBody(n int64, next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if r.ContentLength > n {
			http.Error(w, "request body too large", http.StatusRequestEntityTooLarge)
			return
		}
		r.Body = http.MaxBytesReader(w, r.Body, n)
		next.ServeHTTP(w, r)
	})
}
