package dataio

import (
	"errors"
	"testing"

	devsync "cornerbook/sync"
)

// FuzzDecodeLine: any line of an import file decodes to a record or to a
// field error; never a panic.
func FuzzDecodeLine(f *testing.F) {
	f.Add([]byte(`{"id":"0193a1b2-0000-7000-8000-000000000001","kind":"athlete","athlete":"0193a1b2-0000-7000-8000-000000000001","day":"2026-11-01","at":"2026-11-01T08:00:00Z","device":"d1","stamp":{"l":1,"c":0},"body":{"name":"A","units":"kg"}}`))
	f.Add([]byte(`{"id":"x","kind":"checkin","stamp":{"l":"1"}}`))
	f.Add([]byte(`{"id":"x","kind":"checkin"} {"id":"y"}`))
	f.Add([]byte(`{"colour":"red"}`))
	f.Add([]byte("\xff\xfe"))
	f.Add([]byte(`null`))
	f.Fuzz(func(t *testing.T, line []byte) {
		rec, err := decodeLine(line)
		if err != nil {
			var fe *devsync.FieldError
			if !errors.As(err, &fe) || fe.Reason == "" {
				t.Fatalf("unclear error for %q: %v", line, err)
			}
			return
		}
		if rec.ID == "" || rec.Kind == "" {
			t.Fatalf("accepted a record without id or kind: %q", line)
		}
	})
}
