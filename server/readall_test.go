package server

import (
	"bytes"
	"io"
	"net/http"
	"net/http/httptest"
	"strings"
	"testing"
	"testing/iotest"
)

// readAll returns exactly what io.ReadAll returns, whatever the declared
// length says, in small reads or large.
func TestReadAllMatchesIoReadAll(t *testing.T) {
	body := strings.Repeat("push-", 2000) // 10,000 bytes
	for _, declared := range []int64{-1, 0, 1, 9999, 10000, 10001, 1 << 20} {
		for _, half := range []bool{false, true} {
			var rd io.Reader = strings.NewReader(body)
			if half {
				rd = iotest.HalfReader(rd)
			}
			got, err := readAll(rd, declared, 1<<16)
			if err != nil || !bytes.Equal(got, []byte(body)) {
				t.Fatalf("declared %d (half reads %v): %d bytes, %v; want the %d bytes sent", declared, half, len(got), err, len(body))
			}
		}
	}
	if _, err := readAll(iotest.ErrReader(io.ErrUnexpectedEOF), 10, 100); err != io.ErrUnexpectedEOF {
		t.Fatalf("a failing read gave %v", err)
	}
}

// The size limit still holds when the length is declared.
func TestReadBodyKeepsLimit(t *testing.T) {
	req := httptest.NewRequest(http.MethodPost, "/api/push", strings.NewReader(strings.Repeat("x", 2048)))
	_, err := readBody(httptest.NewRecorder(), req, 1024)
	if err == nil || !strings.Contains(err.Error(), "larger than 1 KiB") {
		t.Fatalf("a 2 KiB body under a 1 KiB limit gave %v", err)
	}
}
