package medical

import (
	"fmt"
	"math"
	"sort"
	"time"
)

// The graded return to sport after a concussion (Patricios et al. 2023,
// Amsterdam consensus, Br J Sports Med 57:695–711): six steps, each taking
// at least 24 h; the light and moderate aerobic work of step 2 capped at
// about 55 % and 70 % of the predicted maximal heart rate, 220 − age.
// The boxing reading of each step is REFERENCES §11.1's mapping (common
// practice, derived): any sparring, light or technical, is full contact.

// MinStepGap is the least time between two steps (Patricios et al. 2023).
const MinStepGap = 24 * time.Hour

// Step is one step of the ladder in a coach's words.
type Step struct {
	N     int    `json:"step"`
	Name  string `json:"name"`
	Boxer string `json:"boxer"` // what it means in a boxing gym
	// CapPct are the heart-rate caps of the step as % of 220 − age.
	CapPct []float64 `json:"-"`
	// Clearance: the step carries a risk of head impact and needs a
	// written clearance by a doctor first.
	Clearance bool `json:"clearance"`
}

// Steps are the six steps, index 0 = step 1.
var Steps = []Step{
	{N: 1, Name: "Symptom-limited daily activity", Boxer: "Daily activities that do not bring on symptoms; no training."},
	{N: 2, Name: "Light, then moderate aerobic exercise", Boxer: "Bike or walk, light first and then moderate; light resistance work allowed.",
		CapPct: []float64{55, 70}},
	{N: 3, Name: "Individual sport-specific exercise", Boxer: "Shadow boxing, skipping, footwork alone; no head-impact risk."},
	{N: 4, Name: "Non-contact training drills at high intensity", Boxer: "Bag and drills at full intensity; pads with no strikes coming back."},
	{N: 5, Name: "Full-contact practice", Boxer: "Sparring of any kind, light or technical included.", Clearance: true},
	{N: 6, Name: "Return to sport", Boxer: "Competition.", Clearance: true},
}

// CautionRTS goes with the ladder wherever it is shown.
const CautionRTS = "The medical team sets the pace of these steps. Go back a step if symptoms return; " +
	"steps 4–6 only once symptoms have resolved, at rest and with exertion; " +
	"no sparring or contact until cleared in writing by a doctor."

// HRMaxAgePredicted is 220 − age, the prediction Patricios et al. 2023
// use for the step-2 caps.
func HRMaxAgePredicted(age int) float64 { return float64(220 - age) }

// AgeOn is the age used for the caps from a birth year: the calendar year
// minus the birth year, the oldest the fighter can be that year, so the cap
// is never above the fighter's own (a choice of this product; only the
// birth year is recorded).
func AgeOn(year, birthYear int) int { return year - birthYear }

// CapsBpm are a step's heart-rate caps in bpm for an age (none for steps
// other than 2).
func CapsBpm(step, age int) []float64 {
	if step < 1 || step > len(Steps) {
		return nil
	}
	var out []float64
	for _, p := range Steps[step-1].CapPct {
		out = append(out, HRMaxAgePredicted(age)*p/100)
	}
	return out
}

// LoggedStep is one rts_step record as the ladder needs it.
type LoggedStep struct {
	ID   string
	Step int
	At   string // RFC 3339
}

// Problem is a step that cannot be logged, with its field and reason.
type Problem struct {
	Field  string
	Reason string
}

func (p *Problem) Error() string { return p.Field + ": " + p.Reason }

// CheckStep judges a new or corrected step against the incident's other
// steps (its own earlier version among them is replaced) and the incident's
// time: steps 1–6; not before the incident; every step but the first one
// reached only from the step below it (going back a step when symptoms
// return is allowed); each step at least 24 h after the one before it in
// time, and the one after it at least 24 h later.
func CheckStep(incidentAt string, others []LoggedStep, s LoggedStep) *Problem {
	if s.Step < 1 || s.Step > len(Steps) {
		return &Problem{"step", fmt.Sprintf("a return-to-sport step is 1–6, not %d", s.Step)}
	}
	at, err := time.Parse(time.RFC3339, s.At)
	if err != nil {
		return &Problem{"at", "the step's time must be a date and time with its offset"}
	}
	if ia, err := time.Parse(time.RFC3339, incidentAt); err == nil && at.Before(ia) {
		return &Problem{"at", fmt.Sprintf("step %d at %s is before the incident (%s)", s.Step, clock(at), clock(ia))}
	}
	type row struct {
		LoggedStep
		t time.Time
	}
	var seq []row
	for _, o := range others {
		if o.ID == s.ID {
			continue
		}
		t, err := time.Parse(time.RFC3339, o.At)
		if err != nil {
			continue
		}
		seq = append(seq, row{o, t})
	}
	seq = append(seq, row{s, at})
	sort.SliceStable(seq, func(i, j int) bool { return seq[i].t.Before(seq[j].t) })
	reached := 0
	for i, r := range seq {
		mine := r.ID == s.ID
		if mine && r.Step > 1 && reached < r.Step-1 {
			return &Problem{"step", fmt.Sprintf("step %d comes after step %d, and step %d is not recorded before it for this incident", r.Step, r.Step-1, r.Step-1)}
		}
		if i > 0 {
			prev := seq[i-1]
			gap := r.t.Sub(prev.t)
			if gap < MinStepGap && (mine || prev.ID == s.ID) {
				if mine {
					return &Problem{"at", fmt.Sprintf("step %d at %s is %s after step %d (%s); each step takes at least 24 h",
						r.Step, clock(r.t), hours(gap), prev.Step, clock(prev.t))}
				}
				return &Problem{"at", fmt.Sprintf("step %d at %s is %s before step %d already recorded (%s); each step takes at least 24 h",
					prev.Step, clock(prev.t), hours(gap), r.Step, clock(r.t))}
			}
		}
		if r.Step > reached {
			reached = r.Step
		}
	}
	return nil
}

