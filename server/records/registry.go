package records

import (
	"fmt"
	"math"
	"reflect"
	"strconv"
	"strings"
)

// The registry of record kinds: the one place a kind is described. Every
// other table is derived from it — the kind list and validators here,
// who may write it (server/auth), the CSV columns (server/dataio) and the
// app's vocabulary (pwa: /js/vocab.js, generated at embed time from
// Vocab). Adding a kind is one entry below plus its screen.

// Roles that may write a kind besides the coach, who writes every kind.
const (
	RoleStaff   = "staff"
	RoleAthlete = "athlete"
)

// Scope says whether a kind belongs to one athlete, to the whole camp, or
// may be either.
type Scope string

const (
	PerAthlete    Scope = "athlete" // names a live athlete
	CampOrAthlete Scope = "either"  // no athlete: camp-wide; with one: that athlete's
	Self          Scope = "self"    // the athlete record itself (athlete = its id)
)

// Kind describes one record kind.
type Kind struct {
	Name   string // the kind's id in the record format
	Label  string // words for one entry: "check-in"
	Plural string // words for several: "check-ins"
	Body   any    // the body's Go type, as a zero value (Checkin{})
	// Writers are the roles besides the coach that may write it; an
	// athlete's device only for its own athlete.
	Writers []string
	Scope   Scope
	Dated   bool     // carries the calendar day it belongs to
	Screen  string   // the app's route that writes and corrects it ("/checkin")
	Rules   []string // flag rules that read it
	// Fields are the body's fields a screen shows, with their words, units
	// and the limits validation enforces. A generated test holds Prepare
	// to every limit here, and the app's checks (pwa/js/checks.js, reading
	// the vocabulary) to the same refusals.
	Fields []Field
	// Example is a valid body: the start of the generated tests.
	Example string
	// Cases are refusals beyond a single field's limits (one field against
	// another, or a date against the camp): each a change to Example and
	// the field the refusal names. The app checks them too.
	Cases    []Case
	validate validator
}

// Field describes one body field. Path is its JSON path in the record
// ("body.mass_kg"); "[]" marks every element of an array
// ("body.heights_cm[]").
type Field struct {
	Path  string   `json:"path"`
	Label string   `json:"label"`          // words on screen: "Body mass"
	Unit  string   `json:"unit,omitempty"` // shown beside the number
	Min   *float64 `json:"min,omitempty"`
	Max   *float64 `json:"max,omitempty"`
	// MinAbove makes Min exclusive (more than Min).
	MinAbove bool `json:"min_above,omitempty"`
	// MaxYearsAgo bounds a year to the current year minus this many.
	MaxYearsAgo int     `json:"max_years_ago,omitempty"`
	Whole       bool    `json:"whole,omitempty"`
	Step        float64 `json:"step,omitempty"` // e.g. 0.5: whole or half points
	// Decimals shows the limits with this many decimals (0: as they are).
	Decimals int      `json:"decimals,omitempty"`
	Enum     []string `json:"enum,omitempty"`
	MaxLen   int      `json:"max_len,omitempty"` // characters
	// Words is the refusal of a value out of range, with {min}, {max},
	// {unit} (" kg", or nothing) and {got}; empty: the usual wording.
	Words     string `json:"words,omitempty"`
	StepWords string `json:"step_words,omitempty"`
	// Required is the refusal of the field left out or empty (a text of
	// spaces only, for a text); empty: the field may be left out. An
	// array element's ("body.weeks[].level") is refused when empty.
	Required string `json:"required,omitempty"`
	// MinItems and MaxItems bound how many elements an array field
	// ("body.heights_cm[]") holds when it holds any, refused in ItemsWords
	// ({min}, {max}, {got}) naming the array.
	MinItems   int    `json:"min_items,omitempty"`
	MaxItems   int    `json:"max_items,omitempty"`
	ItemsWords string `json:"items_words,omitempty"`
}

// need makes the field required, refused in the hub's words "is required: …".
func (f Field) need(words string) Field {
	f.Required = "is required: " + words
	return f
}

// needEnum makes a list field required: "is required: choose one".
func needEnum(path, label string, values []string) Field {
	f := enum(path, label, values)
	f.Required = ChooseOneWords
	return f
}

// The refusals of a choice left empty and of a value that is not one of
// the choices. They name no choice: the form shows the choices in its
// own words, and the ids belong to the JSON (the field's path says which
// list). The app reads them from the vocabulary.
const (
	ChooseOneWords  = "is required: choose one"
	NotAChoiceWords = "is not one of the choices"
)

// needName is a required name: "is required: who …, 1 to 80 characters".
func needName(path, label, what string) Field {
	return textField(path, label, MaxNameLen).need(fmt.Sprintf("%s, 1 to %d characters", what, MaxNameLen))
}

// idField is a required id of another record.
func idField(path, label, what string) Field {
	return Field{Path: path, Label: label}.need(what)
}

// Case is a refusal the registry's tests and the app's checks share.
type Case struct {
	Name  string `json:"name"`
	Patch string `json:"patch"` // JSON object merged over the Example body (top-level keys)
	Field string `json:"field"` // the field the refusal names
}

