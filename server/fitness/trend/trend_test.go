package trend

import (
	"encoding/json"
	"fmt"
	"math"
	"testing"

	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

func rec(t *testing.T, n int, kind, day, body string) devsync.Record {
	t.Helper()
	r := devsync.Record{ID: fmt.Sprintf("01HZX3V6Q8R2M4T7Y9B1C3D5%02d", n), Kind: kind, Athlete: "ath-1", Day: day,
		At: day + "T10:00:00Z", Device: "laptop", Stamp: devsync.HLC{L: 1}, Body: json.RawMessage(body)}
	if err := records.Prepare(&r); err != nil {
		t.Fatalf("%s: %v", body, err)
	}
	return r
}

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if math.Abs(got-want) > tol {
		t.Errorf("%s = %.6f, want %.6f ± %g", name, got, want, tol)
	}
}

// A camp's tests in order, each series compared with its own previous
// entry: V_IFT against the 30-15 IFT's typical error (CV 2.5 %, Thomas et
// al. 2016 [V]; 90 % limits 1.645 × √2 × TE, Hopkins 2000 [D]); sprints,
// strength and drop jumps plainly; CMJs are not tests here.
func TestBuild(t *testing.T) {
	h := Build([]devsync.Record{
		rec(t, 9, records.KindFitnessTest, "2026-11-20", `{"protocol":"ift_30_15","stage":26}`), // 20.5 km/h
		rec(t, 1, records.KindFitnessTest, "2026-10-30", `{"protocol":"ift_30_15","stage":23}`), // 19.0 km/h
		rec(t, 2, records.KindFitnessTest, "2026-10-31", `{"protocol":"repeated_sprint","sprint_s":[4.00,4.05,4.10,4.12,4.20,4.25]}`),
		rec(t, 3, records.KindFitnessTest, "2026-11-21", `{"protocol":"repeated_sprint","sprint_s":[4.00,4.02,4.05,4.06,4.10,4.12]}`),
		rec(t, 4, records.KindStrength, "2026-10-31", `{"exercise":"back squat","sets":[{"load_kg":100,"reps":5}]}`),
		rec(t, 5, records.KindStrength, "2026-11-01", `{"exercise":"bench press","sets":[{"load_kg":40,"reps":5,"mpv_ms":1},{"load_kg":60,"reps":4,"mpv_ms":0.75},{"load_kg":80,"reps":3,"mpv_ms":0.5}]}`),
		rec(t, 6, records.KindStrength, "2026-11-22", `{"exercise":"Back squat","sets":[{"load_kg":105,"reps":5}]}`),
		rec(t, 7, records.KindJump, "2026-11-01", `{"test":"dj","drop_cm":40,"flight_ms":[500],"contact_ms":[200]}`),
		rec(t, 8, records.KindJump, "2026-11-01", `{"test":"cmj","flight_ms":[500,510,505]}`),
	})
	if len(h) != 8 {
		t.Fatalf("%d entries, want 8 (the CMJ is not a test here): %+v", len(h), h)
	}
	if h[0].Test != records.ProtocolIFT || *h[0].VIFTKmh != 19.0 || h[0].Change != nil {
		t.Errorf("first entry %+v", h[0])
	}
	var ift2, rs2, sq2, bench, dj *Entry
	for i := range h {
		e := &h[i]
		switch {
		case e.Test == records.ProtocolIFT && e.Day == "2026-11-20":
			ift2 = e
		case e.Test == records.ProtocolSprint && e.Day == "2026-11-21":
			rs2 = e
		case e.Series == "strength:back squat" && e.Day == "2026-11-22":
			sq2 = e
		case e.Exercise == "bench press":
			bench = e
		case e.Test == records.JumpDrop:
			dj = e
		}
	}
	if ift2 == nil || ift2.Change == nil {
		t.Fatal("second IFT has no change")
	}
	near(t, "V_IFT change", ift2.Change.Delta, 1.5, 1e-9)
	near(t, "TE at 19.0", ift2.Change.TE, 0.475, 1e-9)
	if ift2.Change.Source != "Thomas et al. 2016" || !ift2.Change.Clear() {
		t.Errorf("IFT change %+v", ift2.Change)
	}
	// Sdec 3.0000 % → 1.6667 % [D: (24.35 / 24 − 1) × 100 = 1.4583 %]: a plain change.
	near(t, "second Sdec", *rs2.SDecPct, 1.4583, 0.00005)
	near(t, "Sdec change", rs2.Change.Delta, 1.4583-3.0, 0.0001)
	if rs2.Change.Source != "" || rs2.Better != "down" {
		t.Errorf("sprint change %+v better %s", rs2.Change, rs2.Better)
	}
	// The same exercise whatever its capitals: 116.6667 → 122.5 kg (Epley).
	if sq2 == nil || sq2.Change == nil {
		t.Fatal("second squat not compared with the first")
	}
	near(t, "squat change", sq2.Change.Delta, 122.5-116.6667, 0.0001)
	if bench.EpleyKg == nil || bench.LV1RMKg == nil {
		t.Fatalf("bench %+v", bench)
	}
	near(t, "bench LV 1RM", *bench.LV1RMKg, 106.40, 0.005)
	near(t, "DJ RSI", *dj.RSI, 1.5328, 0.00005)
	if dj.Label != "Drop jump 40 cm" || dj.ValueKey != "rsi" {
		t.Errorf("dj %+v", dj)
	}
	if ift2.Summary != "V_IFT 20.5 km/h (stage 26 from 8 km/h)" {
		t.Errorf("summary %q", ift2.Summary)
	}
}

