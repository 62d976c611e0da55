package records

import (
	"encoding/json"
	"fmt"
	"math"
	"strings"
	"time"
)

// The fight-week and medical kinds and the fields they add to bouts and
// incidents. Rules between records (a fight-day weigh-in after the
// official one, a return-to-sport step after the one below it) need the
// fighter's other records and are checked by the hub inside the push
// (server/related.go); here is what one record alone must satisfy.

// Kind names of the fight-week and medical records.
const (
	KindWeighIn = "weigh_in"
	KindRTSStep = "rts_step"
)

// WeighInKinds are the weigh-in record's types (WeighInTypes are the
// bout's day_before and same_day).
var WeighInKinds = []string{"check", "official", "fight_day"}

// WeighIn is a weigh-in: a check weight, the official weigh-in or a
// weigh-in on fight day. The record's `at` is the moment of the weigh-in
// with the venue's offset.
type WeighIn struct {
	Type   string  `json:"type"`
	MassKg float64 `json:"mass_kg"`
	// Made is the official weigh-in's result as announced; when absent the
	// hub derives it from the bout's limit.
	Made *bool  `json:"made,omitempty"`
	Note string `json:"note,omitempty"`
}

// RTSStep is one step of a return to sport after a head incident
// (Patricios et al. 2023): the record's `at` is when the step began.
type RTSStep struct {
	Incident     string `json:"incident"` // incident record id
	Step         int    `json:"step"`     // 1–6
	Symptoms     string `json:"symptoms,omitempty"`
	SupervisedBy string `json:"supervised_by"`
	Note         string `json:"note,omitempty"`
}

// WeighInRules are a bout's weigh-in rules (the bout's `rules`): check
// weights before the official weigh-in and a cap on fight day.
type WeighInRules struct {
	CheckWeights []CheckWeight `json:"check_weights,omitempty"`
	FightDay     *FightDayCap  `json:"fight_day,omitempty"`
	// Preset is the id of the preset the rules came from (server/fightweek);
	// empty for a custom set.
	Preset string `json:"preset,omitempty"`
}

// CheckWeight is one check weight: so many days before the official
// weigh-in, at most so many percent over the division limit.
type CheckWeight struct {
	DaysBefore   int     `json:"days_before"`
	OverLimitPct float64 `json:"over_limit_pct"`
}

// FightDayCap is the cap of a weigh-in on the day of the bout: pounds over
// the division limit or percent over the official weigh-in mass.
type FightDayCap struct {
	OverLimitLb     *float64 `json:"over_limit_lb,omitempty"`
	OverOfficialPct *float64 `json:"over_official_pct,omitempty"`
}

// Bounds of a custom rule set (common practice, no source: no scheme asks
// a check weight more than 60 days out or allows more than 25 % over the
// limit; a fight-day cap of more than 30 lb or 25 % would not be a cap).
const (
	MaxCheckDays      = 60
	MaxOverLimitPct   = 25
	MaxFightDayLb     = 30
	MaxFightDayPct    = 25
	MaxLOCSeconds     = 3600 // an hour: longer is not a ringside record
	MaxStandDownSets  = 8
	MinRTSStep        = 1
	MaxRTSStep        = 6
	MaxBoutAfterHours = 72 // a bout at most 3 days after its weigh-in (a day-before weigh-in is 1–2 days)
)

// StandDownSetIDs are the stand-down rule sets a bout may name; the table
// and its sources are in server/medical (its test holds the two lists
// equal).
var StandDownSetIDs = []string{"arp", "pro_board_28_45", "amateur_4w_3m_12m", "state_pro_30_60_6m"}

// CheckRules lists what is wrong with a rule set, naming the field under
// prefix ("body.rules").
func CheckRules(prefix string, r *WeighInRules) error {
	if r == nil {
		return nil
	}
	seen := map[int]bool{}
	for i, c := range r.CheckWeights {
		f := fmt.Sprintf("%s.check_weights[%d]", prefix, i)
		if c.DaysBefore < 1 || c.DaysBefore > MaxCheckDays {
			return fe(f+".days_before", "must be between 1 and %d days before the weigh-in; got %d", MaxCheckDays, c.DaysBefore)
		}
		if seen[c.DaysBefore] {
			return fe(f+".days_before", "a check weight %d days out is already set", c.DaysBefore)
		}
		seen[c.DaysBefore] = true
		if err := between(f+".over_limit_pct", c.OverLimitPct, 0, MaxOverLimitPct, "% over the limit"); err != nil {
			return err
		}
	}
	if f := r.FightDay; f != nil {
		p := prefix + ".fight_day"
		switch {
		case f.OverLimitLb != nil && f.OverOfficialPct != nil:
			return fe(p, "give either pounds over the limit or percent over the official weigh-in mass, not both")
		case f.OverLimitLb != nil:
			return between(p+".over_limit_lb", *f.OverLimitLb, 0, MaxFightDayLb, "lb over the limit")
		case f.OverOfficialPct != nil:
			return between(p+".over_official_pct", *f.OverOfficialPct, 0, MaxFightDayPct, "% over the official weigh-in mass")
		default:
			return fe(p, "give pounds over the limit or percent over the official weigh-in mass")
		}
	}
	return nil
}

