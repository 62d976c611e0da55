// Package pwa embeds Cornerbook's web app (plain ES modules, no build step)
// and serves it: the app shell, the service worker generated from a template
// with the precache list and a build hash, and index.html for the app's own
// routes so deep links work online and offline.
package pwa

import (
	"bytes"
	"compress/gzip"
	"crypto/sha256"
	"embed"
	"encoding/hex"
	"encoding/json"
	"io/fs"
	"net/http"
	"path"
	"sort"
	"strconv"
	"strings"
	"sync"
	"text/template"
)

// app is the shell: everything the browser loads. LICENSE and VERSIONS
// files are embedded and served but not precached.
//
//go:embed index.html manifest.webmanifest css js icons vendor
var app embed.FS

//go:embed sw.tmpl.js
var swTemplate string

// Routes are the app's own navigations; each is answered with index.html.
var Routes = []string{"/", "/checkin", "/jumps", "/rounds", "/intervals", "/session", "/incident", "/clearance", "/today", "/settings", "/join", "/camp"}

var (
	once  sync.Once
	built *bundle
)

type asset struct {
	body []byte
	gz   []byte // nil when compression does not pay
	etag string
	mime string
}

type bundle struct {
	hash   string
	files  []string // precache list, URL paths, sorted
	assets map[string]*asset
	sw     *asset
}

func load() *bundle {
	once.Do(func() {
		b, err := build(app, swTemplate)
		if err != nil {
			panic("pwa: " + err.Error()) // the embedded tree is fixed at compile time; tests cover it
		}
		built = b
	})
	return built
}

// BuildHash identifies this build of the app: a SHA-256 over every embedded
// file's path and bytes and the service-worker template, shortened to 16
// hex digits. It names the service worker's cache.
func BuildHash() string { return load().hash }

// Files is the service worker's precache list: the URL path of every shell
// file, sorted.
func Files() []string { return append([]string(nil), load().files...) }

// shellFile reports whether a file belongs in the precache list.
func shellFile(p string) bool {
	base := path.Base(p)
	return base != "LICENSE" && base != "VERSIONS" && !strings.HasPrefix(base, ".")
}

// hashFS computes the build hash and the precache list of a file tree.
func hashFS(fsys fs.FS, tmpl string) (string, []string, error) {
	var names []string
	err := fs.WalkDir(fsys, ".", func(p string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if !d.IsDir() {
			names = append(names, p)
		}
		return nil
	})
	if err != nil {
		return "", nil, err
	}
	sort.Strings(names)
	h := sha256.New()
	var files []string
	for _, n := range names {
		b, err := fs.ReadFile(fsys, n)
		if err != nil {
			return "", nil, err
		}
		h.Write([]byte(n))
		h.Write([]byte{0})
		h.Write(b)
		h.Write([]byte{0})
		if shellFile(n) {
			files = append(files, "/"+n)
		}
	}
	h.Write([]byte(tmpl))
	return hex.EncodeToString(h.Sum(nil))[:16], files, nil
}

// renderSW fills the service-worker template.
func renderSW(tmpl, hash string, files []string) ([]byte, error) {
	t, err := template.New("sw").Delims("{{", "}}").Parse(tmpl)
	if err != nil {
		return nil, err
	}
	hj, _ := json.Marshal(hash)
	fj, _ := json.MarshalIndent(files, "", "  ")
	var buf bytes.Buffer
	err = t.Execute(&buf, map[string]string{"Hash": string(hj), "Files": string(fj)})
	return buf.Bytes(), err
}

