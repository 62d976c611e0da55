// Package stats holds the statistics behind Cornerbook's flags: means and
// sample standard deviations, reliability (typical error, CV, smallest
// worthwhile change), z-scores, exponentially weighted means, least-squares
// slopes, Foster's monotony and strain, and acute:chronic load ratios.
//
// Every function is pure and allocation-free unless it returns a slice.
// SD means the sample SD (n − 1 denominator) unless the name says Pop.
// Functions that cannot answer (too few values, a zero divisor) return NaN
// or ok = false; they never divide by zero.
package stats

import "math"

// Mean is the arithmetic mean; NaN for no values.
func Mean(xs []float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	s := 0.0
	for _, x := range xs {
		s += x
	}
	return s / float64(len(xs))
}

// Sum adds the values.
func Sum(xs []float64) float64 {
	s := 0.0
	for _, x := range xs {
		s += x
	}
	return s
}

// SD is the sample standard deviation (n − 1); NaN for fewer than 2 values.
func SD(xs []float64) float64 {
	if len(xs) < 2 {
		return math.NaN()
	}
	return math.Sqrt(ss(xs) / float64(len(xs)-1))
}

// PopSD is the population standard deviation (n); NaN for no values.
func PopSD(xs []float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	return math.Sqrt(ss(xs) / float64(len(xs)))
}

// ss is the sum of squared deviations from the mean (two-pass, for accuracy).
func ss(xs []float64) float64 {
	m := Mean(xs)
	s := 0.0
	for _, x := range xs {
		d := x - m
		s += d * d
	}
	return s
}

// CVPercent is the coefficient of variation, 100 · SD / mean.
func CVPercent(xs []float64) float64 {
	m := Mean(xs)
	if m == 0 {
		return math.NaN()
	}
	return 100 * SD(xs) / m
}

// TypicalError estimates the within-athlete SD from two trials of the same
// athletes: SD(trial2 − trial1) / √2 (Hopkins 2000). NaN if the trials
// differ in length or hold fewer than 2 pairs.
func TypicalError(trial1, trial2 []float64) float64 {
	if len(trial1) != len(trial2) || len(trial1) < 2 {
		return math.NaN()
	}
	d := make([]float64, len(trial1))
	for i := range trial1 {
		d[i] = trial2[i] - trial1[i]
	}
	return SD(d) / math.Sqrt2
}

// TypicalErrorCV is the two-trial typical error as a percentage of the
// grand mean of both trials (Hopkins 2000).
func TypicalErrorCV(trial1, trial2 []float64) float64 {
	te := TypicalError(trial1, trial2)
	m := (Sum(trial1) + Sum(trial2)) / float64(len(trial1)+len(trial2))
	if m == 0 {
		return math.NaN()
	}
	return 100 * te / m
}

// SWC is the smallest worthwhile change: factor × between-athlete SD
// (Hopkins 2004 uses 0.2, a small Cohen effect).
func SWC(between []float64, factor float64) float64 {
	return factor * SD(between)
}

// Z is the z-score of x against a mean and SD; NaN if sd is not positive.
func Z(x, mean, sd float64) float64 {
	if !(sd > 0) {
		return math.NaN()
	}
	return (x - mean) / sd
}

// Lambda is the EWMA decay for a span of n values: 2 / (n + 1)
// (Williams et al. 2017).
func Lambda(n float64) float64 { return 2 / (n + 1) }

// EWMA returns the exponentially weighted mean after the last value,
// seeded with the first value: e₁ = x₁, eᵢ = λ·xᵢ + (1 − λ)·eᵢ₋₁.
// NaN for no values.
func EWMA(xs []float64, lambda float64) float64 {
	if len(xs) == 0 {
		return math.NaN()
	}
	return EWMASeeded(xs[1:], lambda, xs[0])
}

// EWMASeeded runs the recursion over xs starting from e₀ = seed.
func EWMASeeded(xs []float64, lambda, seed float64) float64 {
	e := seed
	for _, x := range xs {
		e = lambda*x + (1-lambda)*e
	}
	return e
}

