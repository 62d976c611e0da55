// Package records defines Cornerbook's record kinds: the body of each kind
// as a Go type, its validation in words a coach understands, the unit
// conversions and the fields the hub derives (jump heights from flight
// time, session load). It is pure: no I/O, no clock of its own (time
// zone names are resolved by time.LoadLocation, from the system's zone
// database or the tzdata embedded here).
//
//   - Prepare, PrepareAt: validate a record and fill its derived fields;
//     every error is a *devsync.FieldError with a JSON path and a reason
//     with units. PrepareAt adds the checks that need the hub's date.
//   - LbToKg, KgToLb, JumpHeightCm, SessionLoad, IntervalsSeconds: the
//     formulas, with their sources.
//   - Classes: weight classes (professional in lb, amateur in kg), each
//     with an exact LimitKg.
//   - Rules, Defaults, Resolve, Settings.Layer: flag-rule thresholds and
//     their bounds; settings are validated against them, and a test pins
//     them to the parameters the flag engine reads.
//   - CR10 (session-RPE anchors), Protocols (interval templates).
package records

import "encoding/json"

// Kind names, fixed by the record format.
const (
	KindAthlete   = "athlete"
	KindSettings  = "settings"
	KindBout      = "bout"
	KindCheckin   = "checkin"
	KindJump      = "jump"
	KindRound     = "round"
	KindIntervals = "intervals"
	KindSession   = "session"
	KindIncident  = "incident"
	KindClearance = "clearance"
	KindDecision  = "decision"
	KindNote      = "note"
)

// Kinds lists every kind in the registry's order (export, CSV files, docs).
var Kinds = kindNames()

// Athlete is the body of an athlete record; the record id is the athlete id.
type Athlete struct {
	Name      string `json:"name"`
	Units     string `json:"units"` // "kg" or "lb": display only, storage is kg
	BirthYear int    `json:"birth_year,omitempty"`
	Sex       string `json:"sex,omitempty"` // "f", "m" or empty
	Active    *bool  `json:"active,omitempty"`
}

// Settings overrides flag thresholds. With an athlete, for that athlete;
// without one, camp-wide (time zone, check-in hour, gym name and the
// camp's default thresholds).
type Settings struct {
	Thresholds  map[string]map[string]float64 `json:"thresholds,omitempty"` // rule id → parameter → value
	TimeZone    string                        `json:"time_zone,omitempty"`  // IANA, camp-wide
	CheckinHour *float64                      `json:"checkin_hour,omitempty"`
	GymName     string                        `json:"gym_name,omitempty"`
}

// Knot is one point of a planned mass path.
type Knot struct {
	Day    string  `json:"day"`
	MassKg float64 `json:"mass_kg"`
}

// Week is one planned camp week (week 1 starts on camp_start).
type Week struct {
	Week  int    `json:"week"`
	Level string `json:"level"` // rest, low, medium, medium_heavy, heavy, taper
	// SparCapRounds is the older flat sparring cap; SparRounds, when
	// given, stands over it.
	SparCapRounds *int `json:"spar_cap_rounds,omitempty"`
	// Strength and Conditioning are the week's emphases: ids from
	// Emphases (the list session focus shares) and the coach's words.
	Strength     *Emphasis `json:"strength,omitempty"`
	Conditioning *Emphasis `json:"conditioning,omitempty"`
	SparRounds   *int      `json:"spar_rounds,omitempty"` // planned sparring rounds
	HardRounds   *int      `json:"hard_rounds,omitempty"` // planned cap on hard sparring rounds
	Travel       *Travel   `json:"travel,omitempty"`
	Note         string    `json:"note,omitempty"`
}

// Emphasis is what a week's strength or conditioning work aims at. IDs
// come from Emphases (the rules read only these); Label is the coach's
// own words, shown instead of the ids' words when given, and may stand
// alone for an emphasis of the coach's own.
type Emphasis struct {
	IDs   []string `json:"ids,omitempty"`
	Label string   `json:"label,omitempty"`
}

// Travel is a journey planned in a camp week: departure and arrival as
// RFC 3339 instants and the IANA zones of both ends, from which the hub
// reads the clock shift (zone data, never fixed offsets).
type Travel struct {
	DepartAt string `json:"depart_at"`
	ArriveAt string `json:"arrive_at"`
	FromZone string `json:"from_zone"`
	ToZone   string `json:"to_zone"`
}