// RangeWords is the usual refusal of a value out of range.
const RangeWords = "must be between {min} and {max}{unit}; got {got}"

func f64(v float64) *float64 { return &v }

func rng(path, label, unit string, lo, hi float64) Field {
	return Field{Path: path, Label: label, Unit: unit, Min: f64(lo), Max: f64(hi)}
}

func wholeRng(path, label, unit string, lo, hi float64) Field {
	f := rng(path, label, unit, lo, hi)
	f.Whole = true
	return f
}

func enum(path, label string, values []string) Field {
	return Field{Path: path, Label: label, Enum: values}
}

func textField(path, label string, max int) Field {
	return Field{Path: path, Label: label, MaxLen: max}
}

func rpeField(path string) Field {
	f := rng(path, "Session RPE", "(CR-10 rating)", 0, 10)
	f.Step = 0.5
	f.StepWords = "must be a CR-10 rating from 0 to 10 in whole or half points; got {got}"
	return f
}

// Registry lists every record kind, in a stable order (export, CSV files,
// docs).
var Registry = []Kind{
	{
		Name: KindAthlete, Screen: "/camp", Label: "athlete", Plural: "athletes", Body: Athlete{}, Scope: Self,
		Fields: []Field{
			needName("body.name", "Name", "the athlete's name"),
			enum("body.units", "Units", Units),
			{Path: "body.birth_year", Label: "Birth year", Min: f64(MinBirthYear), MaxYearsAgo: MinAgeYears, Whole: true,
				Words: "must be between {min} and {max} (athletes aged 10 or over); got {got}"},
		},
		Example:  `{"name":"Example Athlete","units":"kg"}`,
		validate: validateAthlete,
	},
	{
		Name: KindSettings, Screen: "/thresholds", Label: "settings", Plural: "settings", Body: Settings{}, Scope: CampOrAthlete,
		Rules: RuleIDs,
		// Every flag rule's thresholds (the Rules table), then the camp's own.
		Fields: append(thresholdFields(),
			textField("body.gym_name", "Gym name", MaxNameLen),
			rng("body.checkin_hour", "Check-in hour", "h (local time, 10.5 = 10:30)", 0, MaxCheckinHour),
		),
		Example: `{"checkin_hour":10}`,
		Cases: []Case{
			{"a threshold of no flag rule", `{"thresholds":{"jump_height":{"window_days":28}}}`, "body.thresholds.jump_height"},
			{"a threshold the rule does not have", `{"thresholds":{"jump_drop":{"window":28}}}`, "body.thresholds.jump_drop.window"},
		},
		validate: validateSettings,
	},
	{
		Name: KindBout, Screen: "/plan", Label: "bout and camp plan", Plural: "bouts", Body: Bout{}, Scope: PerAthlete,
		Rules: []string{RuleMassAbovePath, RuleMassLossFast, RuleCutAtRisk, RuleSparDensity, RuleLoadSpike, RuleOffPlan, RuleResidualGap},
		Fields: []Field{
			textField("body.name", "Bout", MaxBoutNameLen),
			Field{Path: "body.camp_start", Label: "Camp start"}.need("the first day of the camp, YYYY-MM-DD"),
			Field{Path: "body.bout_day", Label: "Bout day"}.need("the day of the bout, YYYY-MM-DD"),
			Field{Path: "body.weigh_in", Label: "Weigh-in"}.need("the weigh-in date and time, RFC 3339 with offset (e.g. 2026-03-13T10:00:00+01:00)"),
			needEnum("body.weigh_in_type", "Weigh-in", WeighInTypes),
			rng("body.start_mass_kg", "Start mass", "kg", MinMassKg, MaxMassKg).need(fmt.Sprintf("the fighter's morning mass at camp start, %d to %d kg", MinMassKg, MaxMassKg)),
			rng("body.reference_load_au", "Usual weekly load", "AU per week", 0, MaxReferenceLoadAU),
			rng("body.path[].mass_kg", "Planned mass", "kg", MinMassKg, MaxMassKg),
			needEnum("body.weeks[].level", "Week's load", Levels),
			wholeRng("body.weeks[].spar_cap_rounds", "Sparring cap", "sparring rounds", 0, MaxSparCap),
			needEnum("body.weeks[].strength.ids[]", "Strength emphasis", EmphasisIDs(GroupStrength)),
			textField("body.weeks[].strength.label", "Strength, in your words", MaxEmphasisLabel),
			needEnum("body.weeks[].conditioning.ids[]", "Conditioning emphasis", EmphasisIDs(GroupConditioning)),
			textField("body.weeks[].conditioning.label", "Conditioning, in your words", MaxEmphasisLabel),
			wholeRng("body.weeks[].spar_rounds", "Planned sparring", "sparring rounds", 0, MaxSparCap),
			wholeRng("body.weeks[].hard_rounds", "Planned hard rounds", "hard sparring rounds", 0, MaxSparCap),
			textField("body.weeks[].note", "Week's note", MaxWeekNoteLen),
		},
		Example: `{"camp_start":"2026-01-05","weigh_in":"2026-02-27T10:00:00Z","weigh_in_type":"day_before","bout_day":"2026-02-28",` +
			`"weight_class":"custom","limit_kg":66,"start_mass_kg":70,"path":[{"day":"2026-01-05","mass_kg":70}],` +
			`"weeks":[{"week":1,"level":"medium","spar_cap_rounds":10}]}`,
		Cases: []Case{
			{"bout before camp start", `{"bout_day":"2026-01-01"}`, "body.bout_day"},
			{"camp longer than a year", `{"camp_start":"2025-01-05","path":[],"weeks":[]}`, "body.bout_day"},
			{"weigh-in after the bout", `{"weigh_in":"2026-03-01T10:00:00Z"}`, "body.weigh_in"},
			{"same-day weigh-in on another day", `{"weigh_in_type":"same_day"}`, "body.weigh_in_type"},
			{"day-before weigh-in on the bout day", `{"weigh_in":"2026-02-28T08:00:00Z"}`, "body.weigh_in_type"},
			{"path day outside the camp", `{"path":[{"day":"2026-03-05","mass_kg":70}]}`, "body.path[0].day"},
			{"more hard rounds than rounds", `{"weeks":[{"week":1,"level":"medium"},{"week":2,"level":"heavy","spar_rounds":10,"hard_rounds":12}]}`, "body.weeks[1].hard_rounds"},
			{"an emphasis listed twice", `{"weeks":[{"week":1,"level":"medium"},{"week":2,"level":"heavy","conditioning":{"ids":["aerobic","aerobic"]}}]}`, "body.weeks[1].conditioning.ids[1]"},
			{"none with another emphasis", `{"weeks":[{"week":1,"level":"medium"},{"week":2,"level":"heavy","strength":{"ids":["none","speed"]}}]}`, "body.weeks[1].strength.ids"},
			{"travel without its origin", `{"weeks":[{"week":1,"level":"medium"},{"week":2,"level":"heavy","travel":{"depart_at":"2026-01-14T09:00:00Z","arrive_at":"2026-01-14T21:00:00+07:00","to_zone":"Asia/Bangkok"}}]}`, "body.weeks[1].travel.from_zone"},
			{"travel to an unknown zone", `{"weeks":[{"week":1,"level":"medium"},{"week":2,"level":"heavy","travel":{"depart_at":"2026-01-14T09:00:00Z","arrive_at":"2026-01-14T21:00:00+07:00","from_zone":"Europe/London","to_zone":"Asia/Atlantis"}}]}`, "body.weeks[1].travel.to_zone"},
			{"travel landing before it leaves", `{"weeks":[{"week":1,"level":"medium"},{"week":2,"level":"heavy","travel":{"depart_at":"2026-01-14T09:00:00Z","arrive_at":"2026-01-14T08:00:00Z","from_zone":"Europe/London","to_zone":"Asia/Bangkok"}}]}`, "body.weeks[1].travel.arrive_at"},
			{"travel longer than three days", `{"weeks":[{"week":1,"level":"medium"},{"week":2,"level":"heavy","travel":{"depart_at":"2026-01-14T09:00:00Z","arrive_at":"2026-01-18T21:00:00+07:00","from_zone":"Europe/London","to_zone":"Asia/Bangkok"}}]}`, "body.weeks[1].travel.arrive_at"},
			{"travel leaving outside its week", `{"weeks":[{"week":1,"level":"medium"},{"week":2,"level":"heavy","travel":{"depart_at":"2026-01-19T09:00:00Z","arrive_at":"2026-01-19T21:00:00+07:00","from_zone":"Europe/London","to_zone":"Asia/Bangkok"}}]}`, "body.weeks[1].travel.depart_at"},
			{"bout start without its offset", `{"bout_at":"2026-02-28 20:30"}`, "body.bout_at"},
			{"bout start on another day", `{"bout_at":"2026-03-01T20:30:00Z"}`, "body.bout_at"},
			{"check weight on the weigh-in day", `{"rules":{"check_weights":[{"days_before":0,"over_limit_pct":3}]}}`, "body.rules.check_weights[0].days_before"},
			{"two check weights the same day", `{"rules":{"check_weights":[{"days_before":7,"over_limit_pct":3},{"days_before":7,"over_limit_pct":4}]}}`, "body.rules.check_weights[1].days_before"},
			{"check weight far over the limit", `{"rules":{"check_weights":[{"days_before":30,"over_limit_pct":40}]}}`, "body.rules.check_weights[0].over_limit_pct"},
			{"two fight-day caps", `{"rules":{"fight_day":{"over_limit_lb":10,"over_official_pct":10}}}`, "body.rules.fight_day"},
			{"fight-day cap without a number", `{"rules":{"fight_day":{}}}`, "body.rules.fight_day"},
			{"fight-day cap far over the limit", `{"rules":{"fight_day":{"over_limit_lb":50}}}`, "body.rules.fight_day.over_limit_lb"},
			{"fight-day cap far over the weigh-in", `{"rules":{"fight_day":{"over_official_pct":40}}}`, "body.rules.fight_day.over_official_pct"},
			{"unknown stand-down rule set", `{"stand_down_sets":["my_gym"]}`, "body.stand_down_sets[0]"},
		},
		validate: validateBout,
	},
	{
		Name: KindCheckin, Screen: "/checkin", Label: "check-in", Plural: "check-ins", Body: Checkin{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff, RoleAthlete},
		Rules:   []string{RuleMassAbovePath, RuleMassLossFast, RuleCutAtRisk, RuleWellnessDrop, RuleHydration, RuleMissingCheckin},
		Fields: []Field{
			rng("body.mass_kg", "Body mass", "kg", MinMassKg, MaxMassKg),
			rng("body.sleep_h", "Sleep", "h", MinSleepH, MaxSleepH),
			wellness("body.sleep", "Sleep quality"), wellness("body.fatigue", "Energy"), wellness("body.soreness", "Muscles"),
			wellness("body.stress", "Stress"), wellness("body.mood", "Mood"),
			wholeRng("body.rhr_bpm", "Resting heart rate", "bpm", MinRHR, MaxRHR),
			{Path: "body.usg", Label: "Urine specific gravity", Min: f64(MinUSG), Max: f64(MaxUSG), Decimals: 3,
				Words: "must be a urine specific gravity between {min} and {max} (e.g. 1.020); got {got}"},
			textField("body.note", "Note", MaxNoteLen),
		},
		Example: `{"mass_kg":70}`,
		Cases: []Case{
			{"nothing entered", `{"mass_kg":null}`, "body"},
		},
		validate: validateCheckin,
	},
	{
		Name: KindJump, Screen: "/jumps", Label: "jump test", Plural: "jump tests", Body: Jump{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff}, Rules: []string{RuleJumpDrop},
		Fields: []Field{
			enum("body.test", "Test", JumpTests),
			enum("body.method", "Measured with", JumpMethods),
			attempts(rng("body.heights_cm[]", "Jump height", "cm", MinHeightCm, MaxHeightCm)),
			attempts(Field{Path: "body.flight_ms[]", Label: "Flight time", Unit: "ms", Min: f64(MinFlightMs), Max: f64(MaxFlightMs),
				Words: "must be between {min} and {max} ms (a jump of 4.9 to 122.6 cm); got {got}"}),
			textField("body.session", "Test session", MaxShortLen),
		},
		Example: `{"test":"cmj","heights_cm":[40,41,42]}`,
		Cases: []Case{
			{"no attempts", `{"heights_cm":null}`, "body.heights_cm"},
			{"an empty list of attempts", `{"heights_cm":[]}`, "body.heights_cm"},
			{"a drop jump without its drop height", `{"test":"dj","contact_ms":[200,210,205]}`, "body.drop_cm"},
			{"a drop height out of range", `{"test":"dj","drop_cm":5,"contact_ms":[200,210,205]}`, "body.drop_cm"},
			{"a drop jump without contact times", `{"test":"dj","drop_cm":40}`, "body.contact_ms"},
			{"a ground contact out of range", `{"test":"dj","drop_cm":40,"contact_ms":[50,210,205]}`, "body.contact_ms[0]"},
			{"contact times on a CMJ", `{"contact_ms":[200,210,205]}`, "body.contact_ms"},
		},
		validate: validateJump,
	},
	{
		Name: KindRound, Screen: "/rounds", Label: "round", Plural: "rounds", Body: Round{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff}, Rules: []string{RuleSparDensity, RuleSparSpacing, RuleSparOnHold},
		Fields: []Field{
			needEnum("body.activity", "Activity", Activities),
			wholeRng("body.seconds", "Round length", "s", MinRoundS, MaxRoundS).need(fmt.Sprintf("the round's length, %d to %d s", MinRoundS, MaxRoundS)),
			Field{Path: "body.intensity", Label: "Intensity", Min: f64(1), Max: f64(3), Whole: true,
				Words: "must be 1 (easy), 2 (moderate) or 3 (hard); got {got}"}.need("1 easy, 2 moderate or 3 hard"),
			textField("body.partner", "Partner", MaxNameLen),
			textField("body.note", "Note", MaxNoteLen),
		},
		Example:  `{"activity":"spar","seconds":180,"intensity":2}`,
		validate: validateRound,
	},
	{
		Name: KindIntervals, Screen: "/intervals", Label: "interval session", Plural: "interval sessions", Body: Intervals{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff},
		Fields: []Field{
			textField("body.protocol", "Protocol", MaxShortLen),
			textField("body.modality", "Modality", MaxShortLen).need("what the intervals were done on, e.g. " + strings.Join(Modalities, ", ")),
			// Left out, the work is 0 s: refused as out of range.
			{Path: "body.work_s", Label: "Work", Unit: "s", Min: f64(0), MinAbove: true, Max: f64(MaxIntervalS),
				Words:    "must be more than {min} and at most {max} s per repetition; got {got}",
				Required: fmt.Sprintf("must be more than 0 and at most %d s per repetition; got 0", MaxIntervalS)},
			rng("body.rest_s", "Rest", "s", 0, MaxIntervalS),
			rng("body.set_rest_s", "Rest between sets", "s", 0, MaxIntervalS),
			wholeRng("body.reps", "Reps per set", "repetitions per set", 1, MaxReps).need(fmt.Sprintf("repetitions per set, 1 to %d", MaxReps)),
			wholeRng("body.sets", "Sets", "sets", 1, MaxSets),
			wholeRng("body.hr_peak", "Peak heart rate", "bpm", MinHR, MaxHR),
			wholeRng("body.hr_mean", "Mean heart rate", "bpm", MinHR, MaxHR),
			rpeField("body.rpe"),
			rng("body.pct_vift", "Share of V_IFT", "% of V_IFT", MinPctVIFT, MaxPctVIFT),
			rng("body.vift_kmh", "V_IFT", "km/h", IFTStartKmh, IFTTopKmh),
			rng("body.hr_lo_pct", "Heart-rate band, lower end", "% of HRmax", MinPctHRMax, MaxPctHRMax),
			rng("body.hr_hi_pct", "Heart-rate band, upper end", "% of HRmax", MinPctHRMax, MaxPctHRMax),
			rng("body.hr_max_bpm", "HRmax", "bpm", MinHRMax, MaxHRMax),
			enum("body.hr_max_from", "HRmax from", HRMaxSources),
			rng("body.done_rep_m", "Distance covered per rep", "m per repetition", 0, MaxRepM),
			textField("body.note", "Note", MaxNoteLen),
		},
		Example: `{"modality":"bike","work_s":30,"rest_s":30,"reps":10,"sets":2}`,
		Cases: []Case{
			{"more reps done than planned", `{"done_reps":21}`, "body.done_reps"},
			{"mean heart rate above the peak", `{"hr_peak":170,"hr_mean":180}`, "body.hr_mean"},
			{"longer than a session", `{"work_s":600,"rest_s":0,"reps":20,"sets":2}`, "body.minutes"},
			{"a share of V_IFT without the V_IFT", `{"pct_vift":90}`, "body.vift_kmh"},
			{"a V_IFT without its share", `{"vift_kmh":19}`, "body.pct_vift"},
			{"a heart-rate band upside down", `{"hr_lo_pct":95,"hr_hi_pct":90,"hr_max_bpm":190}`, "body.hr_hi_pct"},
			{"a heart-rate band without HRmax", `{"hr_lo_pct":90,"hr_hi_pct":95}`, "body.hr_max_bpm"},
			{"half a heart-rate band", `{"hr_lo_pct":90,"hr_max_bpm":190}`, "body.hr_hi_pct"},
			{"an HRmax source without a band", `{"hr_max_from":"age"}`, "body.hr_max_from"},
		},
		validate: validateIntervals,
	},
	{
		Name: KindSession, Screen: "/session", Label: "session", Plural: "sessions", Body: Session{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff, RoleAthlete}, Rules: []string{RuleLoadSpike, RuleMonotony},
		Fields: []Field{
			needEnum("body.type", "Type", SessionTypes),
			enum("body.focus", "Focus", SessionFocuses),
			rng("body.minutes", "Duration", "min", MinSessionMin, MaxSessionMin).need(fmt.Sprintf("the session's length, %d to %d min", MinSessionMin, MaxSessionMin)),
			rpeField("body.rpe").need("the session RPE, 0 to 10 on the CR-10 scale"),
			textField("body.note", "Note", MaxNoteLen),
		},
		Example:  `{"type":"boxing","minutes":60,"rpe":6}`,
		validate: validateSession,
	},
	{
		Name: KindIncident, Screen: "/incident", Label: "incident", Plural: "incidents", Body: Incident{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff}, Rules: []string{RuleSparOnHold},
		Fields: []Field{
			needEnum("body.type", "What happened", IncidentTypes),
			textField("body.note", "What you saw", MaxNoteLen),
			rng("body.loc_seconds", "How long consciousness was lost", "s", 0, MaxLOCSeconds),
			textField("body.seen_by", "Clinician who saw the fighter", MaxNameLen),
		},
		Example: `{"type":"head_knock"}`,
		Cases: []Case{
			{"how long consciousness was lost, when it was not", `{"loc_seconds":20}`, "body.loss_of_consciousness"},
			{"loss of consciousness with an injury", `{"type":"injury","loss_of_consciousness":true}`, "body.loss_of_consciousness"},
			{"a knockout with loss of consciousness marked without it", `{"type":"knockout_loc","loss_of_consciousness":false}`, "body.loss_of_consciousness"},
			{"a clinician's date without the clinician", `{"clinician_day":"2026-04-20"}`, "body.seen_by"},
			{"a clinician's date that is not a day", `{"seen_by":"Dr. A. Example","clinician_day":"20/04/2026"}`, "body.clinician_day"},
		},
		validate: validateIncident,
	},
	{
		Name: KindClearance, Screen: "/clearance", Label: "clearance", Plural: "clearances", Body: Clearance{}, Scope: PerAthlete, Dated: true,
		Rules: []string{RuleSparOnHold},
		Fields: []Field{
			idField("body.incident", "Incident", "the id of the incident this clearance ends"),
			needName("body.by", "Cleared in writing by", "who gave the clearance, e.g. the ringside doctor"),
			textField("body.note", "Note", MaxNoteLen),
		},
		Example:  `{"incident":"0190a0b0-0000-7000-8000-000000000001","by":"Dr. A. Example"}`,
		validate: validateClearance,
	},
	{
		Name: KindDecision, Screen: "/decision", Label: "decision", Plural: "decisions", Body: Decision{}, Scope: PerAthlete, Dated: true,
		Fields: []Field{
			enum("body.rule", "Flag", RuleIDs),
			textField("body.note", "What was decided", MaxNoteLen).need(fmt.Sprintf("what was decided, up to %d characters", MaxNoteLen)),
			textField("body.by", "By", MaxNameLen),
		},
		Example:  `{"rule":"jump_drop","note":"Lighter session today."}`,
		validate: validateDecision,
	},
	{
		Name: KindNote, Screen: "/note", Label: "note", Plural: "notes", Body: Note{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff, RoleAthlete},
		Fields: []Field{
			textField("body.text", "Note", MaxNoteLen).need(fmt.Sprintf("the note, up to %d characters", MaxNoteLen)),
			enum("body.audience", "Who reads it", Audiences),
			textField("body.by", "By", MaxNameLen),
		},
		Example:  `{"text":"Left hand sore after pads.","audience":"athlete"}`,
		validate: validateNote,
	},
	{
		Name: KindFitnessTest, Screen: "/tests", Label: "fitness test", Plural: "fitness tests", Body: FitnessTest{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff},
		Fields: []Field{
			needEnum("body.protocol", "Test", FitnessProtocols),
			{Path: "body.stage", Label: "Last stage completed", Min: f64(1), Max: f64(float64(maxStage)), Whole: true,
				Words: "must be between {min} and {max} (the stages of the test); got {got}"},
			wholeRng("body.hr_peak", "Peak heart rate", "bpm", MinHR, MaxHR),
			textField("body.note", "Note", MaxNoteLen),
		},
		Example: `{"protocol":"ift_30_15","stage":23}`,
		Cases: []Case{
			{"a stage the table from 10 km/h does not have", `{"start_kmh":10,"stage":32}`, "body.stage"},
			{"a first stage at neither 8 nor 10 km/h", `{"start_kmh":9}`, "body.start_kmh"},
			{"a speed between stages", `{"stage":null,"vift_kmh":19.3}`, "body.vift_kmh"},
			{"no stage", `{"stage":null}`, "body.stage"},
			{"sprint times on a 30-15 IFT", `{"sprint_s":[4,4.1]}`, "body.sprint_s"},
			{"one sprint", `{"protocol":"repeated_sprint","stage":null,"sprint_s":[4]}`, "body.sprint_s"},
			{"a sprint time out of range", `{"protocol":"repeated_sprint","stage":null,"sprint_s":[4,0]}`, "body.sprint_s[1]"},
			{"a sprint length out of range", `{"protocol":"repeated_sprint","stage":null,"sprint_s":[4,4.1],"distance_m":300}`, "body.distance_m"},
			{"no maximal heart rate", `{"protocol":"hr_max","stage":null}`, "body.hr_max_bpm"},
			{"a maximal heart rate out of range", `{"protocol":"hr_max","stage":null,"hr_max_bpm":250}`, "body.hr_max_bpm"},
			{"a peak heart rate on a maximal heart rate", `{"protocol":"hr_max","stage":null,"hr_max_bpm":190,"hr_peak":188}`, "body.hr_peak"},
		},
		validate: validateFitnessTest,
	},
	{
		Name: KindStrength, Screen: "/tests", Label: "strength test", Plural: "strength tests", Body: Strength{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff},
		Fields: []Field{
			textField("body.exercise", "Exercise", MaxShortLen).need("the exercise tested, e.g. " + strings.Join(Exercises[:3], ", ")),
			{Path: "body.sets[].load_kg", Label: "Load", Unit: "kg", Min: f64(0), MinAbove: true, Max: f64(MaxLoadKg),
				Words: "must be more than {min} and at most {max} kg; got {got}"},
			wholeRng("body.sets[].reps", "Reps", "repetitions", 1, MaxStrengthReps),
			wholeRng("body.sets[].rir", "Reps in reserve", "repetitions in reserve", 0, MaxRIR),
			rng("body.sets[].mpv_ms", "Bar speed", "m/s", MinMPV, MaxMPV),
			rng("body.min_velocity_ms", "Bar speed at a 1RM", "m/s (the bar speed at a 1RM)", MinVelocityLo, MinVelocityHi),
			textField("body.note", "Note", MaxNoteLen),
		},
		Example: `{"exercise":"back squat","sets":[{"load_kg":100,"reps":5}]}`,
		Cases: []Case{
			{"no exercise", `{"exercise":""}`, "body.exercise"},
			{"no sets", `{"sets":[]}`, "body.sets"},
			{"a bar speed that rises with the load", `{"sets":[{"load_kg":40,"reps":5,"mpv_ms":1},{"load_kg":60,"reps":4,"mpv_ms":0.75},{"load_kg":80,"reps":3,"mpv_ms":0.8}]}`, "body.sets[2].mpv_ms"},
		},
		validate: validateStrength,
	},
	{
		Name: KindWeighIn, Screen: "/fightweek", Label: "weigh-in", Plural: "weigh-ins", Body: WeighIn{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff}, Rules: []string{RuleWeighIn},
		Fields: []Field{
			needEnum("body.type", "Weigh-in", WeighInKinds),
			rng("body.mass_kg", "Mass on the scale", "kg", MinMassKg, MaxMassKg).need(fmt.Sprintf("the mass on the scale, %d to %d kg", MinMassKg, MaxMassKg)),
			textField("body.note", "Note", MaxNoteLen),
		},
		Example: `{"type":"check","mass_kg":70}`,
		Cases: []Case{
			{"made the limit, on a check weight", `{"made":true}`, "body.made"},
		},
		validate: validateWeighIn,
	},
	{
		Name: KindRTSStep, Screen: "/rts", Label: "return-to-sport step", Plural: "return-to-sport steps", Body: RTSStep{}, Scope: PerAthlete, Dated: true,
		Writers: []string{RoleStaff},
		Fields: []Field{
			idField("body.incident", "Incident", "the id of the incident this step follows"),
			wholeRng("body.step", "Step", "", MinRTSStep, MaxRTSStep).need(fmt.Sprintf("the return-to-sport step, %d to %d", MinRTSStep, MaxRTSStep)),
			textField("body.symptoms", "Symptoms", MaxNoteLen),
			needName("body.supervised_by", "Supervised by", "who supervised the step"),
			textField("body.note", "Note", MaxNoteLen),
		},
		Example:  `{"incident":"0190a0b0-0000-7000-8000-000000000001","step":1,"supervised_by":"Dr. A. Example"}`,
		validate: validateRTSStep,
	},
}

