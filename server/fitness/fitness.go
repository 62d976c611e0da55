// Package fitness holds the formulas behind Cornerbook's fitness and
// strength tests and the prescriptions drawn from them: the 30-15
// Intermittent Fitness Test's stage table and interval distances at a
// share of its final speed, repeated-sprint decrement and fatigue, age-
// predicted maximal heart rate and heart-rate bands, estimated one-
// repetition maxima (Epley, Brzycki) and the load–velocity line, drop-jump
// height and reactive strength index, and the change between two tests
// against a published typical error where one exists.
//
// It is pure: no I/O, no clock, no imports from the project. Every function
// is exact arithmetic on a published formula; the tests check each one
// against a worked example and name the source beside it. Functions that
// cannot answer return ok = false or an error in plain words; they never
// divide by zero or return NaN to a caller.
package fitness

import (
	"errors"
	"fmt"
	"math"
)

// G is the gravitational acceleration used for jump heights, in m/s²; the
// same constant as the CMJ heights (records.G), so a drop jump and a CMJ
// of the same flight time have the same height.
const G = 9.81

// KmhPerMs converts metres per second to km/h exactly (3600 s / 1000 m).
const KmhPerMs = 3.6

// ---------------------------------------------------------------------------
// 30-15 Intermittent Fitness Test (Buchheit 2008)

// The 30-15 IFT (Buchheit 2008, J Strength Cond Res 22(2):365–374): 30 s
// shuttle runs over 40 m with 15 s walking recovery; the first stage is run
// at 8 km/h and each 45-s stage adds 0.5 km/h; the test ends when the runner
// misses the 3 m zone three times running, and V_IFT is the speed of the
// last stage completed. Some studies start at 10 km/h, so the start speed
// is part of a result.
const (
	IFTStartKmh    = 8.0  // the published first stage
	IFTAltStartKmh = 10.0 // the start some later studies used
	IFTStepKmh     = 0.5  // added at every stage
	IFTTopKmh      = 25.0 // the table's last speed: a sanity limit, above any result seen (common practice)
	IFTShuttleM    = 40.0 // shuttle length
	IFTRunS        = 30.0 // run per stage
	IFTWalkS       = 15.0 // walking recovery per stage
)

// Stage is one stage of the 30-15 IFT.
type Stage struct {
	Stage    int     `json:"stage"`
	SpeedKmh float64 `json:"speed_kmh"`
}

// IFTStages is the stage table from a start speed (8 or 10 km/h) up to
// IFTTopKmh: stage n is run at start + 0.5·(n − 1) km/h.
func IFTStages(startKmh float64) ([]Stage, error) {
	if err := checkIFTStart(startKmh); err != nil {
		return nil, err
	}
	n := IFTStageCount(startKmh)
	out := make([]Stage, n)
	for i := range out {
		out[i] = Stage{Stage: i + 1, SpeedKmh: startKmh + IFTStepKmh*float64(i)}
	}
	return out, nil
}

// IFTStageCount is the number of stages in the table from a start speed.
func IFTStageCount(startKmh float64) int {
	return int(math.Round((IFTTopKmh-startKmh)/IFTStepKmh)) + 1
}

func checkIFTStart(startKmh float64) error {
	if startKmh != IFTStartKmh && startKmh != IFTAltStartKmh {
		return fmt.Errorf("the test starts at %g or %g km/h, not %g", IFTStartKmh, IFTAltStartKmh, startKmh)
	}
	return nil
}

// IFTSpeed is V_IFT, the speed of the final stage completed, in km/h. A
// stage the table does not have is an error that names the stages it has.
func IFTSpeed(startKmh float64, stage int) (float64, error) {
	if err := checkIFTStart(startKmh); err != nil {
		return 0, err
	}
	n := IFTStageCount(startKmh)
	if stage < 1 || stage > n {
		return 0, fmt.Errorf("the test starting at %g km/h has stages 1 to %d (%g to %g km/h), not %d",
			startKmh, n, startKmh, IFTTopKmh, stage)
	}
	return startKmh + IFTStepKmh*float64(stage-1), nil
}

// IFTStageOf is the stage run at a speed, or an error when the protocol has
// no stage at that speed (speeds go in steps of 0.5 km/h from the start).
func IFTStageOf(startKmh, speedKmh float64) (int, error) {
	if err := checkIFTStart(startKmh); err != nil {
		return 0, err
	}
	k := (speedKmh - startKmh) / IFTStepKmh
	r := math.Round(k)
	if math.Abs(k-r) > 1e-9 || r < 0 || speedKmh > IFTTopKmh+1e-9 {
		return 0, fmt.Errorf("the test has no stage at %g km/h: stages run from %g to %g km/h in steps of 0.5",
			speedKmh, startKmh, IFTTopKmh)
	}
	return int(r) + 1, nil
}

