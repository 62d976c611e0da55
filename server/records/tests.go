package records

import (
	"encoding/json"
	"fmt"
	"math"
	"strings"

	"cornerbook/server/fitness"
)

// Kinds of the tests that drive prescriptions: fitness tests (30-15 IFT,
// repeated sprints, a measured maximal heart rate) and strength tests
// (sets with load, reps and an optional bar speed). Drop jumps are jump
// records with test "dj".
const (
	KindFitnessTest = "fitness_test"
	KindStrength    = "strength"
)

// Jump tests: the countermovement jump, whose mean feeds the CMJ baseline,
// and the drop jump.
const (
	JumpCMJ  = "cmj"
	JumpDrop = "dj"
)

// Fitness-test protocols.
const (
	ProtocolIFT    = "ift_30_15"
	ProtocolSprint = "repeated_sprint"
	ProtocolHRMax  = "hr_max"
)

// FitnessProtocols lists the fitness-test protocols.
var FitnessProtocols = []string{ProtocolIFT, ProtocolSprint, ProtocolHRMax}

// Test ranges (common practice, no source, unless named).
const (
	MinSprints, MaxSprints   = 2, 20    // a repeated-sprint test is usually 6–10 sprints
	MinSprintS, MaxSprintS   = 1, 30    // s per sprint
	MinSprintM, MaxSprintM   = 5, 100   // m per sprint
	MinHRMax, MaxHRMax       = 120, 230 // bpm; a measured maximum below 120 is an entry error
	MaxStrengthSets          = 20
	MaxStrengthReps          = 100
	MaxLoadKg                = 500
	MaxRIR                   = 10
	MinMPV, MaxMPV           = 0.05, 3.0 // m/s mean propulsive velocity
	MinVelocityLo            = 0.05      // m/s, the lowest velocity at 1RM an exercise may take
	MinVelocityHi            = 0.6
	MinDropCm, MaxDropCm     = 10, 100 // drop-jump box height
	MinContactMs             = 80      // drop-jump ground contact
	MaxContactMs             = 1000
	MinPctVIFT, MaxPctVIFT   = 50, 150 // % of V_IFT in a prescription
	IFTStartKmh, IFTTopKmh   = fitness.IFTStartKmh, fitness.IFTTopKmh
	MinPctHRMax, MaxPctHRMax = 50, 100 // % of HRmax in a prescription
	MaxRepM                  = 2000    // m per repetition
)

// testLimits are the numbers the app's checks of the tests and
// prescriptions read from the vocabulary, so both sides refuse alike.
var testLimits = map[string]float64{
	"ift_start_kmh": fitness.IFTStartKmh, "ift_alt_start_kmh": fitness.IFTAltStartKmh, "ift_step_kmh": fitness.IFTStepKmh, "ift_top_kmh": fitness.IFTTopKmh,
	"min_sprints": MinSprints, "max_sprints": MaxSprints, "min_sprint_s": MinSprintS, "max_sprint_s": MaxSprintS,
	"min_sprint_m": MinSprintM, "max_sprint_m": MaxSprintM, "min_hr_max": MinHRMax, "max_hr_max": MaxHRMax,
	"max_strength_sets": MaxStrengthSets, "min_drop_cm": MinDropCm, "max_drop_cm": MaxDropCm,
	"min_contact_ms": MinContactMs, "max_contact_ms": MaxContactMs,
	"min_pct_vift": MinPctVIFT, "max_pct_vift": MaxPctVIFT, "min_pct_hrmax": MinPctHRMax, "max_pct_hrmax": MaxPctHRMax,
	"default_min_velocity_ms": fitness.DefaultMinVelocity,
}

