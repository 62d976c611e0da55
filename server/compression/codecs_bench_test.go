package compression

import (
	"bytes"
	stdgzip "compress/gzip"
	"encoding/json"
	"io"
	"testing"
	"time"

	"github.com/klauspost/compress/gzip"
	"github.com/klauspost/compress/zstd"

	"cornerbook/server/demo"
	devsync "cornerbook/sync"
)

// BenchmarkCodecs compresses one pull page of the demo camp (500 records,
// as the hub sends them) with each candidate, reporting the bytes sent,
// the ratio to identity and the hub's time per page:
//
//	go test ./server/compression -run '^$' -bench Codecs -benchtime 50x
//
// Brotli is not a dependency; it was measured once on the same page with
// andybalholm/brotli v1.3.0 (DEVELOPERS.md, Performance).
func BenchmarkCodecs(b *testing.B) {
	recs := demo.Build(time.Date(2026, 12, 3, 9, 0, 0, 0, time.UTC))
	page, err := json.Marshal(devsync.PullResponse{Records: recs[:500]})
	if err != nil {
		b.Fatal(err)
	}
	zstdAt := func(l zstd.EncoderLevel) func(io.Writer) io.WriteCloser {
		e, _ := zstd.NewWriter(nil, zstd.WithEncoderLevel(l), zstd.WithWindowSize(zstdWindow), zstd.WithEncoderConcurrency(1))
		return func(w io.Writer) io.WriteCloser { e.Reset(w); return e }
	}
	for _, c := range []struct {
		name string
		new  func(io.Writer) io.WriteCloser
	}{
		{"stdlib-gzip-6", func(w io.Writer) io.WriteCloser { z, _ := stdgzip.NewWriterLevel(w, 6); return z }},
		{"gzip-6", func(w io.Writer) io.WriteCloser { z, _ := gzip.NewWriterLevel(w, gzipLevel); return z }},
		{"gzip-9", func(w io.Writer) io.WriteCloser { z, _ := gzip.NewWriterLevel(w, 9); return z }},
		{"zstd-default", zstdAt(zstd.SpeedDefault)},
		{"zstd-better", zstdAt(zstd.SpeedBetterCompression)},
	} {
		b.Run(c.name, func(b *testing.B) {
			var buf bytes.Buffer
			b.SetBytes(int64(len(page)))
			for i := 0; i < b.N; i++ {
				buf.Reset()
				w := c.new(&buf)
				w.Write(page)
				w.Close()
			}
			b.ReportMetric(float64(buf.Len()), "bytes-sent")
			b.ReportMetric(float64(len(page))/float64(buf.Len()), "x-smaller")
		})
	}
}
