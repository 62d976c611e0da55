// Package compression compresses the hub's JSON answers for clients that
// accept it: zstd where the client offers it (Chromium and Firefox over
// HTTPS), gzip otherwise (Safari, plain-HTTP pages, curl --compressed),
// identity for everyone else.
//
// Why zstd and gzip, and not brotli: on a 500-record pull page (144 KB of
// JSON) zstd at its default level gives 7.7× in about 1 ms of CPU, gzip
// level 6 7.4× in about 1 ms, and brotli needs level 5 and 5.8 ms for 8.3×
// (level 11: 9.8× in 360 ms). On the camp's 1.5 Mbit/s link the bytes
// brotli saves over zstd are worth less than the CPU it costs the laptop
// on every page, and one library (klauspost/compress) gives both zstd and
// a gzip twice as fast as the standard library's. DEVELOPERS.md holds the
// measurements.
package compression

import (
	"bufio"
	"io"
	"net"
	"net/http"
	"strconv"
	"strings"
	"sync"

	"github.com/klauspost/compress/gzip"
	"github.com/klauspost/compress/zstd"
)

// Encodings the hub produces, in order of preference.
const (
	Zstd     = "zstd"
	Gzip     = "gzip"
	Identity = ""
)

// MinSize is the smallest body worth compressing: below it, the encoder's
// framing and the header cost about what they save.
const MinSize = 1024

// Levels: zstd's default and gzip 6 are each about 1 ms per 144 KB page on
// the camp laptop (DEVELOPERS.md, Performance).
const gzipLevel = 6

// zstdWindow keeps every frame decodable by browsers, which accept zstd
// windows of at most 8 MB (RFC 8878 §3: HTTP content coding).
const zstdWindow = 1 << 20

// Negotiate picks the encoding for an Accept-Encoding header: zstd if
// offered, else gzip, else identity. A coding with q=0 is refused; "*"
// offers both.
func Negotiate(accept string) string {
	var zs, gz, star, starSet bool
	zsSet, gzSet := false, false
	for _, part := range strings.Split(accept, ",") {
		name, params, _ := strings.Cut(strings.TrimSpace(part), ";")
		name = strings.ToLower(strings.TrimSpace(name))
		ok := !refused(params)
		switch name {
		case "zstd":
			zs, zsSet = ok, true
		case "gzip", "x-gzip":
			gz, gzSet = ok, true
		case "*":
			star, starSet = ok, true
		}
	}
	if !zsSet && starSet {
		zs = star
	}
	if !gzSet && starSet {
		gz = star
	}
	switch {
	case zs:
		return Zstd
	case gz:
		return Gzip
	}
	return Identity
}

// refused reports whether the parameters of a coding carry q=0.
func refused(params string) bool {
	for _, p := range strings.Split(params, ";") {
		k, v, ok := strings.Cut(strings.TrimSpace(p), "=")
		if ok && strings.EqualFold(strings.TrimSpace(k), "q") {
			q, err := strconv.ParseFloat(strings.TrimSpace(v), 64)
			return err != nil || q <= 0
		}
	}
	return false
}

var (
	gzipPool = sync.Pool{New: func() any {
		w, _ := gzip.NewWriterLevel(io.Discard, gzipLevel)
		return w
	}}
	zstdPool = sync.Pool{New: func() any {
		w, err := zstd.NewWriter(io.Discard, zstd.WithEncoderLevel(zstd.SpeedDefault),
			zstd.WithWindowSize(zstdWindow), zstd.WithEncoderConcurrency(1), zstd.WithLowerEncoderMem(true))
		if err != nil {
			panic("compression: " + err.Error()) // fixed options; a test covers them
		}
		return w
	}}
)

// Middleware compresses the answers of next for clients that accept it.
// Only JSON answers of at least MinSize bytes are compressed; websocket
// upgrades and answers that already carry a Content-Encoding pass through.
func Middleware(next http.Handler) http.Handler {
	return http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		enc := Negotiate(r.Header.Get("Accept-Encoding"))
		if enc == Identity || r.Header.Get("Upgrade") != "" || r.Method == http.MethodHead {
			next.ServeHTTP(w, r)
			return
		}
		cw := &writer{ResponseWriter: w, enc: enc}
		defer cw.finish()
		next.ServeHTTP(cw, r)
	})
}

// writer holds back the start of the answer until it knows whether the
// answer is worth compressing, then either starts an encoder or passes
// the held bytes through.
type writer struct {
	http.ResponseWriter
	enc     string
	status  int
	held    []byte
	decided bool
	out     io.Writer // the encoder, or the ResponseWriter itself
	closer  func()
}

func (c *writer) WriteHeader(status int) {
	if c.status == 0 && !c.decided {
		c.status = status
		return
	}
	c.ResponseWriter.WriteHeader(status)
}

func (c *writer) Write(p []byte) (int, error) {
	if c.decided {
		return c.out.Write(p)
	}
	c.held = append(c.held, p...)
	if len(c.held) >= MinSize {
		if err := c.decide(true); err != nil {
			return 0, err
		}
	}
	return len(p), nil
}

// decide starts the answer: compressed when big is true and the answer is
// JSON without an encoding of its own.
func (c *writer) decide(big bool) error {
	c.decided = true
	h := c.Header()
	status := c.status
	if status == 0 {
		status = http.StatusOK
	}
	json := strings.HasPrefix(h.Get("Content-Type"), "application/json")
	if json {
		h.Add("Vary", "Accept-Encoding")
	}
	compress := big && json && h.Get("Content-Encoding") == "" && status != http.StatusNoContent && status != http.StatusNotModified
	if !compress {
		c.ResponseWriter.WriteHeader(status)
		c.out = c.ResponseWriter
	} else {
		h.Set("Content-Encoding", c.enc)
		h.Del("Content-Length")
		c.ResponseWriter.WriteHeader(status)
		switch c.enc {
		case Zstd:
			z := zstdPool.Get().(*zstd.Encoder)
			z.Reset(c.ResponseWriter)
			c.out = z
			c.closer = func() { z.Close(); z.Reset(io.Discard); zstdPool.Put(z) }
		default:
			z := gzipPool.Get().(*gzip.Writer)
			z.Reset(c.ResponseWriter)
			c.out = z
			c.closer = func() { z.Close(); z.Reset(io.Discard); gzipPool.Put(z) }
		}
	}
	held := c.held
	c.held = nil
	if len(held) > 0 {
		_, err := c.out.Write(held)
		return err
	}
	return nil
}

// finish sends what is held (small answers go as they are) and closes the
// encoder.
func (c *writer) finish() {
	if !c.decided {
		if c.status == 0 && len(c.held) == 0 {
			return // nothing written: net/http sends its own 200
		}
		c.decide(false)
	}
	if c.closer != nil {
		c.closer()
	}
}

// Flush sends what has been encoded so far.
func (c *writer) Flush() {
	if !c.decided {
		c.decide(len(c.held) >= MinSize)
	}
	if f, ok := c.out.(interface{ Flush() error }); ok {
		f.Flush()
	}
	if f, ok := c.ResponseWriter.(http.Flusher); ok {
		f.Flush()
	}
}

// Hijack lets the kill switch and any upgrade reach the connection.
func (c *writer) Hijack() (net.Conn, *bufio.ReadWriter, error) {
	return http.NewResponseController(c.ResponseWriter).Hijack()
}

// Unwrap lets http.ResponseController reach the connection.
func (c *writer) Unwrap() http.ResponseWriter { return c.ResponseWriter }