// Bout is one fighter's bout and camp plan.
type Bout struct {
	Name        string `json:"name,omitempty"` // e.g. "vs. R. Example, city hall"
	CampStart   string `json:"camp_start"`
	WeighIn     string `json:"weigh_in"`                // RFC 3339 with offset
	WeighInZone string `json:"weigh_in_zone,omitempty"` // IANA zone of the weigh-in venue
	WeighInType string `json:"weigh_in_type"`           // day_before or same_day
	BoutDay     string `json:"bout_day"`
	WeightClass string `json:"weight_class,omitempty"` // id from Classes, or "custom"
	// LimitKg is the weigh-in limit. A class from the table fixes it (the
	// hub fills it in exactly); 0 means no upper limit (heavyweight,
	// "+92 kg"), and the mass rules then do not apply.
	LimitKg         float64 `json:"limit_kg"`
	StartMassKg     float64 `json:"start_mass_kg"`
	ReferenceLoadAU float64 `json:"reference_load_au,omitempty"` // the athlete's habitual weekly load
	Path            []Knot  `json:"path,omitempty"`
	Weeks           []Week  `json:"weeks,omitempty"`
	// BoutAt is the bout's start, RFC 3339 in the venue's offset.
	BoutAt string `json:"bout_at,omitempty"`
	// Rules are the weigh-in rules the coach picked (a preset or custom).
	Rules *WeighInRules `json:"rules,omitempty"`
	// StandDownSets are the stand-down rule sets applied to this fighter's
	// incidents besides the ringside physicians' minimums.
	StandDownSets []string `json:"stand_down_sets,omitempty"`
}

// Checkin is the morning check-in. Wellness items are 1–5, 5 = best.
type Checkin struct {
	MassKg   *float64 `json:"mass_kg,omitempty"`
	SleepH   *float64 `json:"sleep_h,omitempty"`
	Sleep    *int     `json:"sleep,omitempty"`
	Fatigue  *int     `json:"fatigue,omitempty"`
	Soreness *int     `json:"soreness,omitempty"`
	Stress   *int     `json:"stress,omitempty"`
	Mood     *int     `json:"mood,omitempty"`
	RHR      *int     `json:"rhr_bpm,omitempty"`
	USG      *float64 `json:"usg,omitempty"`
	Note     string   `json:"note,omitempty"`
}

// Jump is one jump test: either heights or flight times per attempt.
// BestCm and MeanCm are derived by the hub.
type Jump struct {
	Test string `json:"test"` // "cmj" or "dj" (drop jump)
	// HeightsCm are the attempts in cm. When FlightMs is given the hub
	// derives them from it (h = g·t²/8) and replaces any sent along.
	HeightsCm []float64 `json:"heights_cm,omitempty"`
	FlightMs  []float64 `json:"flight_ms,omitempty"`
	Method    string    `json:"method,omitempty"` // mat, force_plate, other
	BestCm    float64   `json:"best_cm,omitempty"`
	MeanCm    float64   `json:"mean_cm,omitempty"`
	Session   string    `json:"session,omitempty"` // optional id grouping a jump grid
	// A drop jump (test "dj") adds the drop height and each attempt's
	// ground contact time; the hub derives each attempt's reactive strength
	// index and the best (Healy et al. 2017). Drop jumps never enter the
	// CMJ baseline.
	DropCm    float64   `json:"drop_cm,omitempty"`
	ContactMs []float64 `json:"contact_ms,omitempty"`
	RSIs      []float64 `json:"rsi_attempts,omitempty"`
	RSI       float64   `json:"rsi,omitempty"`
}

// Round is one finished round.
type Round struct {
	Activity  string `json:"activity"` // spar, pads, bag, drill, other
	Seconds   int    `json:"seconds"`
	Intensity int    `json:"intensity"` // 1 easy, 2 moderate, 3 hard
	Partner   string `json:"partner,omitempty"`
	Note      string `json:"note,omitempty"`
}

