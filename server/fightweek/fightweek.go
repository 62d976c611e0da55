package fightweek

import (
	"fmt"
	"math"
	"sort"
	"time"

	"cornerbook/server/flags/day"
	"cornerbook/server/records"
)

// Weigh-in types (the weigh_in record's `type`).
const (
	TypeCheck    = "check"
	TypeOfficial = "official"
	TypeFightDay = "fight_day"
)

// WeighIn is one weigh-in record as the computation needs it.
type WeighIn struct {
	ID     string
	Type   string
	At     string // RFC 3339 with the venue's offset
	MassKg float64
	Made   *bool // official only: as recorded; derived from the limit when nil
}

// Morning is one day's morning mass (the earliest check-in of the day
// with a mass; PRODUCT.md "Settled readings").
type Morning struct {
	ID     string
	Day    string
	MassKg float64
}

// Input is everything one fighter's fight week is computed from.
type Input struct {
	LimitKg        float64 // 0: no upper limit
	WeighInPlanned string  // the bout's weigh_in, RFC 3339
	BoutAt         string  // the bout's start, RFC 3339 in the venue's offset; may be empty
	BoutDay        string  // YYYY-MM-DD
	Rules          *Rules  // nil: official weigh-in only (bouts from before rule sets)
	Units          string  // "kg" or "lb", for the words
	WeighIns       []WeighIn
	Mornings       []Morning
	// PathKg gives the planned mass for a day, if the caller has a path.
	PathKg func(day string) (float64, bool)
}

// Official is the official weigh-in that stands: the latest one recorded
// (a fighter who misses may be re-weighed inside the window).
type Official struct {
	ID      string  `json:"id"`
	MassKg  float64 `json:"mass_kg"`
	At      string  `json:"at"`
	Made    bool    `json:"made"`
	LimitKg float64 `json:"limit_kg,omitempty"`
}

// Check is a check weight or a fight-day weigh-in against its cap.
type Check struct {
	ID     string   `json:"id"`
	Type   string   `json:"type"`
	At     string   `json:"at"`
	MassKg float64  `json:"mass_kg"`
	CapKg  *float64 `json:"cap_kg"` // null: no rule sets a cap for this weigh-in
	Pass   *bool    `json:"pass"`   // null with no cap
	OverKg float64  `json:"over_kg,omitempty"`
	// DaysBefore is a check weight's calendar days before the official
	// weigh-in's day.
	DaysBefore *int   `json:"days_before,omitempty"`
	Rule       string `json:"rule,omitempty"` // the cap in words
	Reason     string `json:"reason"`         // the result in words with the athlete's units
}

// Day is one day of the fight week, from 7 days before the weigh-in's day
// to the bout's day.
type Day struct {
	Day           string   `json:"day"`
	DaysToWeighIn int      `json:"days_to_weigh_in"` // 0 on the weigh-in's day, negative after
	MorningKg     *float64 `json:"morning_kg,omitempty"`
	MorningID     string   `json:"morning_id,omitempty"`
	PathKg        *float64 `json:"path_kg,omitempty"`
	WeighIns      []string `json:"weigh_ins,omitempty"` // ids, in time order
	IsWeighInDay  bool     `json:"is_weigh_in_day,omitempty"`
	IsBoutDay     bool     `json:"is_bout_day,omitempty"`
}

// Summary is the fight week's numbers. The JSON field names are the
// contract of `cornerbook fightweek --json`.
type Summary struct {
	Official           *Official `json:"official"`
	WeighInDay         string    `json:"weigh_in_day,omitempty"` // the official's day, else the planned one
	Mass7dBeforeKg     *float64  `json:"mass_7d_before_kg"`
	Mass7dBeforeDay    string    `json:"mass_7d_before_day,omitempty"`
	Mass7dBeforeID     string    `json:"mass_7d_before_id,omitempty"`
	AcuteLossPct       *float64  `json:"acute_loss_pct"`
	FightDayKg         *float64  `json:"fight_day_kg,omitempty"`
	FightDayID         string    `json:"fight_day_id,omitempty"`
	RegainPct          *float64  `json:"regain_pct"`
	HoursWeighInToBout *float64  `json:"hours_weigh_in_to_bout"`
	// HoursPlanned is true when the hours count from the planned weigh-in
	// because no official weigh-in is recorded yet.
	HoursPlanned bool    `json:"hours_planned,omitempty"`
	Checks       []Check `json:"checks"`
	Days         []Day   `json:"days,omitempty"`
}

