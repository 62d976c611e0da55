package pwa

import (
	"bytes"
	"encoding/json"
	"image/png"
	"io"
	"io/fs"
	"net/http"
	"net/http/httptest"
	"slices"
	"strconv"
	"strings"
	"testing"
	"testing/fstest"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func get(t *testing.T, h http.Handler, path string) *http.Response {
	t.Helper()
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, httptest.NewRequest(http.MethodGet, path, nil))
	return rec.Result()
}

func body(t *testing.T, r *http.Response) []byte {
	t.Helper()
	b, err := io.ReadAll(r.Body)
	require.NoError(t, err)
	return b
}

func TestKeyFilesEmbeddedWithTypes(t *testing.T) {
	h := Handler()
	for path, mime := range map[string]string{
		"/index.html":                      "text/html",
		"/manifest.webmanifest":            "application/manifest+json",
		"/js/main.js":                      "text/javascript",
		"/js/db.js":                        "text/javascript",
		"/js/sync.js":                      "text/javascript",
		"/css/app.css":                     "text/css",
		"/vendor/idb/index.js":             "text/javascript",
		"/vendor/htm/standalone.module.js": "text/javascript",
		"/vendor/uplot/uPlot.esm.js":       "text/javascript",
		"/vendor/uplot/uPlot.min.css":      "text/css",
		"/vendor/idb/LICENSE":              "text/plain",
		"/icons/icon-192.png":              "image/png",
	} {
		r := get(t, h, path)
		assert.Equal(t, http.StatusOK, r.StatusCode, path)
		assert.True(t, strings.HasPrefix(r.Header.Get("Content-Type"), mime), "%s: %s", path, r.Header.Get("Content-Type"))
		assert.NotEmpty(t, body(t, r), path)
	}
}

func TestNavigationsGetIndexAndAPIIsNotServed(t *testing.T) {
	h := Handler()
	index := body(t, get(t, h, "/index.html"))
	for _, p := range append(Routes, "/today/", "/jumps?athlete=x") {
		r := get(t, h, p)
		require.Equal(t, http.StatusOK, r.StatusCode, p)
		assert.Equal(t, index, body(t, r), p)
	}
	for _, p := range []string{"/api/push", "/api/pull", "/api", "/missing.js", "/icons/none.png"} {
		assert.Equal(t, http.StatusNotFound, get(t, h, p).StatusCode, p)
	}
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, httptest.NewRequest(http.MethodPost, "/index.html", nil))
	assert.Equal(t, http.StatusMethodNotAllowed, rec.Code)
	rec = httptest.NewRecorder()
	h.ServeHTTP(rec, httptest.NewRequest(http.MethodPost, "/api/push", nil))
	assert.Equal(t, http.StatusNotFound, rec.Code, "an API route the hub lacks is a 404 for any method")
}

func TestServiceWorkerListsShellAndNoAPI(t *testing.T) {
	r := get(t, Handler(), "/sw.js")
	require.Equal(t, http.StatusOK, r.StatusCode)
	assert.True(t, strings.HasPrefix(r.Header.Get("Content-Type"), "text/javascript"))
	assert.Equal(t, "no-cache", r.Header.Get("Cache-Control"))
	sw := string(body(t, r))
	assert.Contains(t, sw, `'shell-' + BUILD`)
	assert.Contains(t, sw, `const BUILD = "`+BuildHash()+`"`)

	// Parse the precache array out of the generated script.
	start := strings.Index(sw, "const SHELL = ")
	require.Positive(t, start)
	rest := sw[start+len("const SHELL = "):]
	end := strings.Index(rest, "];")
	var list []string
	require.NoError(t, json.Unmarshal([]byte(rest[:end+1]), &list))
	assert.Equal(t, Files(), list)

	// The lazy list: what a screen loads only when it opens.
	start = strings.Index(sw, "const LAZY = new Map(Object.entries(")
	require.Positive(t, start)
	rest = sw[start+len("const LAZY = new Map(Object.entries("):]
	end = strings.Index(rest, "}));")
	var tags map[string]string
	require.NoError(t, json.Unmarshal([]byte(rest[:end+1]), &tags))
	var lazy []string
	for p, tag := range tags {
		lazy = append(lazy, p)
		assert.Equal(t, load().assets[p].etag, tag, "%s: the worker checks this build's copy", p)
	}
	assert.ElementsMatch(t, Lazy(), lazy)
	for _, p := range []string{"/vendor/uplot/uPlot.esm.js", "/vendor/uplot/uPlot.min.css", "/icons/icon-512.png", "/icons/maskable-512.png", "/js/coach/review.js", "/js/coach/plan.js"} {
		assert.Contains(t, lazy, p, "fetched when a screen asks for it, not at install")
	}
	// Every module the page imports statically is installed; every other
	// module (reached only through import()) is lazy.
	eager, err := moduleGraph(withGeneratedApp(t), "/js/main.js")
	require.NoError(t, err)
	for p := range eager {
		assert.Contains(t, list, p)
	}
	for _, p := range lazy {
		assert.False(t, eager[p], "%s is imported by the page at start, so it cannot be lazy", p)
	}

	// Every embedded shell file is in one list or the other, never both;
	// nothing under /api; no licence files.
	var all []string
	for p := range load().assets {
		all = append(all, p)
	}
	for _, p := range all {
		if strings.HasSuffix(p, "/LICENSE") || strings.HasSuffix(p, "/VERSIONS") {
			assert.NotContains(t, list, p)
			assert.NotContains(t, lazy, p)
			continue
		}
		assert.True(t, slices.Contains(list, p) != slices.Contains(lazy, p), "%s in exactly one list", p)
	}
	for _, p := range []string{"/index.html", "/manifest.webmanifest", "/js/main.js", "/js/db.js", "/js/sync.js", "/vendor/idb/index.js", "/vendor/htm/standalone.module.js", "/icons/icon-192.png", "/icons/apple-touch-180.png", "/css/app.css"} {
		assert.Contains(t, list, p)
	}
	assert.NotContains(t, sw, "reload", "the install never bypasses what the page already downloaded")
	for _, p := range list {
		assert.False(t, strings.HasPrefix(p, "/api"), p)
		assert.NotEqual(t, "/sw.js", p)
	}
}

