package sync

import (
	"encoding/json"
	"testing"
)

// FuzzHLC: any stamp a device sends parses or fails cleanly, and feeding
// it to the clock never makes the clock go backwards (Kulkarni et al.
// 2014: timestamps increase monotonically).
func FuzzHLC(f *testing.F) {
	f.Add([]byte(`{"l":1795165200000,"c":3}`), int64(1795165200000))
	f.Add([]byte(`{"l":-5,"c":0}`), int64(0))
	f.Add([]byte(`{"l":9223372036854775807,"c":4294967295}`), int64(1))
	f.Add([]byte(`{"l":"soon"}`), int64(10))
	f.Fuzz(func(t *testing.T, data []byte, pt int64) {
		var m HLC
		if json.Unmarshal(data, &m) != nil {
			return
		}
		var k Clock
		k.Restore(HLC{L: 1795165200000, C: 1})
		before := k.Last()
		after := k.Update(m, pt)
		if after.Compare(before) < 0 {
			t.Fatalf("clock went backwards: %v → %v after %v at %d", before, after, m, pt)
		}
		if m.C < ^uint32(0) && after.Compare(m) < 0 {
			t.Fatalf("receive rule gave %v, not after the received %v", after, m)
		}
		if next := k.Now(pt); next.Compare(after) <= 0 && after.C < ^uint32(0) {
			t.Fatalf("Now %v not after %v", next, after)
		}
	})
}
