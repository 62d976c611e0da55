package fitness

import (
	"math"
	"strings"
	"testing"
)

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.6f, want %.6f ± %g", name, got, want, tol)
	}
}

// The 30-15 IFT stage table: first stage 8 km/h, +0.5 km/h every 45-s stage,
// V_IFT = the last stage completed (Buchheit 2008, J Strength Cond Res
// 22(2):365–374 [V]; the protocol as restated in later studies that used
// it, some of which started at 10 km/h [V]). Stage 24 = 19.5 km/h
// (REFERENCES §9 [D]).
func TestIFTStageTable(t *testing.T) {
	stages, err := IFTStages(IFTStartKmh)
	if err != nil {
		t.Fatal(err)
	}
	if len(stages) != 35 {
		t.Fatalf("%d stages from 8 to 25 km/h, want 35", len(stages))
	}
	for i, s := range stages {
		if s.Stage != i+1 || s.SpeedKmh != 8+0.5*float64(i) {
			t.Fatalf("stage %d = %+v", i+1, s)
		}
	}
	for _, c := range []struct {
		start float64
		stage int
		want  float64
	}{
		{8, 1, 8.0}, {8, 2, 8.5}, {8, 23, 19.0}, {8, 24, 19.5}, {8, 35, 25.0},
		{10, 1, 10.0}, {10, 19, 19.0}, {10, 31, 25.0},
	} {
		v, err := IFTSpeed(c.start, c.stage)
		if err != nil || v != c.want {
			t.Errorf("IFTSpeed(%g, %d) = %g, %v; want %g", c.start, c.stage, v, err, c.want)
		}
		st, err := IFTStageOf(c.start, c.want)
		if err != nil || st != c.stage {
			t.Errorf("IFTStageOf(%g, %g) = %d, %v; want %d", c.start, c.want, st, err, c.stage)
		}
	}
	// Stages and speeds the protocol does not have.
	for _, c := range []struct {
		start float64
		stage int
		words string
	}{{8, 0, "stages 1 to 35"}, {8, 36, "not 36"}, {10, 32, "stages 1 to 31"}, {9, 3, "starts at 8 or 10"}} {
		if _, err := IFTSpeed(c.start, c.stage); err == nil || !strings.Contains(err.Error(), c.words) {
			t.Errorf("IFTSpeed(%g, %d) error %v, want it to say %q", c.start, c.stage, err, c.words)
		}
	}
	for _, v := range []float64{19.3, 7.5, 25.5, 9.0 + 1e-6} {
		if _, err := IFTStageOf(8, v); err == nil || !strings.Contains(err.Error(), "no stage") {
			t.Errorf("IFTStageOf(8, %g) error %v, want no stage", v, err)
		}
	}
	if _, err := IFTStageOf(10, 9.5); err == nil {
		t.Error("9.5 km/h is below the 10 km/h start")
	}
}

// Distance per repetition = V_IFT / 3.6 × fraction × seconds: REFERENCES
// §14.2 [D] (19.0 km/h: 90 % for 15 s → 71.25 m, 80 % for 180 s → 760 m) and
// §9 [D] (19.5 km/h for 15 s: 95 % → 77.1875 m, 90 % → 73.1250 m); method of
// Buchheit 2008; m/s = km/h ÷ 3.6 exactly.
func TestRepDistance(t *testing.T) {
	near(t, "19.0 @ 90 % × 15 s", RepDistanceM(19.0, 90, 15), 71.25, 0.001)
	near(t, "19.0 @ 80 % × 180 s", RepDistanceM(19.0, 80, 180), 760, 0.001)
	near(t, "19.5 @ 95 % × 15 s", RepDistanceM(19.5, 95, 15), 77.1875, 0.001)
	near(t, "19.5 @ 90 % × 15 s", RepDistanceM(19.5, 90, 15), 73.1250, 0.001)
	near(t, "19.5 km/h in m/s", 19.5/KmhPerMs, 5.416667, 0.000001)
}