// AcuteLossPct is the loss from the morning mass 7 days out to the official
// weigh-in mass, as a percentage of the first (REFERENCES §14.1 [D]).
func AcuteLossPct(mass7dKg, officialKg float64) float64 {
	return (mass7dKg - officialKg) / mass7dKg * 100
}

// RegainPct is the gain from the official weigh-in mass to the mass at the
// bout, as a percentage of the official mass (REFERENCES §14.1 [D]).
func RegainPct(officialKg, boutKg float64) float64 {
	return (boutKg - officialKg) / officialKg * 100
}

// HoursBetween is the time from one RFC 3339 instant to another in hours;
// each carries its own offset, so a weigh-in and a bout in different
// offsets (a change to summer time between them) count true hours.
func HoursBetween(from, to string) (float64, error) {
	a, err := time.Parse(time.RFC3339, from)
	if err != nil {
		return 0, fmt.Errorf("%q is not an RFC 3339 time", from)
	}
	b, err := time.Parse(time.RFC3339, to)
	if err != nil {
		return 0, fmt.Errorf("%q is not an RFC 3339 time", to)
	}
	return b.Sub(a).Hours(), nil
}

// CheckCapKg is a check weight's cap: the limit plus a percentage of it.
func CheckCapKg(limitKg, overLimitPct float64) float64 { return limitKg * (1 + overLimitPct/100) }

// FightDayCapKg is the fight-day cap: the limit plus so many pounds, or the
// official mass plus a percentage; false when the cap needs a limit or an
// official mass that is missing.
func FightDayCapKg(c FightDayCap, limitKg float64, official *float64) (float64, bool) {
	switch {
	case c.OverLimitLb != nil:
		if limitKg <= 0 {
			return 0, false
		}
		return limitKg + records.LbToKg(*c.OverLimitLb), true
	case c.OverOfficialPct != nil:
		if official == nil {
			return 0, false
		}
		return *official * (1 + *c.OverOfficialPct/100), true
	}
	return 0, false
}

// eps absorbs floating-point noise when a mass equals its cap: a scale
// reads to 0.1 kg or 0.1 lb, far above 1 µg.
const eps = 1e-9

// Made reports whether a mass makes a limit (0 = no limit).
func Made(massKg, limitKg float64) bool { return limitKg <= 0 || massKg <= limitKg+eps }

// DayOf is the calendar day of an RFC 3339 instant at its own offset (the
// venue's day).
func DayOf(at string) (string, bool) {
	t, err := time.Parse(time.RFC3339, at)
	if err != nil {
		return "", false
	}
	return t.Format("2006-01-02"), true
}

// MatchWindowDays is how far a check weigh-in may be from a rule's day and
// still be judged against that rule's cap (common practice, no source:
// bodies schedule a check weight on a day but a camp abroad may reach a
// scale a day or two off it).
const MatchWindowDays = 3