func TestBuildHashFollowsContent(t *testing.T) {
	a := fstest.MapFS{
		"index.html": {Data: []byte("<p>one</p>")},
		"js/main.js": {Data: []byte("export {}")},
		"js/LICENSE": {Data: []byte("licence")},
	}
	h1, files, err := hashFS(a, "tmpl")
	require.NoError(t, err)
	assert.Equal(t, []string{"/index.html", "/js/main.js"}, files)
	h1again, _, _ := hashFS(a, "tmpl")
	assert.Equal(t, h1, h1again, "same content, same hash")

	a["js/main.js"] = &fstest.MapFile{Data: []byte("export const x = 1")}
	h2, _, _ := hashFS(a, "tmpl")
	assert.NotEqual(t, h1, h2, "a changed file changes the hash")

	h3, _, _ := hashFS(a, "tmpl2")
	assert.NotEqual(t, h2, h3, "a changed service-worker template changes the hash")

	b := fstest.MapFS{"index.html": a["index.html"], "js/other.js": a["js/main.js"], "js/LICENSE": a["js/LICENSE"]}
	h4, _, _ := hashFS(b, "tmpl2")
	assert.NotEqual(t, h3, h4, "a renamed file changes the hash")

	const tmpl = "const BUILD = {{.Hash}}; const SHELL = {{.Files}};"
	bun, err := build(a, tmpl)
	require.NoError(t, err)
	h3, _, _ = hashFS(a, tmpl)
	assert.Contains(t, string(bun.sw.body), `const BUILD = "`+h3+`"`)
	assert.Contains(t, string(bun.sw.body), `"/js/main.js"`)
	assert.Len(t, BuildHash(), 16)
}

func TestManifestInstallable(t *testing.T) {
	h := Handler()
	var m struct {
		ID, Name, ShortName, StartURL, Scope, Display, ThemeColor, BackgroundColor string
		Icons                                                                      []struct{ Src, Sizes, Type, Purpose string }
		PreferRelated                                                              *bool `json:"prefer_related_applications"`
	}
	raw := body(t, get(t, h, "/manifest.webmanifest"))
	var generic map[string]any
	require.NoError(t, json.Unmarshal(raw, &generic))
	require.NoError(t, json.Unmarshal(raw, &m))
	str := func(k string) string { s, _ := generic[k].(string); return s }
	assert.NotEmpty(t, str("name"))
	assert.NotEmpty(t, str("short_name"))
	assert.Equal(t, "/", str("start_url"))
	assert.Equal(t, "/", str("scope"))
	assert.Equal(t, "standalone", str("display"))
	assert.NotEmpty(t, str("id"))
	assert.Regexp(t, `^#[0-9a-f]{6}$`, str("theme_color"))
	assert.Regexp(t, `^#[0-9a-f]{6}$`, str("background_color"))
	assert.Nil(t, m.PreferRelated)

	seen := map[string]bool{}
	for _, ic := range m.Icons {
		r := getIcon(t, h, ic.Src)
		img, err := png.Decode(bytes.NewReader(r))
		require.NoError(t, err, ic.Src)
		size := img.Bounds().Dx()
		assert.Equal(t, size, img.Bounds().Dy(), ic.Src)
		assert.Equal(t, ic.Sizes, itoa(size)+"x"+itoa(size), ic.Src)
		assert.Equal(t, "image/png", ic.Type)
		for _, p := range strings.Fields(ic.Purpose) {
			seen[p+"-"+itoa(size)] = true
		}
	}
	assert.True(t, seen["any-192"], "a 192 px icon")
	assert.True(t, seen["any-512"], "a 512 px icon")
	assert.True(t, seen["maskable-512"], "a maskable icon")

	// The apple-touch icon linked from index.html exists and decodes.
	index := string(body(t, get(t, h, "/index.html")))
	assert.Contains(t, index, `rel="manifest" href="/manifest.webmanifest"`)
	img, err := png.Decode(bytes.NewReader(getIcon(t, h, "/icons/apple-touch-180.png")))
	require.NoError(t, err)
	assert.Equal(t, 180, img.Bounds().Dx())
}