// Sdec = (Σt / (t_best × n) − 1) × 100 and fatigue = (t_slowest − t_best) /
// t_best × 100: REFERENCES §14.2 [V method, D values]; Fitzsimons et al.
// 1993 and Glaister et al. 2008 for the two scores [M for the citations].
func TestRepeatedSprints(t *testing.T) {
	s, err := RepeatedSprints([]float64{4.00, 4.05, 4.10, 4.12, 4.20, 4.25})
	if err != nil {
		t.Fatal(err)
	}
	near(t, "Sdec %", s.DecPct, 3.0000, 0.00005)
	near(t, "fatigue %", s.FatiguePct, 6.25, 0.00005)
	near(t, "best", s.BestS, 4.00, 0)
	near(t, "slowest", s.SlowestS, 4.25, 0)
	near(t, "total", s.TotalS, 24.72, 1e-9)
	// Order does not matter: the best need not be the first sprint.
	s2, _ := RepeatedSprints([]float64{4.25, 4.00, 4.20, 4.05, 4.12, 4.10})
	near(t, "Sdec shuffled", s2.DecPct, 3.0000, 0.00005)
	// Equal times: no decrement (common practice, no source: arithmetic).
	s3, _ := RepeatedSprints([]float64{4, 4, 4})
	near(t, "Sdec flat", s3.DecPct, 0, 1e-12)
	if _, err := RepeatedSprints([]float64{4.0}); err != ErrTooFewSprints {
		t.Errorf("one sprint: %v", err)
	}
	if _, err := RepeatedSprints([]float64{4.0, 0}); err == nil || !strings.Contains(err.Error(), "sprint 2") {
		t.Errorf("zero time: %v", err)
	}
}

// Tanaka, Monahan & Seals 2001: HRmax = 208 − 0.7 × age [V formula].
// REFERENCES §14.2 [D]: 24 years → 191.2 bpm, 90 % → 172.08 bpm; §8.1 [D]:
// 20 → 194.0, 25 → 190.5, 30 → 187.0, 40 → 180.0; §8.2 [D]: for 190.5,
// 64 % = 121.92, 76 % = 144.78, 77 % = 146.685, 95 % = 180.975 bpm.
func TestHeartRate(t *testing.T) {
	near(t, "Tanaka 24", TanakaHRmax(24), 191.2, 1e-9)
	for age, want := range map[float64]float64{20: 194.0, 25: 190.5, 30: 187.0, 40: 180.0} {
		near(t, "Tanaka", TanakaHRmax(age), want, 1e-9)
	}
	b := Band(TanakaHRmax(24), 90, 95)
	near(t, "90 % of 191.2", b.LoBpm, 172.08, 0.001)
	near(t, "95 % of 191.2", b.HiBpm, 181.64, 0.001)
	m := Band(190.5, 64, 76)
	near(t, "64 % of 190.5", m.LoBpm, 121.92, 0.001)
	near(t, "76 % of 190.5", m.HiBpm, 144.78, 0.001)
	v := Band(190.5, 77, 95)
	near(t, "77 % of 190.5", v.LoBpm, 146.685, 0.001)
	near(t, "95 % of 190.5", v.HiBpm, 180.975, 0.001)
}

// Epley w(1 + r/30), Brzycki w × 36/(37 − r), only up to 10 reps (Reynolds,
// Gordon & Robergs 2006): REFERENCES §14.3 [V rule, D values]: 100 kg × 5 →
// 116.6667 / 112.5000 kg; × 10 → both 133.3333 kg; × 11 → no estimate.
func TestOneRMEstimates(t *testing.T) {
	e, ok := Epley(100, 5)
	if !ok {
		t.Fatal("Epley 100 × 5 refused")
	}
	near(t, "Epley 100 × 5", e, 116.6667, 0.00005)
	b, ok := Brzycki(100, 5)
	if !ok {
		t.Fatal("Brzycki 100 × 5 refused")
	}
	near(t, "Brzycki 100 × 5", b, 112.5000, 0.00005)
	e10, _ := Epley(100, 10)
	b10, _ := Brzycki(100, 10)
	near(t, "Epley 100 × 10", e10, 133.3333, 0.00005)
	near(t, "Brzycki 100 × 10", b10, 133.3333, 0.00005)
	for _, r := range []int{11, 0, -1, 36, 37} {
		if _, ok := Epley(100, r); ok {
			t.Errorf("Epley × %d gave an estimate", r)
		}
		if _, ok := Brzycki(100, r); ok {
			t.Errorf("Brzycki × %d gave an estimate", r)
		}
	}
	near(t, "80 % of 116.6667", LoadAtPct(e, 80), 93.3333, 0.00005)
}