// Compute works out the fight week's numbers.
func Compute(in Input) Summary {
	s := Summary{Checks: []Check{}}
	ws := append([]WeighIn(nil), in.WeighIns...)
	sort.SliceStable(ws, func(i, j int) bool { return instantBefore(ws[i].At, ws[j].At) })

	var offMass *float64
	for i := range ws {
		if ws[i].Type == TypeOfficial {
			w := ws[i]
			made := Made(w.MassKg, in.LimitKg)
			if w.Made != nil {
				made = *w.Made
			}
			s.Official = &Official{ID: w.ID, MassKg: w.MassKg, At: w.At, Made: made, LimitKg: in.LimitKg}
		}
	}
	if s.Official != nil {
		m := s.Official.MassKg
		offMass = &m
		s.WeighInDay, _ = DayOf(s.Official.At)
	} else if d, ok := DayOf(in.WeighInPlanned); ok {
		s.WeighInDay = d
	}

	// The morning mass 7 days before the weigh-in's day: that day's, else
	// the nearest earlier within 2 days.
	if wd, err := day.Parse(s.WeighInDay); err == nil {
		byDay := map[day.Number]Morning{}
		for _, m := range in.Mornings {
			if d, err := day.Parse(m.Day); err == nil {
				if _, dup := byDay[d]; !dup {
					byDay[d] = m
				}
			}
		}
		for back := 0; back <= 2; back++ {
			if m, ok := byDay[wd-7-day.Number(back)]; ok {
				v := m.MassKg
				s.Mass7dBeforeKg, s.Mass7dBeforeDay, s.Mass7dBeforeID = &v, m.Day, m.ID
				break
			}
		}
		if s.Mass7dBeforeKg != nil && offMass != nil {
			v := AcuteLossPct(*s.Mass7dBeforeKg, *offMass)
			s.AcuteLossPct = &v
		}
		s.Days = days(in, wd, byDay, ws)
	}

	// Regain to the latest fight-day weigh-in (before the bout, if its time is known).
	for i := len(ws) - 1; i >= 0; i-- {
		w := ws[i]
		if w.Type != TypeFightDay || (in.BoutAt != "" && instantBefore(in.BoutAt, w.At)) {
			continue
		}
		if s.Official != nil && !instantBefore(s.Official.At, w.At) {
			continue
		}
		v := w.MassKg
		s.FightDayKg, s.FightDayID = &v, w.ID
		if offMass != nil {
			r := RegainPct(*offMass, v)
			s.RegainPct = &r
		}
		break
	}

	if in.BoutAt != "" {
		from := in.WeighInPlanned
		if s.Official != nil {
			from = s.Official.At
		} else {
			s.HoursPlanned = true
		}
		if h, err := HoursBetween(from, in.BoutAt); err == nil {
			s.HoursWeighInToBout = &h
		} else {
			s.HoursPlanned = false
		}
	}

	for _, w := range ws {
		switch w.Type {
		case TypeCheck:
			s.Checks = append(s.Checks, checkWeight(in, s.WeighInDay, w))
		case TypeFightDay:
			s.Checks = append(s.Checks, fightDay(in, offMass, w))
		}
	}
	return s
}

func checkWeight(in Input, weighInDay string, w WeighIn) Check {
	c := Check{ID: w.ID, Type: w.Type, At: w.At, MassKg: w.MassKg}
	wd, err1 := day.Parse(weighInDay)
	cdS, _ := DayOf(w.At)
	cd, err2 := day.Parse(cdS)
	if err1 != nil || err2 != nil {
		c.Reason = fmt.Sprintf("Check weight %s; no weigh-in day to compare with.", Mass(w.MassKg, in.Units))
		return c
	}
	out := int(wd - cd)
	c.DaysBefore = &out
	var rule *CheckWeight
	if in.Rules != nil {
		best := MatchWindowDays + 1
		for i := range in.Rules.CheckWeights {
			r := &in.Rules.CheckWeights[i]
			if dist := absInt(r.DaysBefore - out); dist < best {
				best, rule = dist, r
			}
		}
	}
	if rule == nil || in.LimitKg <= 0 {
		c.Reason = fmt.Sprintf("Check weight %s, %d days before the weigh-in; the bout's rules set no cap for it.", Mass(w.MassKg, in.Units), out)
		return c
	}
	capKg := CheckCapKg(in.LimitKg, rule.OverLimitPct)
	c.Rule = fmt.Sprintf("%d-day check weight: at most %s %% over the %s limit, %s", rule.DaysBefore, num(rule.OverLimitPct), Mass(in.LimitKg, in.Units), Mass(capKg, in.Units))
	judge(&c, capKg, in.Units, fmt.Sprintf("Check weight %d days before the weigh-in", out))
	return c
}