// FitnessTest is one fitness test. The hub derives vift_kmh (30-15 IFT,
// from the stage), best_s, sdec_pct and fatigue_pct (repeated sprints).
type FitnessTest struct {
	Protocol string `json:"protocol"`
	// 30-15 IFT: the start speed (8 km/h unless 10) and the last stage
	// completed; VIFTKmh is derived from them. A body that gives only
	// vift_kmh has its stage derived, and a speed the table lacks is refused.
	StartKmh float64 `json:"start_kmh,omitempty"`
	Stage    int     `json:"stage,omitempty"`
	VIFTKmh  float64 `json:"vift_kmh,omitempty"`
	// Repeated sprints: every sprint's time in s, and the sprint's length.
	SprintS    []float64 `json:"sprint_s,omitempty"`
	DistanceM  float64   `json:"distance_m,omitempty"`
	BestS      float64   `json:"best_s,omitempty"`
	SDecPct    float64   `json:"sdec_pct,omitempty"`
	FatiguePct float64   `json:"fatigue_pct,omitempty"`
	// HRMaxBpm is a measured maximal heart rate (protocol hr_max); it
	// replaces the age prediction (Tanaka 2001) in prescriptions.
	HRMaxBpm int `json:"hr_max_bpm,omitempty"`
	// HRPeak is the highest heart rate seen during an IFT or sprint test.
	HRPeak *int   `json:"hr_peak,omitempty"`
	Note   string `json:"note,omitempty"`
}

// StrengthSet is one set of a strength test.
type StrengthSet struct {
	LoadKg float64  `json:"load_kg"`
	Reps   int      `json:"reps"`
	RIR    *int     `json:"rir,omitempty"`    // repetitions in reserve
	MPV    *float64 `json:"mpv_ms,omitempty"` // mean propulsive velocity, m/s
}

// Strength is one strength test of one exercise. The hub derives the 1RM
// estimates: Epley and Brzycki from sets of at most 10 repetitions to
// failure (reps + reps in reserve), and with three or more loads carrying a
// velocity, the load–velocity line and the 1RM at the exercise's minimal
// velocity (0.17 m/s unless the exercise has its own).
type Strength struct {
	Exercise      string        `json:"exercise"`
	Sets          []StrengthSet `json:"sets"`
	MinVelocityMs float64       `json:"min_velocity_ms,omitempty"`
	EpleyKg       float64       `json:"e1rm_epley_kg,omitempty"`
	BrzyckiKg     float64       `json:"e1rm_brzycki_kg,omitempty"`
	LVSlope       float64       `json:"lv_slope,omitempty"` // (m/s) per kg
	LVIntercept   float64       `json:"lv_intercept,omitempty"`
	LVR2          float64       `json:"lv_r2,omitempty"`
	LV1RMKg       float64       `json:"lv_1rm_kg,omitempty"`
	Note          string        `json:"note,omitempty"`
}

// Exercises are the suggested strength-test exercises; validation takes
// any short name, because camps use what they have.
var Exercises = []string{"back squat", "front squat", "trap-bar deadlift", "deadlift", "bench press", "overhead press", "hip thrust", "pull-up", "bench pull"}