// The individual load–velocity line: REFERENCES §14.3 [D]: 40 / 60 / 80 kg
// at 1.00 / 0.75 / 0.50 m/s → slope −0.0125 (m/s)/kg, 1RM at 0.17 m/s =
// 106.40 kg; method of González-Badillo & Sánchez-Medina 2010 [V].
func TestLoadVelocity(t *testing.T) {
	l, err := LoadVelocity([]LVPoint{{40, 1.00}, {60, 0.75}, {80, 0.50}})
	if err != nil {
		t.Fatal(err)
	}
	near(t, "slope", l.Slope, -0.0125, 1e-12)
	near(t, "intercept", l.Intercept, 1.5, 1e-12)
	near(t, "R²", l.R2, 1, 1e-12)
	near(t, "1RM at 0.17 m/s", l.OneRMAt(DefaultMinVelocity), 106.40, 0.005)
	// A different minimal velocity moves the 1RM along the same line.
	near(t, "1RM at 0.30 m/s", l.OneRMAt(0.30), 96.0, 1e-9)
	if l.Loads != 3 {
		t.Errorf("loads = %d", l.Loads)
	}
	// Two sets at one load count as one load.
	if _, err := LoadVelocity([]LVPoint{{40, 1.0}, {40, 0.98}, {60, 0.75}}); err == nil || !strings.Contains(err.Error(), "3 different loads") {
		t.Errorf("two loads: %v", err)
	}
	if _, err := LoadVelocity([]LVPoint{{40, 0.5}, {60, 0.75}, {80, 1.0}}); err == nil || !strings.Contains(err.Error(), "does not fall") {
		t.Errorf("rising line: %v", err)
	}
}

// Drop jump: h = g·t²/8 (flight-time method) and RSI = height / contact time
// (Healy et al. 2017): REFERENCES §14.3 [V, D]: flight 0.500 s, contact
// 0.200 s → 0.306563 m, RSI 1.5328.
func TestDropJump(t *testing.T) {
	near(t, "height", JumpHeightM(0.5), 0.306563, 0.0000005)
	r, ok := RSI(0.5, 0.2)
	if !ok {
		t.Fatal("RSI refused")
	}
	near(t, "RSI", r, 1.5328, 0.00005)
	if _, ok := RSI(0.5, 0); ok {
		t.Error("RSI with no contact time")
	}
}

// Change against a published typical error: the 30-15 IFT's between-session
// CV of 2.5 % (Thomas et al. 2016, IJSPP 11(2):172–175 [V, abstract]); the
// 90 % limits of a single-vs-single change are ± 1.645 × √2 × TE (Hopkins
// 2000; REFERENCES §2.3 [D]). 19.0 km/h: TE 0.475 km/h, limits ± 1.1049
// km/h [D], so one stage (+0.5) is within the noise and two (+1.0) are
// not quite out of it, as Thomas et al. judged 1.0 km/h the smallest
// real change; +1.5 km/h is clear.
func TestChangeAgainstTypicalError(t *testing.T) {
	c := ChangeOf(19.0, 20.5, &IFTReliability)
	near(t, "delta", c.Delta, 1.5, 1e-12)
	near(t, "pct", c.Pct, 7.894737, 0.000001)
	near(t, "TE", c.TE, 0.475, 1e-12)
	near(t, "in TE", c.InTE, 3.157895, 0.000001)
	near(t, "90 % limit", c.Limit90, 1.104933, 0.000001)
	if c.Source != "Thomas et al. 2016" || !c.Clear() {
		t.Errorf("change %+v: want clear, named source", c)
	}
	if ChangeOf(19.0, 19.5, &IFTReliability).Clear() {
		t.Error("one stage is within the 90 % limits")
	}
	if !ChangeOf(19.0, 17.5, &IFTReliability).Clear() {
		t.Error("a fall of three stages is clear")
	}
	// Without a published error the change is plain.
	p := ChangeOf(116.6667, 120, nil)
	near(t, "plain delta", p.Delta, 3.3333, 0.00005)
	if p.TE != 0 || p.Source != "" || p.Clear() {
		t.Errorf("plain change carries a judgement: %+v", p)
	}
}