// Ladder is an incident's return to sport so far: what every screen that
// shows the stand-down shows with it (the day board, the wall sheet,
// ringside, the athlete's phone and the fight-week view read these same
// numbers).
type Ladder struct {
	Current     int       `json:"current"` // the last logged step, 0 before step 1
	CurrentName string    `json:"current_name,omitempty"`
	CurrentAt   string    `json:"current_at,omitempty"`
	Next        int       `json:"next,omitempty"` // 0 when step 6 is done
	NextName    string    `json:"next_name,omitempty"`
	NextFrom    string    `json:"next_from,omitempty"` // RFC 3339: the last step's time + 24 h
	NextCapsBpm []float64 `json:"next_caps_bpm,omitempty"`
	// NextNeedsClearance: the next step carries head-impact risk.
	NextNeedsClearance bool `json:"next_needs_clearance,omitempty"`
	// Age is the age the caps are computed from (AgeOn), 0 when the
	// fighter's birth year is not recorded; HRMaxBpm is 220 − age and
	// EarlyCapsBpm the caps of the early (aerobic) steps, light then
	// moderate, in bpm.
	Age          int       `json:"age,omitempty"`
	HRMaxBpm     float64   `json:"hr_max_bpm,omitempty"`
	EarlyCapsBpm []float64 `json:"early_caps_bpm,omitempty"`
	// Until is what ends the stand-down whatever the step: the same words
	// as the stand-down's.
	Until string `json:"until"`
	Words string `json:"words"`
}

// UntilCleared is what ends every stand-down, whatever the ladder says.
const UntilCleared = "cleared in writing by a doctor"

// Build is the ladder (caps in words are rounded down, so the number a
// coach reads is never above the cap) from an incident's logged steps and the fighter's
// age (0 when unknown: no caps).
func Build(steps []LoggedStep, age int) Ladder {
	type row struct {
		LoggedStep
		t time.Time
	}
	var seq []row
	for _, s := range steps {
		if t, err := time.Parse(time.RFC3339, s.At); err == nil && s.Step >= 1 && s.Step <= len(Steps) {
			seq = append(seq, row{s, t})
		}
	}
	sort.SliceStable(seq, func(i, j int) bool { return seq[i].t.Before(seq[j].t) })
	l := Ladder{Next: 1, Until: UntilCleared}
	if age > 0 {
		l.Age, l.HRMaxBpm, l.EarlyCapsBpm = age, HRMaxAgePredicted(age), CapsBpm(2, age)
	}
	if len(seq) > 0 {
		last := seq[len(seq)-1]
		l.Current, l.CurrentAt = last.Step, last.At
		l.CurrentName = Steps[last.Step-1].Name
		l.Next = last.Step + 1
		if l.Next > len(Steps) {
			l.Next = 0
		} else {
			l.NextFrom = last.t.Add(MinStepGap).Format(time.RFC3339)
		}
	}
	if l.Next > 0 {
		l.NextName = Steps[l.Next-1].Name
		if age > 0 {
			l.NextCapsBpm = CapsBpm(l.Next, age)
		}
		l.NextNeedsClearance = Steps[l.Next-1].Clearance
	}
	switch {
	case l.Next == 0:
		l.Words = "Step 6 of 6 recorded: return to sport."
	case l.Current == 0:
		l.Words = "Return to sport: step 1 of 6 (" + Steps[0].Name + ") not started."
	default:
		l.Words = fmt.Sprintf("Step %d of 6 (%s) on %s; step %d (%s) from %s at the earliest",
			l.Current, Steps[l.Current-1].Name, clockS(l.CurrentAt), l.Next, Steps[l.Next-1].Name, clockS(l.NextFrom))
		if len(l.NextCapsBpm) > 0 {
			l.Words += fmt.Sprintf(", heart rate up to %.0f bpm", math.Floor(l.NextCapsBpm[0]))
			if len(l.NextCapsBpm) > 1 {
				l.Words += fmt.Sprintf(" (light), then up to %.0f bpm (moderate)", math.Floor(l.NextCapsBpm[1]))
			}
		}
		if l.NextNeedsClearance {
			l.Words += ", and only with a written clearance by a doctor"
		}
		l.Words += "."
	}
	if l.Next > 0 && l.Next != 2 && len(l.EarlyCapsBpm) == 2 {
		l.Words += fmt.Sprintf(" Early steps: heart rate up to %.0f bpm (light), %.0f bpm (moderate), from 220 − age %d.",
			math.Floor(l.EarlyCapsBpm[0]), math.Floor(l.EarlyCapsBpm[1]), l.Age)
	}
	return l
}

func clock(t time.Time) string { return t.Format("2006-01-02 15:04") }

func clockS(s string) string {
	if t, err := time.Parse(time.RFC3339, s); err == nil {
		return clock(t)
	}
	return s
}

func hours(d time.Duration) string {
	return fmt.Sprintf("%.1f h", d.Hours())
}