// attempts bounds a jump test's attempts: the hub's words name the list.
func attempts(f Field) Field {
	f.MinItems, f.MaxItems = MinAttempts, MaxAttempts
	f.ItemsWords = "must hold {min} to {max} attempts; got {got}"
	return f
}

func wellness(path, label string) Field {
	return Field{Path: path, Label: label, Min: f64(1), Max: f64(5), Whole: true,
		Words: "must be a whole number from {min} to {max} (5 = best); got {got}"}
}

var byName = func() map[string]*Kind {
	m := make(map[string]*Kind, len(Registry))
	for i := range Registry {
		m[Registry[i].Name] = &Registry[i]
	}
	return m
}()

// KindOf finds a kind in the registry.
func KindOf(name string) (*Kind, bool) {
	k, ok := byName[name]
	return k, ok
}

// BodyType is the Go type of the kind's body.
func (k *Kind) BodyType() reflect.Type { return reflect.TypeOf(k.Body) }

// CanWrite reports whether a role other than the coach may write the kind.
func (k *Kind) CanWrite(role string) bool {
	for _, r := range k.Writers {
		if r == role {
			return true
		}
	}
	return false
}

// WrittenBy lists, in registry order, the kinds a role (staff, athlete) may
// write.
func WrittenBy(role string) []string {
	var out []string
	for _, k := range Registry {
		if k.CanWrite(role) {
			out = append(out, k.Name)
		}
	}
	return out
}