// A strength test's estimates over its sets: the best estimate of each
// equation (REFERENCES §14.3 values [D]); a set of 11 reps gives none
// (Reynolds 2006 [V]); reps in reserve count towards the reps a set stood
// for (common practice, no source); three loads with a velocity give the
// line and its 1RM (§14.3 [D]).
func TestEstimateSets(t *testing.T) {
	i := func(v int) *int { return &v }
	f := func(v float64) *float64 { return &v }
	s := Estimate([]Set{{LoadKg: 80, Reps: 11}, {LoadKg: 100, Reps: 5}, {LoadKg: 90, Reps: 6}}, 0)
	near(t, "best Epley", s.EpleyKg, 116.6667, 0.00005)
	near(t, "best Brzycki", s.BrzyckiKg, 112.5, 0.00005)
	if s.Line != nil || s.LV1RMKg != 0 {
		t.Errorf("no velocities, yet a line: %+v", s)
	}
	none := Estimate([]Set{{LoadKg: 60, Reps: 11}, {LoadKg: 60, Reps: 12}}, 0)
	if none.EpleyKg != 0 || none.BrzyckiKg != 0 {
		t.Errorf("sets over 10 reps gave an estimate: %+v", none)
	}
	// 100 kg × 5 with 2 in reserve stands for 7 to failure: Epley 123.3333,
	// Brzycki 120.0000 [D]; with 6 in reserve (11) no estimate.
	r := Estimate([]Set{{LoadKg: 100, Reps: 5, RIR: i(2)}}, 0)
	near(t, "Epley 5 + 2 RIR", r.EpleyKg, 123.3333, 0.00005)
	near(t, "Brzycki 5 + 2 RIR", r.BrzyckiKg, 120.0, 0.00005)
	if e := Estimate([]Set{{LoadKg: 100, Reps: 5, RIR: i(6)}}, 0); e.EpleyKg != 0 {
		t.Errorf("5 + 6 in reserve is 11 reps, yet %+v", e)
	}
	lv := Estimate([]Set{{LoadKg: 40, Reps: 5, MPV: f(1.00)}, {LoadKg: 60, Reps: 4, MPV: f(0.75)}, {LoadKg: 80, Reps: 3, MPV: f(0.50)}}, 0)
	if lv.Line == nil {
		t.Fatal("no line from three loads")
	}
	near(t, "LV 1RM", lv.LV1RMKg, 106.40, 0.005)
	near(t, "min velocity", lv.MinVelocity, 0.17, 0)
	near(t, "LV 1RM at 0.30", Estimate([]Set{{LoadKg: 40, Reps: 5, MPV: f(1.00)}, {LoadKg: 60, Reps: 4, MPV: f(0.75)}, {LoadKg: 80, Reps: 3, MPV: f(0.50)}}, 0.30).LV1RMKg, 96, 1e-9)
}

// Bar speed falls as the load rises (González-Badillo & Sánchez-Medina
// 2010 [V]); a heavier set moved faster than a lighter one is named.
func TestRisingVelocity(t *testing.T) {
	if _, _, found := RisingVelocity([]LVPoint{{40, 1.0}, {60, 0.75}, {60, 0.78}, {80, 0.5}}); found {
		t.Error("speeds in order flagged")
	}
	i, j, found := RisingVelocity([]LVPoint{{40, 1.0}, {60, 0.75}, {80, 0.80}})
	if !found || i != 2 || j != 1 {
		t.Errorf("got %d, %d, %v; want set 2 faster than set 1", i, j, found)
	}
	i, j, found = RisingVelocity([]LVPoint{{80, 0.5}, {40, 0.4}})
	if !found || i != 1 || j != 0 {
		t.Errorf("lighter and slower: got %d, %d, %v", i, j, found)
	}
}
