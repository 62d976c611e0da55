package server

import (
	"html/template"
	"net"
	"net/http"
	"strings"

	"cornerbook/server/auth"
	"cornerbook/server/certs"
)

// BootstrapHandler serves the plain-HTTP port. A phone that has not yet
// trusted the camp authority lands here: it gets the authority's
// certificate, its fingerprint, the trust steps for Android and iOS and a
// QR code of the app's HTTPS address. The laptop's own browser
// (loopback, a secure context without TLS) gets the whole app; anything
// else is redirected to HTTPS.
func (s *Server) BootstrapHandler(app http.Handler) http.Handler {
	mux := http.NewServeMux()
	mux.HandleFunc("GET /ca.crt", func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "application/x-x509-ca-cert")
		w.Header().Set("Content-Disposition", `attachment; filename="cornerbook-camp-authority.crt"`)
		w.Write(s.cfg.Certs.CADER())
	})
	mux.HandleFunc("GET /app-qr.png", func(w http.ResponseWriter, r *http.Request) {
		png, err := auth.QRPNG(s.appURLFor(r))
		if err != nil {
			http.Error(w, "could not draw the QR code", http.StatusInternalServerError)
			return
		}
		w.Header().Set("Content-Type", "image/png")
		w.Write(png)
	})
	mux.HandleFunc("GET /boot.css", func(w http.ResponseWriter, r *http.Request) {
		w.Header().Set("Content-Type", "text/css; charset=utf-8")
		w.Write([]byte(bootCSS))
	})
	mux.HandleFunc("GET /{$}", s.bootstrapPage)
	mux.HandleFunc("GET /trust", s.bootstrapPage)
	mux.HandleFunc("/", func(w http.ResponseWriter, r *http.Request) {
		http.Redirect(w, r, strings.TrimSuffix(s.appURLFor(r), "/")+r.URL.RequestURI(), http.StatusTemporaryRedirect)
	})
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		if auth.FromLaptop(r) {
			app.ServeHTTP(w, r)
			return
		}
		auth.SecurityHeaders(mux).ServeHTTP(w, r)
	})
}

// appURLFor is the HTTPS address for a visitor who reached the bootstrap
// port by some host name: the same host on the HTTPS port.
func (s *Server) appURLFor(r *http.Request) string {
	if s.cfg.AppURL == "" {
		return "https://" + r.Host + "/"
	}
	host, _, err := net.SplitHostPort(r.Host)
	if err != nil {
		host = r.Host
	}
	appHost, port, err := net.SplitHostPort(strings.TrimPrefix(strings.TrimSuffix(s.cfg.AppURL, "/"), "https://"))
	if err != nil || host == "" {
		return s.cfg.AppURL
	}
	if strings.HasSuffix(appHost, ".local") {
		// The hub announces its name: the app lives at the name, which
		// stays the same when the camp moves and the address changes.
		return s.cfg.AppURL
	}
	return "https://" + net.JoinHostPort(host, port) + "/"
}

// appURLByAddress is the app at the address the visitor used, when the
// app's own address is the announced name ("" otherwise): for a phone
// that cannot resolve the name.
func (s *Server) appURLByAddress(r *http.Request) string {
	app := s.appURLFor(r)
	host, _, err := net.SplitHostPort(r.Host)
	if err != nil || !strings.HasSuffix(strings.TrimPrefix(strings.Split(app, ":")[1], "//"), ".local") || strings.HasSuffix(host, ".local") {
		return ""
	}
	_, port, err := net.SplitHostPort(strings.TrimPrefix(strings.TrimSuffix(app, "/"), "https://"))
	if err != nil {
		return ""
	}
	return "https://" + net.JoinHostPort(host, port) + "/"
}

var bootstrapTmpl = template.Must(template.New("b").Parse(`<!doctype html>
<html lang="en"><head><meta charset="utf-8"><meta name="viewport" content="width=device-width, initial-scale=1">
<title>Join the camp hub — Cornerbook</title><link rel="stylesheet" href="/boot.css"></head>
<body><main class="boot">
<h1>Join the camp hub</h1>
<p>This phone needs to trust the camp laptop once. Then the Cornerbook app works here, offline too.</p>
<ol class="big">
<li><a class="button" href="/ca.crt">Download the camp certificate</a></li>
<li>Check its fingerprint against the coach's screen:<br><code class="fp">{{.Fingerprint}}</code></li>
<li>Trust it, following the steps for your phone below.</li>
<li>Open the app: <a href="{{.AppURL}}">{{.AppURL}}</a></li>
</ol>
{{if .ByAddress}}<p class="note">The app opens by the camp's name, so it is found again when the camp moves to another network. If this phone cannot open that name, use <a href="{{.ByAddress}}">{{.ByAddress}}</a>; it will need this page again after a move.</p>{{end}}
<img class="qr" src="/app-qr.png" width="256" height="256" alt="QR code of the app address {{.AppURL}}">
{{range .Platforms}}<section><h2>{{.Name}}</h2><ol>{{range .Steps}}<li>{{.}}</li>{{end}}</ol>
{{range .Notes}}<p class="note">{{.}}</p>{{end}}</section>{{end}}
<p class="note">The certificate only lets this device trust the hub laptop of this camp. Remove it after the camp in the same settings screen.</p>
</main></body></html>`))

func (s *Server) bootstrapPage(w http.ResponseWriter, r *http.Request) {
	app := s.appURLFor(r)
	ca := "http://" + r.Host + "/ca.crt"
	w.Header().Set("Content-Type", "text/html; charset=utf-8")
	w.Header().Set("Cache-Control", "no-store")
	bootstrapTmpl.Execute(w, map[string]any{
		"AppURL": app, "Fingerprint": s.cfg.Certs.Fingerprint(), "ByAddress": s.appURLByAddress(r),
		"Platforms": certs.TrustSteps(ca, s.cfg.Certs.Fingerprint(), app),
	})
}

const bootCSS = `body{font:18px/1.5 system-ui,sans-serif;margin:0;background:#f6f4ef;color:#1d2521}
main{max-width:40rem;margin:auto;padding:1.2rem}h1{font-size:1.8rem}h2{font-size:1.25rem;margin-top:2rem}
.button{display:inline-block;min-height:44px;padding:.7rem 1.2rem;border-radius:.6rem;background:#1f5f4a;color:#fff;text-decoration:none;font-weight:600}
.fp{display:block;word-break:break-all;font-size:.95rem;background:#fff;padding:.5rem;border-radius:.4rem}
.qr{display:block;margin:1rem auto;image-rendering:pixelated}.note{color:#4a5550;font-size:.95rem}
ol.big>li{margin:.6rem 0}a{color:#1f5f4a}
@media (prefers-color-scheme:dark){body{background:#121714;color:#e4ebe6}.fp{background:#1e2622}.note{color:#a8b5ae}a{color:#8fd4b8}.button{background:#2f7d62}}`
