package flags

// The record bodies as the rules read them: only the fields a rule uses,
// with the JSON names of the record format (PRODUCT.md, "Record format").
// Decoding these small shapes instead of the full kinds keeps the engine
// independent of validation code and skips fields no rule reads (notes).
// They are exported so the chart series read records exactly as the
// rules do.

import "cornerbook/server/fightweek"

// Kind names of the record format.
const (
	kindAthlete   = "athlete"
	kindSettings  = "settings"
	kindBout      = "bout"
	kindCheckin   = "checkin"
	kindJump      = "jump"
	kindRound     = "round"
	kindSession   = "session"
	kindIncident  = "incident"
	kindClearance = "clearance"
	kindDecision  = "decision"
	kindWeighIn   = "weigh_in"
	kindRTSStep   = "rts_step"
	kindNote      = "note"
)

// CheckinBody is the part of a check-in the rules read.
type CheckinBody struct {
	MassKg   *float64 `json:"mass_kg"`
	Sleep    *int     `json:"sleep"`
	Fatigue  *int     `json:"fatigue"`
	Soreness *int     `json:"soreness"`
	Stress   *int     `json:"stress"`
	Mood     *int     `json:"mood"`
	USG      *float64 `json:"usg"`
}

// JumpBody is the part of a jump test the rules read.
type JumpBody struct {
	Test      string    `json:"test"`
	HeightsCm []float64 `json:"heights_cm"`
	FlightMs  []float64 `json:"flight_ms"`
	Method    string    `json:"method"`
}

// RoundBody is the part of a round the rules read.
type RoundBody struct {
	Activity  string `json:"activity"`
	Seconds   int    `json:"seconds"`
	Intensity int    `json:"intensity"`
}

// SessionBody is the part of a session body the rules read.
type SessionBody struct {
	Minutes float64 `json:"minutes"`
	RPE     float64 `json:"rpe"`
	LoadAU  float64 `json:"load_au"`
	Focus   string  `json:"focus"`
}

type incidentBody struct {
	Type         string `json:"type"`
	LOC          *bool  `json:"loss_of_consciousness"`
	ClinicianDay string `json:"clinician_day"`
}

type rtsStepBody struct {
	Incident string `json:"incident"`
	Step     int    `json:"step"`
}

type clearanceBody struct {
	Incident string `json:"incident"`
	By       string `json:"by"`
}

type decisionBody struct {
	Rule string `json:"rule"`
	Note string `json:"note"`
	By   string `json:"by"`
}

type knotBody struct {
	Day    string  `json:"day"`
	MassKg float64 `json:"mass_kg"`
}

type weekBody struct {
	Week          int    `json:"week"`
	Level         string `json:"level"`
	SparCapRounds *int   `json:"spar_cap_rounds"`
	SparRounds    *int   `json:"spar_rounds"` // stands over SparCapRounds
	HardRounds    *int   `json:"hard_rounds"`
	pos           int    // its index in the bout's weeks list (for JSON paths)
}

type boutBody struct {
	CampStart       string           `json:"camp_start"`
	WeighIn         string           `json:"weigh_in"`
	WeighInZone     string           `json:"weigh_in_zone"`
	WeighInType     string           `json:"weigh_in_type"`
	BoutDay         string           `json:"bout_day"`
	LimitKg         float64          `json:"limit_kg"`
	StartMassKg     float64          `json:"start_mass_kg"`
	ReferenceLoadAU float64          `json:"reference_load_au"`
	Path            []knotBody       `json:"path"`
	Weeks           []weekBody       `json:"weeks"`
	StandDownSets   []string         `json:"stand_down_sets"`
	BoutAt          string           `json:"bout_at"`
	Rules           *fightweek.Rules `json:"rules"`
}