func getIcon(t *testing.T, h http.Handler, p string) []byte {
	r := get(t, h, p)
	require.Equal(t, http.StatusOK, r.StatusCode, p)
	return body(t, r)
}

func itoa(n int) string { return strconv.Itoa(n) }

func TestGzipAndConditional(t *testing.T) {
	h := Handler()
	req := httptest.NewRequest(http.MethodGet, "/vendor/uplot/uPlot.esm.js", nil)
	req.Header.Set("Accept-Encoding", "gzip, br")
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	assert.Equal(t, "gzip", rec.Header().Get("Content-Encoding"))
	plain := load().assets["/vendor/uplot/uPlot.esm.js"].body
	assert.Less(t, rec.Body.Len(), len(plain)/2)

	etag := rec.Header().Get("ETag")
	require.NotEmpty(t, etag)
	req = httptest.NewRequest(http.MethodGet, "/vendor/uplot/uPlot.esm.js", nil)
	req.Header.Set("If-None-Match", etag)
	rec = httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	assert.Equal(t, http.StatusNotModified, rec.Code)
	assert.True(t, slices.Contains([]string{"no-cache"}, rec.Header().Get("Cache-Control")))
}

// The page preloads every module its entry script imports, however deep,
// so a phone asks for the whole graph at once; the modules a screen
// imports only when it opens (the coach's screens, the chart library) are
// not preloaded.
func TestIndexPreloadsTheEagerModules(t *testing.T) {
	index := string(body(t, get(t, Handler(), "/")))
	for _, p := range []string{"/js/db.js", "/js/sync.js", "/js/screens.js", "/js/ui.js", "/vendor/htm/standalone.module.js", "/vendor/idb/index.js", "/js/coach/routes.js"} {
		assert.Contains(t, index, `<link rel="modulepreload" href="`+p+`">`, p)
	}
	for _, p := range []string{"/js/coach/review.js", "/js/coach/charts.js", "/vendor/uplot/uPlot.esm.js", "/js/main.js"} {
		assert.NotContains(t, index, `href="`+p+`"`, p)
	}
	assert.Less(t, strings.Index(index, "modulepreload"), strings.Index(index, `<script type="module" src="/js/main.js">`))

	// A module importing one that is not in the app fails the build.
	_, err := preloadModules(fstest.MapFS{"js/main.js": {Data: []byte("import { x } from './gone.js';\n")}}, []byte(entryScript))
	assert.ErrorContains(t, err, "/js/main.js imports /js/gone.js")
	out, err := preloadModules(fstest.MapFS{"js/main.js": {Data: []byte("import {\n  a,\n  b,\n} from './a.js';\nconst lazy = () => import('./b.js');\n")}, "js/a.js": {Data: []byte("export const a = 1, b = 2;\n")}}, []byte(entryScript))
	require.NoError(t, err)
	assert.Contains(t, string(out), `href="/js/a.js"`)
	assert.NotContains(t, string(out), `b.js`)
}

func withGeneratedApp(t *testing.T) fs.FS {
	fsys, err := withGenerated(app)
	require.NoError(t, err)
	return fsys
}

// TestScriptsServedMinified: a script is served without its comments and
// spacing, names kept; one that does not parse stops the build with its
// file and line instead of reaching a phone.
func TestScriptsServedMinified(t *testing.T) {
	src, err := fs.ReadFile(app, "js/sync.js")
	require.NoError(t, err)
	served := load().assets["/js/sync.js"].body
	assert.Contains(t, string(src), "// The sync loop")
	assert.NotContains(t, string(served), "// The sync loop", "comments are left out")
	assert.Contains(t, string(served), "function pushAlongside(", "names stay as written")
	assert.Less(t, len(served), len(src)*8/10)

	_, err = build(fstest.MapFS{"index.html": {Data: []byte("<p>x</p>")}, "js/main.js": {Data: []byte("export const a = 1;\nconst = 2;\n")}}, "x")
	require.Error(t, err)
	assert.Contains(t, err.Error(), "js/main.js:2")
}
