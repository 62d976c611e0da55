package records

import (
	"time"
)

// Emphasis groups: a week's strength emphasis takes ids of the strength
// group, its conditioning emphasis ids of the conditioning group; "none"
// belongs to both.
const (
	GroupStrength     = "strength"
	GroupConditioning = "conditioning"
)

// EmphasisDef is one emphasis of training, in the product's own words.
type EmphasisDef struct {
	ID     string   `json:"id"`
	Groups []string `json:"groups"`
	Words  string   `json:"words"`
}

// Emphases is the one list of training emphases: a plan week's strength
// and conditioning emphases and a session's focus read their ids from it.
// The order is the order of a camp: maximal strength first, speed last.
var Emphases = []EmphasisDef{
	{"max_strength", []string{GroupStrength}, "Maximal strength"},
	{"strength_speed", []string{GroupStrength}, "Strength–speed"},
	{"speed", []string{GroupStrength}, "Speed"},
	{"plyometric", []string{GroupStrength}, "Jumps and throws"},
	{"aerobic", []string{GroupConditioning}, "Aerobic base"},
	{"anaerobic", []string{GroupConditioning}, "High-intensity intervals"},
	{"fight_specific", []string{GroupConditioning}, "Fight-paced rounds"},
	{"none", []string{GroupStrength, GroupConditioning}, "None planned"},
}

// EmphasisIDs lists the emphasis ids of a group ("" for all).
func EmphasisIDs(group string) []string {
	var out []string
	for _, e := range Emphases {
		for _, g := range e.Groups {
			if group == "" || g == group {
				out = append(out, e.ID)
				break
			}
		}
	}
	return out
}

// EmphasisWords is an emphasis id in words; the id itself if unknown.
func EmphasisWords(id string) string {
	for _, e := range Emphases {
		if e.ID == id {
			return e.Words
		}
	}
	return id
}

// Limits of a plan week.
const (
	MaxEmphasisIDs   = 3   // ids per emphasis: a main one and what rides along
	MaxEmphasisLabel = 60  // characters of the coach's words
	MaxWeekNoteLen   = 500 // characters
	MaxTravelHours   = 72  // door to door; common practice, no source (the longest trips are about 40 h)
)

// validateWeek checks a plan week's content; start is the week's first day.
func validateWeek(field string, w Week, start time.Time) error {
	for _, e := range []struct {
		name, group string
		v           *Emphasis
	}{{"strength", GroupStrength, w.Strength}, {"conditioning", GroupConditioning, w.Conditioning}} {
		if e.v == nil {
			continue
		}
		f := field + "." + e.name
		if err := text(f+".label", e.v.Label, MaxEmphasisLabel, false); err != nil {
			return err
		}
		if len(e.v.IDs) > MaxEmphasisIDs {
			return fe(f+".ids", "has %d emphases; at most %d a week", len(e.v.IDs), MaxEmphasisIDs)
		}
		allowed := EmphasisIDs(e.group)
		seen := map[string]bool{}
		for j, id := range e.v.IDs {
			if err := oneOf(f+".ids["+itoa(j)+"]", id, allowed); err != nil {
				return err
			}
			if seen[id] {
				return fe(f+".ids["+itoa(j)+"]", "%q is listed twice", id)
			}
			seen[id] = true
		}
		if seen["none"] && len(e.v.IDs) > 1 {
			return fe(f+".ids", "holds \"none\" with other emphases; use either")
		}
	}
	if w.SparRounds != nil {
		if err := betweenInt(field+".spar_rounds", *w.SparRounds, 0, MaxSparCap, "sparring rounds"); err != nil {
			return err
		}
	}
	if w.HardRounds != nil {
		if err := betweenInt(field+".hard_rounds", *w.HardRounds, 0, MaxSparCap, "hard sparring rounds"); err != nil {
			return err
		}
		if w.SparRounds != nil && *w.HardRounds > *w.SparRounds {
			return fe(field+".hard_rounds", "is %d, more than the %d sparring rounds planned that week", *w.HardRounds, *w.SparRounds)
		}
	}
	if err := text(field+".note", w.Note, MaxWeekNoteLen, true); err != nil {
		return err
	}
	if t := w.Travel; t != nil {
		if err := validateTravel(field+".travel", t, start); err != nil {
			return err
		}
	}
	return nil
}

func validateTravel(f string, t *Travel, start time.Time) error {
	if t.FromZone == "" {
		return fe(f+".from_zone", "is required: the time zone of the place left, such as Europe/Madrid")
	}
	if err := loadZone(f+".from_zone", t.FromZone); err != nil {
		return err
	}
	if t.ToZone == "" {
		return fe(f+".to_zone", "is required: the time zone of the destination, such as Asia/Bangkok")
	}
	if err := loadZone(f+".to_zone", t.ToZone); err != nil {
		return err
	}
	dep, err := time.Parse(time.RFC3339, t.DepartAt)
	if err != nil {
		return fe(f+".depart_at", "must be the departure date and time in RFC 3339 with offset (e.g. 2026-03-02T09:30:00+00:00); got %q", t.DepartAt)
	}
	arr, err := time.Parse(time.RFC3339, t.ArriveAt)
	if err != nil {
		return fe(f+".arrive_at", "must be the arrival date and time in RFC 3339 with offset (e.g. 2026-03-02T21:15:00+07:00); got %q", t.ArriveAt)
	}
	if !arr.After(dep) {
		return fe(f+".arrive_at", "is %s, not after the departure %s", t.ArriveAt, t.DepartAt)
	}
	if h := arr.Sub(dep).Hours(); h > MaxTravelHours {
		return fe(f+".arrive_at", "is %.0f h after the departure; a journey is at most %d h — check the dates", h, MaxTravelHours)
	}
	from, _ := time.LoadLocation(t.FromZone)
	d := civil(dep.In(from))
	if end := start.AddDate(0, 0, 6); d.Before(start) || d.After(end) {
		return fe(f+".depart_at", "is on %s (%s), outside this week (%s to %s); plan the journey in the week it leaves",
			d.Format(time.DateOnly), t.FromZone, start.Format(time.DateOnly), end.Format(time.DateOnly))
	}
	return nil
}