// Intervals is a conditioning interval session.
type Intervals struct {
	Protocol string   `json:"protocol,omitempty"` // template id, if one was used
	Modality string   `json:"modality"`
	WorkS    float64  `json:"work_s"`
	RestS    float64  `json:"rest_s"`
	Reps     int      `json:"reps"`
	Sets     int      `json:"sets"`
	SetRestS float64  `json:"set_rest_s,omitempty"`
	DoneReps *int     `json:"done_reps,omitempty"`
	HRPeak   *int     `json:"hr_peak,omitempty"`
	HRMean   *int     `json:"hr_mean,omitempty"`
	RPE      *float64 `json:"rpe,omitempty"`
	// Minutes is the session's length. When absent the hub derives it from
	// the protocol (sets × reps × (work + rest) + rests between sets) and
	// sets MinutesDerived, so an edited protocol is recomputed; a client
	// that lets the coach type minutes sends them with MinutesDerived false.
	Minutes        float64 `json:"minutes,omitempty"`
	MinutesDerived bool    `json:"minutes_derived,omitempty"`
	// LoadAU is derived: rpe × minutes (Foster et al. 2001), when rpe is given.
	LoadAU float64 `json:"load_au,omitempty"`
	Note   string  `json:"note,omitempty"`
	// A prescription from a test: a share of V_IFT (with the V_IFT it was
	// drawn from) gives the distance per repetition, TargetRepM = V_IFT /
	// 3.6 × pct / 100 × work_s (Buchheit 2008); a band of % HRmax (with the
	// HRmax used and where it came from) gives the target heart rates. The
	// hub derives the targets. What was done is DoneReps, DoneRepM (mean
	// distance covered per repetition), HRPeak and HRMean.
	PctVIFT    *float64 `json:"pct_vift,omitempty"`
	VIFTKmh    float64  `json:"vift_kmh,omitempty"`
	TargetRepM float64  `json:"target_rep_m,omitempty"`
	HRLoPct    *float64 `json:"hr_lo_pct,omitempty"`
	HRHiPct    *float64 `json:"hr_hi_pct,omitempty"`
	HRMaxBpm   float64  `json:"hr_max_bpm,omitempty"`
	HRMaxFrom  string   `json:"hr_max_from,omitempty"` // "measured" or "age" (Tanaka 2001)
	TargetHRLo float64  `json:"target_hr_lo,omitempty"`
	TargetHRHi float64  `json:"target_hr_hi,omitempty"`
	DoneRepM   *float64 `json:"done_rep_m,omitempty"`
}

// Session is a training session with its session RPE; Load is derived
// (rpe × minutes, AU; Foster et al. 2001).
type Session struct {
	Type    string  `json:"type"` // boxing, spar, conditioning, strength, other
	Focus   string  `json:"focus,omitempty"`
	Minutes float64 `json:"minutes"`
	RPE     float64 `json:"rpe"`
	LoadAU  float64 `json:"load_au,omitempty"`
	Note    string  `json:"note,omitempty"`
}

// Incident is a head knock, knockdown, stoppage, knockout or injury.
type Incident struct {
	Type string `json:"type"`
	Note string `json:"note,omitempty"`
	// LOC: consciousness was lost; LOCSeconds for how long.
	LOC        *bool    `json:"loss_of_consciousness,omitempty"`
	LOCSeconds *float64 `json:"loc_seconds,omitempty"`
	// SeenBy is the clinician who saw the fighter; ClinicianDay the first
	// day that clinician allows sparring again (the stand-down runs at
	// least that long, and still ends only with a written clearance).
	SeenBy       string `json:"seen_by,omitempty"`
	ClinicianDay string `json:"clinician_day,omitempty"`
}

// Clearance ends the stand-down of one incident.
type Clearance struct {
	Incident string `json:"incident"` // incident record id
	By       string `json:"by"`       // who cleared, e.g. "Dr. A. Example"
	Note     string `json:"note,omitempty"`
}

// Decision is a coach's acknowledgement of a flag (Rule names its rule)
// or of every flag of the athlete's day (Rule empty).
type Decision struct {
	Rule string `json:"rule,omitempty"`
	Note string `json:"note"`
	By   string `json:"by,omitempty"`
}

// Note is a free note. Audience says who reads it: "athlete" shares it
// with the athlete's own device; "staff" (or none) keeps it to the coach
// and staff. An athlete's device always reads the notes it wrote.
type Note struct {
	Text     string `json:"text"`
	By       string `json:"by,omitempty"`
	Audience string `json:"audience,omitempty"`
}

// Note audiences.
const (
	AudienceAthlete = "athlete"
	AudienceStaff   = "staff"
)

// Audiences lists the note audiences.
var Audiences = []string{AudienceAthlete, AudienceStaff}

// NoteShared reports whether a note's body shares it with the athlete.
func NoteShared(body []byte) bool {
	var b struct {
		Audience string `json:"audience"`
	}
	return json.Unmarshal(body, &b) == nil && b.Audience == AudienceAthlete
}
