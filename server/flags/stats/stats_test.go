package stats

import (
	"math"
	"testing"
)

func near(t *testing.T, name string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Errorf("%s = %.7f, want %.7f ± %g", name, got, want, tol)
	}
}

// Hopkins 2000 (typical error from two trials) and Hopkins 2004 (SWC =
// 0.2 × between-athlete SD): the five-athlete CMJ example, REFERENCES §2.4 [D].
func TestReliabilityTwoTrials(t *testing.T) {
	t1 := []float64{40, 42, 38, 45, 35}
	t2 := []float64{41, 41, 39, 47, 34}
	diff := make([]float64, 5)
	for i := range t1 {
		diff[i] = t2[i] - t1[i]
	}
	near(t, "mean diff", Mean(diff), 0.4, 0.0005)
	near(t, "SD diff", SD(diff), 1.341641, 0.0005)
	near(t, "TE", TypicalError(t1, t2), 0.948683, 0.0005)
	near(t, "CV %", TypicalErrorCV(t1, t2), 2.3599, 0.0005)
	near(t, "between SD (trial 1)", SD(t1), 3.807887, 0.0005)
	near(t, "SWC 0.2 × SD trial 1", SWC(t1, 0.2), 0.761577, 0.0005)
	means := make([]float64, 5)
	for i := range t1 {
		means[i] = (t1[i] + t2[i]) / 2
	}
	near(t, "SWC from athlete means", SWC(means, 0.2), 0.841427, 0.0005)
	// 90 % half-width of a single-vs-single change: 1.645 · √2 · TE (normal theory).
	near(t, "90% half-width", 1.6448536*math.Sqrt2*TypicalError(t1, t2), 2.206865, 0.001)
	if !math.IsNaN(TypicalError(t1, t2[:4])) {
		t.Error("TypicalError of unequal trials should be NaN")
	}
}

// Foster 1998 monotony and strain, REFERENCES §3.3 [D]; sample SD pinned.
func TestMonotonyStrain(t *testing.T) {
	week := []float64{420, 225, 720, 0, 360, 120, 0}
	near(t, "weekly load", Sum(week), 1845, 0)
	near(t, "mean", Mean(week), 263.571429, 0.0005)
	near(t, "sample SD", SD(week), 259.208961, 0.0005)
	near(t, "population SD", PopSD(week), 239.980867, 0.0005)
	m, ok := Monotony(week)
	if !ok {
		t.Fatal("monotony not computed")
	}
	near(t, "monotony", m, 1.016830, 0.0005)
	s, _ := Strain(week)
	near(t, "strain", s, 1876.0512, 0.05)
	// Dropping the rest days is the bug signature: 1.6158.
	wrong, _ := Monotony([]float64{420, 225, 720, 360, 120})
	if math.Abs(wrong-m) < 0.5 {
		t.Error("rest days must count as zero")
	}
	near(t, "rest days dropped (bug signature)", wrong, 1.6158, 0.0005)

	high := []float64{400, 350, 420, 380, 400, 360, 0}
	m, _ = Monotony(high)
	near(t, "high monotony", m, 2.236753, 0.0005)
	s, _ = Strain(high)
	near(t, "high strain", s, 5166.8988, 0.05)
	near(t, "high population monotony", Mean(high)/PopSD(high), 2.415969, 0.0005)

	// Seven equal loads: undefined, no crash (common practice, no source).
	if _, ok := Monotony([]float64{300, 300, 300, 300, 300, 300, 300}); ok {
		t.Error("identical loads must report no variation")
	}
	if _, ok := Strain([]float64{0, 0, 0, 0, 0, 0, 0}); ok {
		t.Error("all rest: no strain")
	}
}

// Williams et al. 2017 EWMA recursion, seeded with day 1, REFERENCES §4.2 [D].
func TestEWMARatio(t *testing.T) {
	near(t, "λ acute", Lambda(7), 0.25, 1e-9)
	near(t, "λ chronic", Lambda(28), 0.0689655172, 1e-9)
	loads := []float64{300, 0, 450, 200, 0, 500, 350, 400, 0, 600}
	table := []struct{ acute, chronic, ratio float64 }{
		{300, 300, 1}, {225, 279.3103, 0.8056}, {281.25, 291.0820, 0.9662},
		{260.9375, 284.8005, 0.9162}, {195.7031, 265.1591, 0.7381},
		{271.7773, 281.3550, 0.9660}, {291.3330, 286.0892, 1.0183},
		{318.4998, 293.9451, 1.0835}, {238.8748, 273.6730, 0.8728},
		{329.1561, 296.1783, 1.1113},
	}
	for i, row := range table {
		r := EWMARatio(loads[:i+1], 7, 28)
		near(t, "acute", r.Acute, row.acute, 0.0005)
		near(t, "chronic", r.Chronic, row.chronic, 0.0005)
		near(t, "ratio", r.Ratio, row.ratio, 0.0005)
	}
	r := EWMARatioSeeded(loads, 7, 28, 0)
	near(t, "seed 0 acute", r.Acute, 312.2621, 0.0005)
	near(t, "seed 0 chronic", r.Chronic, 149.3605, 0.0005)
	near(t, "seed 0 ratio", r.Ratio, 2.0907, 0.0005)
	near(t, "EWMA agrees", EWMA(loads, 0.25), 329.1561, 0.0005)
	if r := EWMARatio([]float64{0, 0, 0}, 7, 28); !math.IsNaN(r.Ratio) {
		t.Error("zero chronic load must not give a ratio")
	}
}