func validateFitnessTest(c *check, raw json.RawMessage) (any, error) {
	var b FitnessTest
	present, err := decodeBody(raw, &b, KindFitnessTest)
	if err != nil {
		return nil, err
	}
	if err := oneOf("body.protocol", b.Protocol, FitnessProtocols); err != nil {
		return nil, err
	}
	// The registry's limits first, as the app checks them.
	if present.has("stage") && (b.Stage < 1 || b.Stage > maxStage) {
		return nil, fe("body.stage", "must be between 1 and %d (the stages of the test); got %d", maxStage, b.Stage)
	}
	if b.HRPeak != nil {
		if err := betweenInt("body.hr_peak", *b.HRPeak, MinHR, MaxHR, "bpm"); err != nil {
			return nil, err
		}
	}
	// Fields of another protocol are refused rather than kept silently.
	belongs := map[string]string{
		"start_kmh": ProtocolIFT, "stage": ProtocolIFT, "vift_kmh": ProtocolIFT,
		"sprint_s": ProtocolSprint, "distance_m": ProtocolSprint, "best_s": ProtocolSprint, "sdec_pct": ProtocolSprint, "fatigue_pct": ProtocolSprint,
		"hr_max_bpm": ProtocolHRMax,
	}
	words := map[string]string{ProtocolIFT: "a 30-15 IFT", ProtocolSprint: "a repeated-sprint test", ProtocolHRMax: "a measured maximal heart rate"}
	for _, f := range []string{"start_kmh", "stage", "vift_kmh", "sprint_s", "distance_m", "best_s", "sdec_pct", "fatigue_pct", "hr_max_bpm"} {
		if p := belongs[f]; present.has(f) && p != b.Protocol {
			return nil, fe("body."+f, "belongs to %s, not %s", words[p], words[b.Protocol])
		}
	}
	switch b.Protocol {
	case ProtocolIFT:
		if !present.has("start_kmh") {
			b.StartKmh = fitness.IFTStartKmh
		}
		if b.StartKmh != fitness.IFTStartKmh && b.StartKmh != fitness.IFTAltStartKmh {
			return nil, fe("body.start_kmh", "must be %g or %g km/h (the first stage's speed); got %s", fitness.IFTStartKmh, fitness.IFTAltStartKmh, fmtNum(b.StartKmh))
		}
		switch {
		case present.has("stage"):
			v, err := fitness.IFTSpeed(b.StartKmh, b.Stage)
			if err != nil {
				return nil, fe("body.stage", "%s", StageWords(b.StartKmh, b.Stage))
			}
			b.VIFTKmh = v
		case present.has("vift_kmh"):
			st, err := fitness.IFTStageOf(b.StartKmh, b.VIFTKmh)
			if err != nil {
				return nil, fe("body.vift_kmh", "%s", err)
			}
			b.Stage = st
		default:
			return nil, fe("body.stage", "is required: the last stage completed, 1 to %d (%g to %g km/h)",
				fitness.IFTStageCount(b.StartKmh), b.StartKmh, fitness.IFTTopKmh)
		}
	case ProtocolSprint:
		if n := len(b.SprintS); n < MinSprints || n > MaxSprints {
			return nil, fe("body.sprint_s", "must hold %d to %d sprint times in s; got %d", MinSprints, MaxSprints, n)
		}
		for i, t := range b.SprintS {
			if err := between("body.sprint_s["+itoa(i)+"]", t, MinSprintS, MaxSprintS, "s"); err != nil {
				return nil, err
			}
		}
		if present.has("distance_m") {
			if err := between("body.distance_m", b.DistanceM, MinSprintM, MaxSprintM, "m"); err != nil {
				return nil, err
			}
		}
		s, err := fitness.RepeatedSprints(b.SprintS)
		if err != nil {
			return nil, fe("body.sprint_s", "%s", err)
		}
		b.BestS, b.SDecPct, b.FatiguePct = s.BestS, round4(s.DecPct), round4(s.FatiguePct)
	case ProtocolHRMax:
		if !present.has("hr_max_bpm") {
			return nil, fe("body.hr_max_bpm", "is required: the highest heart rate measured, %d to %d bpm", MinHRMax, MaxHRMax)
		}
		if err := betweenInt("body.hr_max_bpm", b.HRMaxBpm, MinHRMax, MaxHRMax, "bpm"); err != nil {
			return nil, err
		}
	}
	if b.HRPeak != nil && b.Protocol == ProtocolHRMax {
		return nil, fe("body.hr_peak", "belongs to a 30-15 IFT or repeated-sprint test; a maximum measured on its own is a maximal heart rate test")
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}

// maxStage is the last stage of the table from 8 km/h, the most any start
// has.
var maxStage = fitness.IFTStageCount(fitness.IFTStartKmh)

// StageWords is the refusal of a 30-15 IFT stage the table from startKmh
// does not have.
func StageWords(startKmh float64, stage int) string {
	return fmt.Sprintf("must be between 1 and %d (the stages of the test from %g km/h, %g to %g km/h); got %d",
		fitness.IFTStageCount(startKmh), startKmh, startKmh, fitness.IFTTopKmh, stage)
}

func validateStrength(c *check, raw json.RawMessage) (any, error) {
	var b Strength
	present, err := decodeBody(raw, &b, KindStrength)
	if err != nil {
		return nil, err
	}
	if strings.TrimSpace(b.Exercise) == "" {
		return nil, fe("body.exercise", "is required: the exercise tested, e.g. %s", strings.Join(Exercises[:3], ", "))
	}
	if err := text("body.exercise", b.Exercise, MaxShortLen, false); err != nil {
		return nil, err
	}
	if n := len(b.Sets); n < 1 || n > MaxStrengthSets {
		return nil, fe("body.sets", "must hold 1 to %d sets; got %d", MaxStrengthSets, n)
	}
	var pts []fitness.LVPoint
	var ptSet []int
	sets := make([]fitness.Set, len(b.Sets))
	for i, s := range b.Sets {
		p := "body.sets[" + itoa(i) + "]."
		if math.IsNaN(s.LoadKg) || s.LoadKg <= 0 || s.LoadKg > MaxLoadKg {
			return nil, fe(p+"load_kg", "must be more than 0 and at most %d kg; got %s", MaxLoadKg, fmtNum(s.LoadKg))
		}
		if err := betweenInt(p+"reps", s.Reps, 1, MaxStrengthReps, "repetitions"); err != nil {
			return nil, err
		}
		if s.RIR != nil {
			if err := betweenInt(p+"rir", *s.RIR, 0, MaxRIR, "repetitions in reserve"); err != nil {
				return nil, err
			}
		}
		if s.MPV != nil {
			if err := between(p+"mpv_ms", *s.MPV, MinMPV, MaxMPV, "m/s"); err != nil {
				return nil, err
			}
			pts = append(pts, fitness.LVPoint{LoadKg: s.LoadKg, MPV: *s.MPV})
			ptSet = append(ptSet, i)
		}
		sets[i] = fitness.Set{LoadKg: s.LoadKg, Reps: s.Reps, RIR: s.RIR, MPV: s.MPV}
	}
	if i, j, found := fitness.RisingVelocity(pts); found {
		hi, lo := i, j
		if pts[i].LoadKg < pts[j].LoadKg {
			hi, lo = j, i
		}
		return nil, fe("body.sets["+itoa(ptSet[hi])+"].mpv_ms",
			"is %s m/s at %s kg, faster than %s m/s at the lighter %s kg (set %d): bar speed falls as the load rises — check both entries",
			fmtNum(pts[hi].MPV), fmtNum(pts[hi].LoadKg), fmtNum(pts[lo].MPV), fmtNum(pts[lo].LoadKg), ptSet[lo]+1)
	}
	if !present.has("min_velocity_ms") {
		b.MinVelocityMs = fitness.DefaultMinVelocity
	}
	if err := between("body.min_velocity_ms", b.MinVelocityMs, MinVelocityLo, MinVelocityHi, "m/s (the bar speed at a 1RM)"); err != nil {
		return nil, err
	}
	est := fitness.Estimate(sets, b.MinVelocityMs)
	b.EpleyKg, b.BrzyckiKg = round4(est.EpleyKg), round4(est.BrzyckiKg)
	b.LVSlope, b.LVIntercept, b.LVR2, b.LV1RMKg = 0, 0, 0, 0
	if est.Line != nil {
		b.LVSlope, b.LVIntercept, b.LVR2 = round6(est.Line.Slope), round6(est.Line.Intercept), round4(est.Line.R2)
		b.LV1RMKg = round4(est.LV1RMKg)
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}

// dropJump checks a drop jump's own fields and derives its RSI per attempt
// (Healy et al. 2017: jump height / ground contact time) and the best.
func dropJump(b *Jump, present fieldSet) error {
	if b.Test != JumpDrop {
		for _, f := range []string{"drop_cm", "contact_ms", "rsi", "rsi_attempts"} {
			if present.has(f) {
				return fe("body."+f, "belongs to a drop jump (test dj), not a %s", b.Test)
			}
		}
		return nil
	}
	if !present.has("drop_cm") {
		return fe("body.drop_cm", "is required: the height dropped from, %d to %d cm", MinDropCm, MaxDropCm)
	}
	if err := between("body.drop_cm", b.DropCm, MinDropCm, MaxDropCm, "cm"); err != nil {
		return err
	}
	if len(b.ContactMs) != len(b.HeightsCm) {
		return fe("body.contact_ms", "needs one ground contact time per attempt: %d attempts, %d contact times", len(b.HeightsCm), len(b.ContactMs))
	}
	b.RSIs = make([]float64, len(b.ContactMs))
	b.RSI = 0
	for i, ms := range b.ContactMs {
		if err := between("body.contact_ms["+itoa(i)+"]", ms, MinContactMs, MaxContactMs, "ms"); err != nil {
			return err
		}
		b.RSIs[i] = round4(b.HeightsCm[i] / 100 / (ms / 1000))
		b.RSI = math.Max(b.RSI, b.RSIs[i])
	}
	return nil
}

func round6(v float64) float64 { return math.Round(v*1e6) / 1e6 }

// HRMaxFrom values: where a prescription's HRmax came from.
const (
	HRMaxMeasured = "measured" // a fitness_test with protocol hr_max
	HRMaxAge      = "age"      // predicted, 208 − 0.7 × age (Tanaka 2001)
)

// HRMaxSources lists where a prescription's HRmax may come from.
var HRMaxSources = []string{HRMaxMeasured, HRMaxAge}

// intervalTargets checks an interval session's prescription and derives
// its targets: the distance per repetition from a share of V_IFT, and the
// heart-rate band from a share of HRmax.
func intervalTargets(b *Intervals, present fieldSet) error {
	b.TargetRepM, b.TargetHRLo, b.TargetHRHi = 0, 0, 0
	// The registry's limits first, as the app checks them.
	for _, f := range []struct {
		name   string
		v      *float64
		lo, hi float64
		unit   string
	}{
		{"pct_vift", b.PctVIFT, MinPctVIFT, MaxPctVIFT, "% of V_IFT"},
		{"vift_kmh", optional(present, "vift_kmh", b.VIFTKmh), fitness.IFTStartKmh, fitness.IFTTopKmh, "km/h"},
		{"hr_lo_pct", b.HRLoPct, MinPctHRMax, MaxPctHRMax, "% of HRmax"},
		{"hr_hi_pct", b.HRHiPct, MinPctHRMax, MaxPctHRMax, "% of HRmax"},
		{"hr_max_bpm", optional(present, "hr_max_bpm", b.HRMaxBpm), MinHRMax, MaxHRMax, "bpm"},
		{"done_rep_m", b.DoneRepM, 0, MaxRepM, "m per repetition"},
	} {
		if f.v != nil {
			if err := between("body."+f.name, *f.v, f.lo, f.hi, f.unit); err != nil {
				return err
			}
		}
	}
	if b.HRMaxFrom != "" {
		if err := oneOf("body.hr_max_from", b.HRMaxFrom, HRMaxSources); err != nil {
			return err
		}
	}
	// Then what goes together.
	switch {
	case b.PctVIFT != nil && !present.has("vift_kmh"):
		return fe("body.vift_kmh", "is required with a share of V_IFT: the fighter's V_IFT from a 30-15 IFT, in km/h")
	case b.PctVIFT == nil && present.has("vift_kmh"):
		return fe("body.pct_vift", "is required with a V_IFT: the share of it to run at, %d to %d %%", MinPctVIFT, MaxPctVIFT)
	case b.PctVIFT != nil:
		b.TargetRepM = round4(fitness.RepDistanceM(b.VIFTKmh, *b.PctVIFT, b.WorkS))
	}
	band := b.HRLoPct != nil || b.HRHiPct != nil || present.has("hr_max_bpm")
	switch {
	case !band && b.HRMaxFrom != "":
		return fe("body.hr_max_from", "belongs to a heart-rate band: give the band's lower and upper ends and the maximal heart rate too")
	case !band:
	case b.HRLoPct == nil:
		return fe("body.hr_lo_pct", "is required for a heart-rate band: its lower end, %d to %d %% of HRmax", MinPctHRMax, MaxPctHRMax)
	case b.HRHiPct == nil:
		return fe("body.hr_hi_pct", "is required for a heart-rate band: its upper end, %d to %d %% of HRmax", MinPctHRMax, MaxPctHRMax)
	case *b.HRHiPct < *b.HRLoPct:
		return fe("body.hr_hi_pct", "is %s %%, below the band's lower end of %s %%", fmtNum(*b.HRHiPct), fmtNum(*b.HRLoPct))
	case !present.has("hr_max_bpm"):
		return fe("body.hr_max_bpm", "is required with a heart-rate band: the HRmax the band is drawn from, %d to %d bpm", MinHRMax, MaxHRMax)
	default:
		if b.HRMaxFrom == "" {
			b.HRMaxFrom = HRMaxMeasured
		}
		hb := fitness.Band(b.HRMaxBpm, *b.HRLoPct, *b.HRHiPct)
		b.TargetHRLo, b.TargetHRHi = round4(hb.LoBpm), round4(hb.HiBpm)
	}
	return nil
}

func optional(present fieldSet, name string, v float64) *float64 {
	if !present.has(name) {
		return nil
	}
	return &v
}