// RepDistanceM is the distance of one interval repetition in metres: a share
// of V_IFT held for a number of seconds, V_IFT / 3.6 × pct / 100 × seconds
// (Buchheit 2008; REFERENCES §14.2). It does not apply Buchheit's
// correction for changes of direction; a coach running shuttles shortens
// the course, not the speed.
func RepDistanceM(viftKmh, pct, seconds float64) float64 {
	return viftKmh / KmhPerMs * pct / 100 * seconds
}

// ---------------------------------------------------------------------------
// Repeated sprints

// Sprints holds what one repeated-sprint test gives: the best and slowest
// time, the percentage decrement score and the fatigue index.
type Sprints struct {
	BestS      float64 `json:"best_s"`
	SlowestS   float64 `json:"slowest_s"`
	TotalS     float64 `json:"total_s"`
	DecPct     float64 `json:"sdec_pct"`
	FatiguePct float64 `json:"fatigue_pct"`
}

// ErrTooFewSprints is returned for fewer than two sprint times.
var ErrTooFewSprints = errors.New("a repeated-sprint test needs at least two sprint times")

// RepeatedSprints computes the percentage decrement score, Sdec = (Σt /
// (t_best × n) − 1) × 100, and the fatigue index, (t_slowest − t_best) /
// t_best × 100 (Fitzsimons et al. 1993; Glaister et al. 2008, who prefer
// Sdec because it uses every sprint). Times are in seconds and must be
// positive.
func RepeatedSprints(times []float64) (Sprints, error) {
	if len(times) < 2 {
		return Sprints{}, ErrTooFewSprints
	}
	s := Sprints{BestS: math.Inf(1)}
	for i, t := range times {
		if !(t > 0) || math.IsInf(t, 0) {
			return Sprints{}, fmt.Errorf("sprint %d: a time must be more than 0 s", i+1)
		}
		s.TotalS += t
		s.BestS = math.Min(s.BestS, t)
		s.SlowestS = math.Max(s.SlowestS, t)
	}
	s.DecPct = (s.TotalS/(s.BestS*float64(len(times))) - 1) * 100
	s.FatiguePct = (s.SlowestS - s.BestS) / s.BestS * 100
	return s, nil
}

// ---------------------------------------------------------------------------
// Heart rate

// TanakaHRmax is the age-predicted maximal heart rate, 208 − 0.7 × age, in
// beats per minute (Tanaka, Monahan & Seals 2001). Its prediction error is
// several beats either way; a measured maximum replaces it.
func TanakaHRmax(ageYears float64) float64 { return 208 - 0.7*ageYears }

// HRBand is a heart-rate target band as shares of a maximum.
type HRBand struct {
	LoBpm float64 `json:"lo_bpm"`
	HiBpm float64 `json:"hi_bpm"`
}

// Band is the band from loPct to hiPct of hrMax (percent of HRmax).
func Band(hrMax, loPct, hiPct float64) HRBand {
	return HRBand{LoBpm: hrMax * loPct / 100, HiBpm: hrMax * hiPct / 100}
}

// ---------------------------------------------------------------------------
// Strength

// MaxRepsForEstimate is the most repetitions a set may have for a 1RM
// estimate: beyond 10 the prediction equations lose accuracy (Reynolds,
// Gordon & Robergs 2006).
const MaxRepsForEstimate = 10

// Epley estimates the one-repetition maximum from a set taken to failure,
// w × (1 + r / 30) (Epley 1985). ok is false beyond 10 repetitions or for
// fewer than one.
func Epley(loadKg float64, reps int) (float64, bool) {
	if reps < 1 || reps > MaxRepsForEstimate || !(loadKg > 0) {
		return 0, false
	}
	return loadKg * (1 + float64(reps)/30), true
}

// Brzycki estimates the one-repetition maximum, w × 36 / (37 − r) (Brzycki
// 1993). ok is false beyond 10 repetitions or for fewer than one.
func Brzycki(loadKg float64, reps int) (float64, bool) {
	if reps < 1 || reps > MaxRepsForEstimate || !(loadKg > 0) {
		return 0, false
	}
	return loadKg * 36 / (37 - float64(reps)), true
}