// Windt & Gabbett 2019 coupled and uncoupled ratios, REFERENCES §4.1 [D].
func TestRollingRatios(t *testing.T) {
	c, u := WeeklyRatios(1500, 1600, 1700, 2400)
	near(t, "coupled", c, 1.333333, 0.0005)
	near(t, "uncoupled", u, 1.5, 0.0005)
	near(t, "identity 4u/(u+3)", 4*u/(u+3), c, 1e-12)

	// The same weeks as daily loads: the daily form must agree.
	var daily []float64
	for _, w := range []float64{1500, 1600, 1700, 2400} {
		for d := 0; d < 7; d++ {
			daily = append(daily, w/7)
		}
	}
	daily = append([]float64{9999, 9999}, daily...) // older days fall outside the window
	c, u, ok := RollingRatios(daily)
	if !ok {
		t.Fatal("rolling ratios not computed")
	}
	near(t, "daily coupled", c, 1.333333, 0.0005)
	near(t, "daily uncoupled", u, 1.5, 0.0005)
	if _, _, ok := RollingRatios(daily[:27]); ok {
		t.Error("27 days must not give a ratio")
	}
}

// z-score of a wellness total against its own baseline, REFERENCES §5.3
// [D]; common practice, no single source.
func TestZ(t *testing.T) {
	base := []float64{19, 20, 18, 21, 19, 17, 19}
	near(t, "baseline mean", Mean(base), 19, 1e-12)
	near(t, "baseline SD", SD(base), 1.290994, 0.001)
	near(t, "z", Z(15, Mean(base), SD(base)), -3.098387, 0.001)
	near(t, "z population SD", Z(15, Mean(base), PopSD(base)), -3.346640, 0.001)
	if !math.IsNaN(Z(15, 19, 0)) {
		t.Error("z with SD 0 must be NaN")
	}
}

func TestSlope(t *testing.T) {
	// 70.0 → 68.6 kg over one week is −0.2 kg/day, 2.0000 % of 70 kg per
	// week (Garthe et al. 2011 context; REFERENCES §6.1 [D]).
	s := Slope([]float64{0, 7}, []float64{70, 68.6})
	near(t, "slope kg/day", s, -0.2, 1e-12)
	near(t, "loss %/week", -s*7/70*100, 2.0, 0.001)
	// Exact line with noise-free points: y = 3 − 0.5 x.
	near(t, "line", Slope([]float64{1, 2, 4, 8}, []float64{2.5, 2, 1, -1}), -0.5, 1e-12)
	if !math.IsNaN(Slope([]float64{1, 1}, []float64{1, 2})) {
		t.Error("slope over one x must be NaN")
	}
}

func TestEmptyInputs(t *testing.T) {
	for name, v := range map[string]float64{
		"Mean": Mean(nil), "SD one": SD([]float64{1}), "PopSD": PopSD(nil),
		"CV zero mean": CVPercent([]float64{0, 0}), "EWMA": EWMA(nil, 0.25),
	} {
		if !math.IsNaN(v) {
			t.Errorf("%s = %v, want NaN", name, v)
		}
	}
	near(t, "CV", CVPercent([]float64{40.0, 41.0, 39.5, 40.5, 39.0}), 100*0.7906/40, 0.001)
}

// CMJ drop against a baseline, REFERENCES §1.5 [D]: baseline 40.0 cm, today
// 37.0 cm → −7.5 %, and −2.5 typical errors with TE 1.2 cm (Hopkins 2000
// typical-error concept).
func TestChange(t *testing.T) {
	base := []float64{40.0, 41.0, 39.5, 40.5, 39.0}
	near(t, "baseline mean", Mean(base), 40.0, 1e-12)
	near(t, "baseline SD", SD(base), 0.7906, 0.0005)
	near(t, "change %", ChangePct(40, 37), -7.5, 0.01)
	near(t, "change TE", ChangeTE(40, 37, 0.03*40), -2.5, 0.01)
	if !math.IsNaN(ChangeTE(40, 37, 0)) {
		t.Error("TE 0 must be NaN")
	}
}