// checkBoutFightWeek checks the fields a bout gained for fight week:
// bout_at on the bout day and after the weigh-in, the rules and the
// stand-down sets.
func checkBoutFightWeek(b *Bout) error {
	if b.BoutAt != "" {
		t, err := time.Parse(time.RFC3339, b.BoutAt)
		if err != nil {
			return fe("body.bout_at", "must be the bout's start with the venue's offset, e.g. 2026-02-28T20:30:00-07:00; got %q", b.BoutAt)
		}
		if d := t.Format(time.DateOnly); d != b.BoutDay {
			return fe("body.bout_at", "is on %s, but the bout day is %s", DayWords(d), DayWords(b.BoutDay))
		}
		if wi, err := time.Parse(time.RFC3339, b.WeighIn); err == nil {
			if !t.After(wi) {
				return fe("body.bout_at", "is %s, not after the weigh-in at %s", t.Format("2006-01-02 15:04"), wi.Format("2006-01-02 15:04"))
			}
			if h := t.Sub(wi).Hours(); h > MaxBoutAfterHours {
				return fe("body.bout_at", "is %.1f h after the weigh-in; at most %d h", h, MaxBoutAfterHours)
			}
		}
	}
	if err := CheckRules("body.rules", b.Rules); err != nil {
		return err
	}
	if len(b.StandDownSets) > MaxStandDownSets {
		return fe("body.stand_down_sets", "may name at most %d rule sets", MaxStandDownSets)
	}
	for i, id := range b.StandDownSets {
		if err := oneOf(fmt.Sprintf("body.stand_down_sets[%d]", i), id, StandDownSetIDs); err != nil {
			return err
		}
	}
	return nil
}

// checkIncidentMedical checks the fields an incident gained: loss of
// consciousness and its length, the clinician and the clinician's date.
func checkIncidentMedical(b *Incident) error {
	if b.Type == "knockout_loc" && b.LOC != nil && !*b.LOC {
		return fe("body.loss_of_consciousness", "is false, but the incident is a knockout with loss of consciousness")
	}
	if b.LOCSeconds != nil {
		if err := between("body.loc_seconds", *b.LOCSeconds, 0, MaxLOCSeconds, "s"); err != nil {
			return err
		}
		if (b.LOC == nil || !*b.LOC) && b.Type != "knockout_loc" {
			return fe("body.loss_of_consciousness", "is not marked, but how long consciousness was lost is given")
		}
	}
	if b.LOC != nil && *b.LOC && b.Type == "injury" {
		return fe("body.loss_of_consciousness", "goes with a head incident; record a head knock, knockdown, stoppage or knockout")
	}
	if err := text("body.seen_by", b.SeenBy, MaxNameLen, false); err != nil {
		return err
	}
	if b.ClinicianDay != "" {
		if _, err := parseDay("body.clinician_day", b.ClinicianDay); err != nil {
			return err
		}
		if strings.TrimSpace(b.SeenBy) == "" {
			return fe("body.seen_by", "is required with a clinician's date: the clinician who set it")
		}
	}
	return nil
}
func validateWeighIn(c *check, raw json.RawMessage) (any, error) {
	var b WeighIn
	present, err := decodeBody(raw, &b, KindWeighIn)
	if err != nil {
		return nil, err
	}
	if err := oneOf("body.type", b.Type, WeighInKinds); err != nil {
		return nil, err
	}
	if !present.has("mass_kg") {
		return nil, fe("body.mass_kg", "is required: the mass on the scale, %d to %d kg", MinMassKg, MaxMassKg)
	}
	if err := between("body.mass_kg", b.MassKg, MinMassKg, MaxMassKg, "kg"); err != nil {
		return nil, err
	}
	if b.Made != nil && b.Type != "official" {
		return nil, fe("body.made", "goes with the official weigh-in only; a %s weigh-in is judged against its cap", strings.ReplaceAll(b.Type, "_", "-"))
	}
	if math.IsNaN(b.MassKg) {
		return nil, fe("body.mass_kg", "is not a number")
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateRTSStep(c *check, raw json.RawMessage) (any, error) {
	var b RTSStep
	present, err := decodeBody(raw, &b, KindRTSStep)
	if err != nil {
		return nil, err
	}
	if err := checkID("body.incident", b.Incident, "the id of the incident this step follows"); err != nil {
		return nil, err
	}
	if !present.has("step") {
		return nil, fe("body.step", "is required: the return-to-sport step, %d to %d", MinRTSStep, MaxRTSStep)
	}
	if err := betweenInt("body.step", b.Step, MinRTSStep, MaxRTSStep, ""); err != nil {
		return nil, err
	}
	if err := text("body.symptoms", b.Symptoms, MaxNoteLen, true); err != nil {
		return nil, err
	}
	if err := name("body.supervised_by", b.SupervisedBy, "who supervised the step"); err != nil {
		return nil, err
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}