func build(fsys fs.FS, tmpl string) (*bundle, error) {
	hash, files, err := hashFS(fsys, tmpl)
	if err != nil {
		return nil, err
	}
	b := &bundle{hash: hash, files: files, assets: map[string]*asset{}}
	err = fs.WalkDir(fsys, ".", func(p string, d fs.DirEntry, err error) error {
		if err != nil || d.IsDir() {
			return err
		}
		body, err := fs.ReadFile(fsys, p)
		if err != nil {
			return err
		}
		b.assets["/"+p] = newAsset(body, mimeOf(p))
		return nil
	})
	if err != nil {
		return nil, err
	}
	sw, err := renderSW(tmpl, hash, files)
	if err != nil {
		return nil, err
	}
	b.sw = newAsset(sw, "text/javascript; charset=utf-8")
	return b, nil
}

func newAsset(body []byte, mime string) *asset {
	sum := sha256.Sum256(body)
	a := &asset{body: body, mime: mime, etag: `"` + hex.EncodeToString(sum[:8]) + `"`}
	if compressible(mime) && len(body) > 512 {
		var buf bytes.Buffer
		zw, _ := gzip.NewWriterLevel(&buf, gzip.BestCompression)
		zw.Write(body)
		zw.Close()
		if buf.Len() < len(body) {
			a.gz = buf.Bytes()
		}
	}
	return a
}

func compressible(mime string) bool {
	return !strings.HasPrefix(mime, "image/png")
}

var mimes = map[string]string{
	".html":        "text/html; charset=utf-8",
	".js":          "text/javascript; charset=utf-8",
	".css":         "text/css; charset=utf-8",
	".webmanifest": "application/manifest+json",
	".json":        "application/json",
	".png":         "image/png",
	".svg":         "image/svg+xml",
}

func mimeOf(p string) string {
	if m, ok := mimes[path.Ext(p)]; ok {
		return m
	}
	return "text/plain; charset=utf-8"
}

// Handler serves the app. Mount it under "/" after the /api routes: it
// answers /api/* with 404 so a missing API route never returns the app.
func Handler() http.Handler { return load().handler() }

func (b *bundle) handler() http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		p := path.Clean("/" + r.URL.Path)
		if p == "/api" || strings.HasPrefix(p, "/api/") {
			http.NotFound(w, r)
			return
		}
		if r.Method != http.MethodGet && r.Method != http.MethodHead {
			w.Header().Set("Allow", "GET, HEAD")
			http.Error(w, "method not allowed", http.StatusMethodNotAllowed)
			return
		}
		if p == "/sw.js" {
			b.serve(w, r, b.sw)
			return
		}
		if a, ok := b.assets[p]; ok {
			b.serve(w, r, a)
			return
		}
		// An app navigation: any path without a file extension (vendor
		// paths are files, e.g. the licences).
		if path.Ext(p) == "" && !strings.HasPrefix(p, "/vendor/") {
			b.serve(w, r, b.assets["/index.html"])
			return
		}
		http.NotFound(w, r)
	})
}

func (b *bundle) serve(w http.ResponseWriter, r *http.Request, a *asset) {
	h := w.Header()
	h.Set("Content-Type", a.mime)
	// The service worker does the caching; the HTTP cache must revalidate so
	// an update check always sees the current build.
	h.Set("Cache-Control", "no-cache")
	h.Set("ETag", a.etag)
	h.Set("X-Content-Type-Options", "nosniff")
	h.Add("Vary", "Accept-Encoding")
	if match := r.Header.Get("If-None-Match"); match != "" && match == a.etag {
		w.WriteHeader(http.StatusNotModified)
		return
	}
	body := a.body
	if a.gz != nil && acceptsGzip(r) {
		h.Set("Content-Encoding", "gzip")
		body = a.gz
	}
	h.Set("Content-Length", strconv.Itoa(len(body)))
	if r.Method == http.MethodHead {
		return
	}
	w.Write(body)
}

func acceptsGzip(r *http.Request) bool {
	for _, part := range strings.Split(r.Header.Get("Accept-Encoding"), ",") {
		enc, q, _ := strings.Cut(strings.TrimSpace(part), ";")
		if strings.EqualFold(strings.TrimSpace(enc), "gzip") && strings.TrimSpace(q) != "q=0" {
			return true
		}
	}
	return false
}