// Prescriptions draw on the latest values: a measured HRmax replaces the
// age prediction (REFERENCES §8.1 [CP]); Tanaka 2001 at 24 years = 191.2
// bpm (§14.2 [D]).
func TestLatestOf(t *testing.T) {
	h := Build([]devsync.Record{
		rec(t, 1, records.KindFitnessTest, "2026-10-30", `{"protocol":"ift_30_15","stage":23}`),
		rec(t, 2, records.KindFitnessTest, "2026-11-20", `{"protocol":"ift_30_15","stage":24}`),
		rec(t, 3, records.KindFitnessTest, "2026-11-25", `{"protocol":"hr_max","hr_max_bpm":197}`),
		rec(t, 4, records.KindStrength, "2026-10-31", `{"exercise":"back squat","sets":[{"load_kg":100,"reps":5}]}`),
	})
	l := LatestOf(h, 2002, "2026-11-21")
	near(t, "V_IFT", l.VIFTKmh, 19.5, 0)
	if l.VIFTDay != "2026-11-20" || l.HRMaxFrom != records.HRMaxAge {
		t.Errorf("latest %+v", l)
	}
	near(t, "Tanaka at 24", l.HRMaxBpm, 191.2, 1e-9)
	near(t, "squat e1RM", l.E1RMKg["back squat"], 116.6667, 0.00005)
	l = LatestOf(h, 2002, "2026-12-01")
	if l.HRMaxBpm != 197 || l.HRMaxFrom != records.HRMaxMeasured {
		t.Errorf("measured HRmax not used: %+v", l)
	}
	if l := LatestOf(h, 0, "2026-11-21"); l.HRMaxBpm != 0 {
		t.Errorf("no birth year, yet HRmax %v", l.HRMaxBpm)
	}
}

// Done against prescribed: 70 m of a 71.25 m target is 98.2 %; 22 of 24
// reps is 91.7 % (arithmetic, common practice, no source).
func TestSessions(t *testing.T) {
	s := Sessions([]devsync.Record{
		rec(t, 1, records.KindIntervals, "2026-11-20", `{"protocol":"short_15_15","modality":"run","work_s":15,"rest_s":15,"reps":12,"sets":2,"pct_vift":90,"vift_kmh":19,"done_reps":22,"done_rep_m":70,"hr_peak":181}`),
		rec(t, 2, records.KindIntervals, "2026-11-19", `{"modality":"bike","work_s":30,"rest_s":30,"reps":10}`),
		rec(t, 3, records.KindIntervals, "2026-11-18", `{"modality":"run","work_s":240,"rest_s":180,"reps":4,"hr_lo_pct":90,"hr_hi_pct":95,"hr_max_bpm":196}`),
	})
	if len(s) != 2 {
		t.Fatalf("%d sessions, want the two with a target: %+v", len(s), s)
	}
	if s[0].Day != "2026-11-18" || s[0].DonePct != nil || s[0].TargetHRLo != 176.4 {
		t.Errorf("first %+v", s[0])
	}
	near(t, "distance done %", *s[1].DonePct, 98.2, 1e-9)
	near(t, "reps done %", *s[1].RepsPct, 91.7, 1e-9)
	near(t, "target", s[1].TargetRepM, 71.25, 1e-9)
}