// Slope is the ordinary least-squares slope of y on x; NaN for fewer than
// two distinct x values.
func Slope(x, y []float64) float64 {
	if len(x) != len(y) || len(x) < 2 {
		return math.NaN()
	}
	mx, my := Mean(x), Mean(y)
	var sxy, sxx float64
	for i := range x {
		dx := x[i] - mx
		sxy += dx * (y[i] - my)
		sxx += dx * dx
	}
	if sxx == 0 {
		return math.NaN()
	}
	return sxy / sxx
}

// Monotony is Foster's mean daily load / SD of daily loads over the days
// given (rest days included as 0; Foster 1998), with the sample SD.
// ok is false when the SD is 0 (identical loads: "no variation") or there
// are fewer than 2 days; the function never divides by zero.
func Monotony(daily []float64) (m float64, ok bool) {
	sd := SD(daily)
	if !(sd > 0) {
		return math.NaN(), false
	}
	return Mean(daily) / sd, true
}

// Strain is Foster's weekly load × monotony (Foster 1998).
func Strain(daily []float64) (s float64, ok bool) {
	m, ok := Monotony(daily)
	if !ok {
		return math.NaN(), false
	}
	return Sum(daily) * m, true
}

// ACWR is an acute:chronic load state.
type ACWR struct {
	Acute, Chronic float64
	// Ratio is Acute / Chronic; NaN when Chronic is not positive.
	Ratio float64
}

// EWMARatio runs the acute and chronic EWMAs over consecutive daily loads
// (rest days as 0), both seeded with the first day's load (Williams et al.
// 2017, acute N = 7, chronic N = 28 by default in the rules).
func EWMARatio(daily []float64, acuteN, chronicN float64) ACWR {
	if len(daily) == 0 {
		return ACWR{math.NaN(), math.NaN(), math.NaN()}
	}
	return EWMARatioSeeded(daily[1:], acuteN, chronicN, daily[0])
}

// EWMARatioSeeded is EWMARatio with an explicit seed for both averages,
// applied before the first load in daily.
func EWMARatioSeeded(daily []float64, acuteN, chronicN, seed float64) ACWR {
	a := EWMASeeded(daily, Lambda(acuteN), seed)
	c := EWMASeeded(daily, Lambda(chronicN), seed)
	return ACWR{Acute: a, Chronic: c, Ratio: ratio(a, c)}
}

func ratio(a, c float64) float64 {
	if !(c > 0) {
		return math.NaN()
	}
	return a / c
}

// RollingRatios are the rolling-average acute:chronic ratios over the last
// 28 daily loads (Windt & Gabbett 2019): acute = mean of the last 7 days;
// coupled chronic = mean of all 28; uncoupled chronic = mean of the 21 days
// before the acute week. ok is false with fewer than 28 days.
func RollingRatios(daily []float64) (coupled, uncoupled float64, ok bool) {
	if len(daily) < 28 {
		return math.NaN(), math.NaN(), false
	}
	w := daily[len(daily)-28:]
	acute := Mean(w[21:])
	return ratio(acute, Mean(w)), ratio(acute, Mean(w[:21])), true
}

// Weekly ratios from four weekly totals W1..W4 (W4 the current week):
// coupled = W4 / mean(W1..W4), uncoupled = W4 / mean(W1..W3)
// (Windt & Gabbett 2019).
func WeeklyRatios(w1, w2, w3, w4 float64) (coupled, uncoupled float64) {
	return ratio(w4, (w1+w2+w3+w4)/4), ratio(w4, (w1+w2+w3)/3)
}

// ChangePct is the change from baseline to x as a percentage of the
// baseline (negative for a drop).
func ChangePct(baseline, x float64) float64 { return (x - baseline) / baseline * 100 }

// ChangeTE is the change from baseline to x in units of the typical error
// (Hopkins 2000); NaN if te is not positive.
func ChangeTE(baseline, x, te float64) float64 {
	if !(te > 0) {
		return math.NaN()
	}
	return (x - baseline) / te
}
