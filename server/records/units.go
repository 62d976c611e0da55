package records

// Unit conversions and the formulas behind derived fields. Every function
// here is exact arithmetic on a published constant or formula; the tests
// check them against the worked examples of REFERENCES.md.

// KgPerLb is the exact mass of one avoirdupois pound in kilograms
// (international yard and pound agreement, 1959; NIST SP 811, B.8).
const KgPerLb = 0.45359237

// G is the gravitational acceleration used for jump heights, in m/s².
// Most sport papers use 9.81; standard gravity (9.80665) would change a
// height by 0.035 %, far below the noise of a jump test.
const G = 9.81

// LbToKg converts pounds to kilograms with the exact factor.
func LbToKg(lb float64) float64 { return lb * KgPerLb }

// KgToLb converts kilograms to pounds; the inverse of LbToKg, unrounded.
func KgToLb(kg float64) float64 { return kg / KgPerLb }

// JumpHeightCm is the jump height in cm from the flight time in ms by the
// flight-time method, h = g·t²/8 (projectile motion: the rise lasts t/2).
// It assumes the athlete lands in the take-off posture; landing with bent
// knees lengthens the flight and inflates the height.
func JumpHeightCm(flightMs float64) float64 {
	t := flightMs / 1000
	return G * t * t / 8 * 100
}

// SessionLoad is the session-RPE training load in arbitrary units: the
// CR-10 rating times the session's duration in minutes (Foster et al.
// 2001).
func SessionLoad(rpe, minutes float64) float64 { return rpe * minutes }

// IntervalsSeconds is the length of an interval session in seconds: every
// repetition with its recovery, sets × reps × (work + rest), plus the
// rests between sets, (sets − 1) × set rest.
func IntervalsSeconds(workS, restS float64, reps, sets int, setRestS float64) float64 {
	if sets < 1 || reps < 1 {
		return 0
	}
	return float64(sets*reps)*(workS+restS) + float64(sets-1)*setRestS
}