func fightDay(in Input, official *float64, w WeighIn) Check {
	c := Check{ID: w.ID, Type: w.Type, At: w.At, MassKg: w.MassKg}
	if in.Rules == nil || in.Rules.FightDay == nil {
		c.Reason = fmt.Sprintf("Fight-day weigh-in %s; the bout's rules set no cap for it.", Mass(w.MassKg, in.Units))
		return c
	}
	f := *in.Rules.FightDay
	capKg, ok := FightDayCapKg(f, in.LimitKg, official)
	if !ok {
		c.Reason = fmt.Sprintf("Fight-day weigh-in %s; its cap needs the official weigh-in, not recorded yet.", Mass(w.MassKg, in.Units))
		if f.OverLimitLb != nil {
			c.Reason = fmt.Sprintf("Fight-day weigh-in %s; the bout has no limit to add %s lb to.", Mass(w.MassKg, in.Units), num(*f.OverLimitLb))
		}
		return c
	}
	if f.OverLimitLb != nil {
		c.Rule = fmt.Sprintf("Fight-day cap: %s lb over the %s limit, %s", num(*f.OverLimitLb), Mass(in.LimitKg, in.Units), Mass(capKg, in.Units))
	} else {
		c.Rule = fmt.Sprintf("Fight-day cap: %s %% over the official %s, %s", num(*f.OverOfficialPct), Mass(*official, in.Units), Mass(capKg, in.Units))
	}
	judge(&c, capKg, in.Units, "Fight-day weigh-in")
	return c
}

func judge(c *Check, capKg float64, units, what string) {
	c.CapKg = &capKg
	pass := c.MassKg <= capKg+eps
	c.Pass = &pass
	if pass {
		c.Reason = fmt.Sprintf("%s: %s, within the cap of %s.", what, Mass(c.MassKg, units), Mass(capKg, units))
		return
	}
	c.OverKg = c.MassKg - capKg
	c.Reason = fmt.Sprintf("%s: %s, %s over the cap of %s.", what, Mass(c.MassKg, units), Over(c.OverKg, units), Mass(capKg, units))
}

func days(in Input, wd day.Number, byDay map[day.Number]Morning, ws []WeighIn) []Day {
	end := wd
	if bd, err := day.Parse(in.BoutDay); err == nil && bd >= wd && bd-wd <= 14 {
		end = bd
	}
	var out []Day
	for d := wd - 7; d <= end; d++ {
		x := Day{Day: d.String(), DaysToWeighIn: int(wd - d), IsWeighInDay: d == wd, IsBoutDay: d.String() == in.BoutDay}
		if m, ok := byDay[d]; ok {
			v := m.MassKg
			x.MorningKg, x.MorningID = &v, m.ID
		}
		if in.PathKg != nil && d <= wd {
			if p, ok := in.PathKg(x.Day); ok {
				x.PathKg = &p
			}
		}
		for _, w := range ws {
			if wdS, ok := DayOf(w.At); ok && wdS == x.Day {
				x.WeighIns = append(x.WeighIns, w.ID)
			}
		}
		out = append(out, x)
	}
	return out
}

// Mass prints a mass in the athlete's units to 0.1.
func Mass(kg float64, units string) string {
	if units == "lb" {
		return fmt.Sprintf("%.1f lb", records.KgToLb(kg))
	}
	return fmt.Sprintf("%.1f kg", kg)
}

// Over prints how far over a cap a mass is, in the athlete's units: to
// 0.1, or "less than 0.1" when it rounds to nothing (over is still over).
func Over(kg float64, units string) string {
	v, u := kg, "kg"
	if units == "lb" {
		v, u = records.KgToLb(kg), "lb"
	}
	if math.Round(v*10) == 0 {
		return "less than 0.1 " + u
	}
	return fmt.Sprintf("%.1f %s", v, u)
}

func instantBefore(a, b string) bool {
	ta, err1 := time.Parse(time.RFC3339, a)
	tb, err2 := time.Parse(time.RFC3339, b)
	if err1 != nil || err2 != nil {
		return a < b
	}
	return ta.Before(tb)
}

func absInt(v int) int {
	if v < 0 {
		return -v
	}
	return v
}

// BoutTimes is what the weigh-in checks need of one of the fighter's bouts.
type BoutTimes struct {
	ID      string
	BoutDay string // YYYY-MM-DD
	BoutAt  string // RFC 3339; may be empty
}