// Range is the field's lowest and highest value, given the current year
// for fields bounded by an age.
func (f Field) Range(year int) (lo, hi float64, ok bool) {
	if f.Min == nil {
		return 0, 0, false
	}
	lo, hi = *f.Min, math.Inf(1)
	if f.Max != nil {
		hi = *f.Max
	}
	if f.MaxYearsAgo > 0 {
		hi = float64(year - f.MaxYearsAgo)
	}
	return lo, hi, true
}

// Refusal is the hub's words for a value out of the field's range, given
// the current year (for fields bounded by an age).
func (f Field) Refusal(v float64, year int) string {
	lo, hi, _ := f.Range(year)
	words := f.Words
	if words == "" {
		words = RangeWords
	}
	if f.Step > 0 && v >= lo && v <= hi && f.StepWords != "" {
		words = f.StepWords
	}
	num := func(x float64) string {
		if f.Decimals > 0 {
			return strconv.FormatFloat(x, 'f', f.Decimals, 64)
		}
		return fmtNum(x)
	}
	unit := ""
	if f.Unit != "" {
		unit = " " + f.Unit
	}
	return strings.NewReplacer("{min}", num(lo), "{max}", num(hi), "{unit}", unit, "{got}", fmtNum(v)).Replace(words)
}

// Vocabulary is what the app's screens and checks read: generated from
// the registry into /js/vocab.js when the app is embedded.
type Vocabulary struct {
	Kinds      map[string]VocabKind `json:"kinds"`
	Order      []string             `json:"order"`
	RangeWords string               `json:"range_words"`
	// InvisibleWords refuses a text of only invisible characters.
	InvisibleWords string `json:"invisible_words"`
	// ChooseOneWords and NotAChoiceWords refuse a choice left empty and a
	// value that is not one of the choices.
	ChooseOneWords  string     `json:"choose_one_words"`
	NotAChoiceWords string     `json:"not_a_choice_words"`
	MinYear         int        `json:"min_year"`
	MaxNameLen      int        `json:"max_name_len"`
	MaxNoteLen      int        `json:"max_note_len"`
	Protocols       []Protocol `json:"protocols"`
	Exercises       []string   `json:"exercises"`
	Modalities      []Option   `json:"modalities"`
	Levels          []string   `json:"levels"`
	// Emphases are the training emphases a plan week and a session's
	// focus name, in the product's words.
	Emphases []EmphasisDef `json:"emphases"`
	CR10     []Anchor      `json:"cr10"`
	// Limits are the numbers the checks of one field against another use.
	Limits map[string]float64 `json:"limits"`
	// StandDownSets are the ids a bout's stand_down_sets may name.
	StandDownSets []string `json:"stand_down_sets"`
	// WeighInKinds are the weigh-in record's types.
	WeighInKinds []string `json:"weigh_in_kinds"`
	// Rules are the flag rules and their parameters' names (a settings
	// record's thresholds).
	Rules []VocabRule `json:"rules"`
}

