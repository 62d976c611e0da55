package records

import (
	"encoding/json"
	"testing"
)

// BenchmarkPrepare measures validation of a typical check-in and jump
// against the floor of decoding and re-encoding the same body once.
//
//	go test ./server/records -run '^$' -bench . -benchmem
func BenchmarkPrepare(b *testing.B) {
	bodies := map[string]devsyncRecord{
		"checkin": {KindCheckin, `{"mass_kg":64.8,"sleep_h":7.5,"sleep":4,"fatigue":3,"soreness":3,"stress":4,"mood":5,"rhr_bpm":52,"usg":1.018,"note":"slept well"}`, &Checkin{}},
		"jump":    {KindJump, `{"test":"cmj","flight_ms":[500,520,480],"method":"mat"}`, &Jump{}},
	}
	for name, c := range bodies {
		b.Run(name+"/floor-unmarshal-marshal", func(b *testing.B) {
			for i := 0; i < b.N; i++ {
				if err := json.Unmarshal([]byte(c.body), c.into); err != nil {
					b.Fatal(err)
				}
				if _, err := json.Marshal(c.into); err != nil {
					b.Fatal(err)
				}
			}
		})
		b.Run(name+"/Prepare", func(b *testing.B) {
			r := mk(c.kind, "ath-1", "2026-03-02", c.body)
			for i := 0; i < b.N; i++ {
				r.Body = json.RawMessage(c.body)
				if err := Prepare(&r); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

type devsyncRecord struct {
	kind, body string
	into       any
}