// CheckWeighIn judges a new or corrected weigh-in against the fighter's
// other weigh-ins (its own earlier version among them is replaced) and
// bouts, and names the field at fault:
//   - a check weight after the bout it leads to, or at or after an
//     official weigh-in already recorded;
//   - a fight-day weigh-in before an official weigh-in already recorded,
//     or after the bout has started;
//   - an official weigh-in after a fight-day weigh-in or before a check
//     weight already recorded (the same rules seen from the other record).
//
// A weigh-in belongs to the first bout on or after its day; a check
// weight up to 7 days after a bout, with no later bout recorded, is "after
// the bout" (common practice, no source: a check weight is only ever
// taken for a bout ahead).
func CheckWeighIn(w WeighIn, others []WeighIn, bouts []BoutTimes) *Problem {
	t, err := time.Parse(time.RFC3339, w.At)
	if err != nil {
		return &Problem{"at", "the weigh-in's time must be a date and time with the venue's offset"}
	}
	wd, _ := DayOf(w.At)
	wdN, _ := day.Parse(wd)
	var next, prev *BoutTimes
	for i := range bouts {
		b := &bouts[i]
		bd, err := day.Parse(b.BoutDay)
		if err != nil {
			continue
		}
		if bd >= wdN && (next == nil || b.BoutDay < next.BoutDay) {
			next = b
		}
		if bd < wdN && (prev == nil || b.BoutDay > prev.BoutDay) {
			prev = b
		}
	}
	var bt *BoutTimes
	if next != nil && next.BoutAt != "" {
		if ba, err := time.Parse(time.RFC3339, next.BoutAt); err == nil && t.After(ba) {
			bt = next
		}
	}
	if bt == nil && next == nil && prev != nil {
		if pd, err := day.Parse(prev.BoutDay); err == nil && wdN-pd <= 7 {
			bt = prev
		}
	}
	switch w.Type {
	case TypeCheck:
		if bt != nil {
			return &Problem{"at", fmt.Sprintf("a check weight at %s is after the bout on %s; check weights come before the official weigh-in", clock(t), boutWhen(bt))}
		}
	case TypeFightDay:
		if bt != nil && bt == next {
			return &Problem{"at", fmt.Sprintf("a fight-day weigh-in at %s is after the bout started (%s)", clock(t), boutWhen(bt))}
		}
	}
	for _, o := range others {
		if o.ID == w.ID {
			continue
		}
		ot, err := time.Parse(time.RFC3339, o.At)
		if err != nil {
			continue
		}
		// Only weigh-ins for the same bout are compared: within 60 days.
		if d := t.Sub(ot); d > 60*24*time.Hour || d < -60*24*time.Hour {
			continue
		}
		switch {
		case w.Type == TypeFightDay && o.Type == TypeOfficial && !t.After(ot) && sameBout(wd, o.At, bouts):
			return &Problem{"at", fmt.Sprintf("a fight-day weigh-in at %s is before the official weigh-in recorded at %s", clock(t), clock(ot))}
		case w.Type == TypeOfficial && o.Type == TypeFightDay && !ot.After(t) && sameBout(wd, o.At, bouts):
			return &Problem{"at", fmt.Sprintf("an official weigh-in at %s is after the fight-day weigh-in recorded at %s", clock(t), clock(ot))}
		case w.Type == TypeCheck && o.Type == TypeOfficial && !t.Before(ot) && sameBout(wd, o.At, bouts):
			return &Problem{"at", fmt.Sprintf("a check weight at %s is after the official weigh-in recorded at %s", clock(t), clock(ot))}
		case w.Type == TypeOfficial && o.Type == TypeCheck && !ot.Before(t) && sameBout(wd, o.At, bouts):
			return &Problem{"at", fmt.Sprintf("an official weigh-in at %s is before the check weight recorded at %s", clock(t), clock(ot))}
		}
	}
	return nil
}

// sameBout: two weigh-ins lead to the same bout (the first bout on or
// after each one's day), or no bout is recorded after either.
func sameBout(dayA, atB string, bouts []BoutTimes) bool {
	dayB, _ := DayOf(atB)
	return nextBout(dayA, bouts) == nextBout(dayB, bouts)
}

func nextBout(d string, bouts []BoutTimes) string {
	best := ""
	for _, b := range bouts {
		if b.BoutDay >= d && (best == "" || b.BoutDay < best) {
			best = b.BoutDay
		}
	}
	return best
}

func boutWhen(b *BoutTimes) string {
	if t, err := time.Parse(time.RFC3339, b.BoutAt); err == nil {
		return clock(t)
	}
	return b.BoutDay
}

func clock(t time.Time) string { return t.Format("2006-01-02 15:04") }