// VocabKind is one kind as the app sees it.
type VocabKind struct {
	Label   string   `json:"label"`
	Plural  string   `json:"plural"`
	Writers []string `json:"writers"`
	Scope   Scope    `json:"scope"`
	Dated   bool     `json:"dated"`
	Screen  string   `json:"screen,omitempty"`
	Fields  []Field  `json:"fields"`
}

// The registry's examples and cases are not part of the vocabulary: they
// feed the tests that hold the app to the hub (the generated probes),
// which read the registry itself, and a phone has no use for them.

// Vocab builds the app's vocabulary from the registry.
func Vocab() Vocabulary {
	v := Vocabulary{Kinds: map[string]VocabKind{}, RangeWords: RangeWords, InvisibleWords: InvisibleWords,
		ChooseOneWords: ChooseOneWords, NotAChoiceWords: NotAChoiceWords, MinYear: MinYear,
		MaxNameLen: MaxNameLen, MaxNoteLen: MaxNoteLen, Protocols: Protocols, Modalities: ModalityOptions,
		Levels: Levels, Emphases: Emphases, CR10: CR10,
		Limits: map[string]float64{"max_camp_days": MaxCampDays, "max_day_before_days": MaxDayBeforeDays, "max_session_min": MaxSessionMin,
			"max_emphasis_ids": MaxEmphasisIDs, "max_travel_hours": MaxTravelHours,
			"max_check_days": MaxCheckDays, "max_over_limit_pct": MaxOverLimitPct, "max_fight_day_lb": MaxFightDayLb,
			"max_fight_day_pct": MaxFightDayPct, "max_bout_after_hours": MaxBoutAfterHours, "max_stand_down_sets": MaxStandDownSets,
			"min_attempts": MinAttempts, "max_attempts": MaxAttempts},
		StandDownSets: StandDownSetIDs, WeighInKinds: WeighInKinds, Rules: vocabRules()}
	for k, x := range testLimits {
		v.Limits[k] = x
	}
	v.Exercises = Exercises
	for _, k := range Registry {
		w := k.Writers
		if w == nil {
			w = []string{}
		}
		v.Kinds[k.Name] = VocabKind{Label: k.Label, Plural: k.Plural, Writers: w, Scope: k.Scope, Dated: k.Dated, Screen: k.Screen,
			Fields: k.Fields}
		v.Order = append(v.Order, k.Name)
	}
	return v
}

// kindNames lists the registry's kinds in order.
func kindNames() []string {
	out := make([]string, len(Registry))
	for i, k := range Registry {
		out[i] = k.Name
	}
	return out
}

// LengthWords is the refusal of a text too long.
const LengthWords = "must be at most {max} characters; got {got}"

// ItemsRefusal is the hub's words for an array of n elements, too many or too few.
func (f Field) ItemsRefusal(n int) string {
	return strings.NewReplacer("{min}", strconv.Itoa(f.MinItems), "{max}", strconv.Itoa(f.MaxItems), "{got}", strconv.Itoa(n)).Replace(f.ItemsWords)
}

// LengthRefusal is the hub's words for a text of n characters, too long.
func (f Field) LengthRefusal(n int) string {
	return strings.NewReplacer("{max}", strconv.Itoa(f.MaxLen), "{got}", strconv.Itoa(n)).Replace(LengthWords)
}