// DefaultMinVelocity is the mean propulsive velocity taken as the velocity
// at 1RM when an exercise has none of its own, in m/s. González-Badillo &
// Sánchez-Medina 2010 found about 0.16 m/s at 1RM in the bench press; 0.17
// is the product owner's default (REFERENCES §14.3), editable per exercise.
const DefaultMinVelocity = 0.17

// LVPoint is one set's load and its mean propulsive velocity.
type LVPoint struct {
	LoadKg float64
	MPV    float64 // m/s
}

// LVLine is a least-squares line of velocity on load: v = Intercept +
// Slope × load, with R² and the number of distinct loads behind it.
type LVLine struct {
	Slope     float64 `json:"slope"`     // (m/s) per kg, negative
	Intercept float64 `json:"intercept"` // m/s at no load
	R2        float64 `json:"r2"`
	Loads     int     `json:"loads"`
}

// MinLVLoads is the fewest distinct loads a load–velocity line is drawn
// from (REFERENCES §14.3: three or more).
const MinLVLoads = 3

// LoadVelocity fits the individual load–velocity line by least squares
// (González-Badillo & Sánchez-Medina 2010: mean propulsive velocity tracks
// the share of 1RM closely). It needs three distinct loads and a line that
// falls with load.
func LoadVelocity(points []LVPoint) (LVLine, error) {
	loads := map[float64]bool{}
	var sx, sy float64
	for _, p := range points {
		loads[p.LoadKg] = true
		sx += p.LoadKg
		sy += p.MPV
	}
	if len(loads) < MinLVLoads {
		return LVLine{}, fmt.Errorf("a load–velocity line needs %d different loads with a bar speed; there are %d", MinLVLoads, len(loads))
	}
	n := float64(len(points))
	mx, my := sx/n, sy/n
	var sxx, sxy, syy float64
	for _, p := range points {
		dx, dy := p.LoadKg-mx, p.MPV-my
		sxx += dx * dx
		sxy += dx * dy
		syy += dy * dy
	}
	slope := sxy / sxx
	if !(slope < 0) {
		return LVLine{}, errors.New("bar speed does not fall as the load rises, so no 1RM can be read from it")
	}
	r2 := 1.0
	if syy > 0 {
		r2 = sxy * sxy / (sxx * syy)
	}
	return LVLine{Slope: slope, Intercept: my - slope*mx, R2: r2, Loads: len(loads)}, nil
}

// OneRMAt is the load at which the line reaches a minimal velocity: the 1RM
// by load–velocity, (v_min − intercept) / slope, in kg.
func (l LVLine) OneRMAt(minVelocity float64) float64 {
	return (minVelocity - l.Intercept) / l.Slope
}

// RisingVelocity finds the first set whose bar speed is faster than a set
// at a lighter load: i is that set, j the lighter one. Velocity falls as
// the load rises (González-Badillo & Sánchez-Medina 2010), so such a pair
// is an entry error. found is false when the speeds are in order.
func RisingVelocity(points []LVPoint) (i, j int, found bool) {
	for i = range points {
		for j = range points[:i] {
			a, b := points[i], points[j]
			if (a.LoadKg > b.LoadKg && a.MPV > b.MPV) || (a.LoadKg < b.LoadKg && a.MPV < b.MPV) {
				return i, j, true
			}
		}
	}
	return 0, 0, false
}

// Set is one strength set: load, repetitions, optionally the repetitions
// left in reserve and the mean propulsive velocity.
type Set struct {
	LoadKg float64
	Reps   int
	RIR    *int     // repetitions in reserve
	MPV    *float64 // m/s
}

// Strength is what a strength test gives: the best Epley and Brzycki
// estimates over its sets (zero when no set qualifies), and with three or
// more loads carrying a velocity, the load–velocity line and the 1RM at the
// exercise's minimal velocity.
type Strength struct {
	EpleyKg     float64 `json:"e1rm_epley_kg,omitempty"`
	BrzyckiKg   float64 `json:"e1rm_brzycki_kg,omitempty"`
	Line        *LVLine `json:"lv_line,omitempty"`
	LV1RMKg     float64 `json:"lv_1rm_kg,omitempty"`
	MinVelocity float64 `json:"min_velocity_ms,omitempty"`
}

// RepsToFailure is the repetitions a set stood for: the reps done plus the
// reps left in reserve, as a set stopped short of failure is a lighter
// effort than its reps say (common practice, no single source). The
// prediction equations were fitted to sets taken to failure.
func (s Set) RepsToFailure() int {
	if s.RIR != nil && *s.RIR > 0 {
		return s.Reps + *s.RIR
	}
	return s.Reps
}

// Estimate derives a strength test's estimates from its sets. minVelocity
// is the exercise's velocity at 1RM (DefaultMinVelocity when 0).
func Estimate(sets []Set, minVelocity float64) Strength {
	var out Strength
	var pts []LVPoint
	for _, s := range sets {
		r := s.RepsToFailure()
		if e, ok := Epley(s.LoadKg, r); ok && e > out.EpleyKg {
			out.EpleyKg = e
		}
		if b, ok := Brzycki(s.LoadKg, r); ok && b > out.BrzyckiKg {
			out.BrzyckiKg = b
		}
		if s.MPV != nil {
			pts = append(pts, LVPoint{LoadKg: s.LoadKg, MPV: *s.MPV})
		}
	}
	if minVelocity <= 0 {
		minVelocity = DefaultMinVelocity
	}
	if l, err := LoadVelocity(pts); err == nil {
		out.Line = &l
		out.MinVelocity = minVelocity
		out.LV1RMKg = l.OneRMAt(minVelocity)
	}
	return out
}

// LoadAtPct is the load for a prescription as a share of a 1RM estimate.
func LoadAtPct(oneRMKg, pct float64) float64 { return oneRMKg * pct / 100 }

// ---------------------------------------------------------------------------
// Drop jumps

// JumpHeightM is the jump height in metres from the flight time in seconds,
// g·t²/8 (projectile motion; the flight-time method).
func JumpHeightM(flightS float64) float64 { return G * flightS * flightS / 8 }

// RSI is the reactive strength index of a drop jump: jump height in metres
// over ground-contact time in seconds (Healy et al. 2017, who name it
// RSI = JH / GCT). ok is false for a contact time that is not positive.
func RSI(flightS, contactS float64) (float64, bool) {
	if !(contactS > 0) || !(flightS > 0) {
		return 0, false
	}
	return JumpHeightM(flightS) / contactS, true
}

// ---------------------------------------------------------------------------
// Change between two tests

// Reliability is a test's published within-athlete typical error, as a
// coefficient of variation in percent, with the source that reports it.
type Reliability struct {
	CVPct  float64 `json:"cv_pct"`
	Source string  `json:"source"`
}

// IFTReliability is the 30-15 IFT's between-session typical error: CV 2.5 %
// of V_IFT in semi-professional soccer players tested a week apart (Thomas,
// Dos'Santos, Jones & Comfort 2016, Int J Sports Physiol Perform
// 11(2):172–175), who judged a change of 1.0 km/h (two stages) real.
var IFTReliability = Reliability{CVPct: 2.5, Source: "Thomas et al. 2016"}

// Change is the difference between a test and the one before it. With a
// published typical error, TE is that error in the test's unit at the
// earlier value, InTE the change in units of it, and Limit90 the half-width
// of the 90 % limits of a change between two single tests, 1.645 × √2 × TE
// (Hopkins 2000; normal theory). Without one, those are zero and Source is
// empty: the change is shown plainly.
type Change struct {
	From    float64 `json:"from"`
	To      float64 `json:"to"`
	Delta   float64 `json:"delta"`
	Pct     float64 `json:"pct"`
	TE      float64 `json:"te,omitempty"`
	InTE    float64 `json:"in_te,omitempty"`
	Limit90 float64 `json:"limit90,omitempty"`
	Source  string  `json:"source,omitempty"`
}

// z90 is the two-sided 90 % quantile of the normal distribution.
const z90 = 1.6448536269514722

// ChangeOf is the change from one value to the next, judged against rel
// when it is given (CVPct > 0).
func ChangeOf(from, to float64, rel *Reliability) Change {
	c := Change{From: from, To: to, Delta: to - from}
	if from != 0 {
		c.Pct = c.Delta / from * 100
	}
	if rel != nil && rel.CVPct > 0 && from > 0 {
		c.TE = from * rel.CVPct / 100
		c.InTE = c.Delta / c.TE
		c.Limit90 = z90 * math.Sqrt2 * c.TE
		c.Source = rel.Source
	}
	return c
}

// Clear reports whether a change lies outside its 90 % limits, so noise
// alone is unlikely to explain it; false when no typical error is known.
func (c Change) Clear() bool { return c.TE > 0 && math.Abs(c.Delta) > c.Limit90 }
