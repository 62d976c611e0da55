package series

import (
	"encoding/json"
	"math"
	"sort"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// MaxCamps is how many camps the camp history draws side by side: the
// one of the day and the ones before it, newest first.
const MaxCamps = 4

// DefaultCampDays is a camp's length when its bout names no camp start.
const DefaultCampDays = 56

// Camp is one of a fighter's camps, day by day from its start to its bout
// (or to the day asked, for a camp still running), each day placed by its
// days to the bout so that camps of different lengths and dates line up.
type Camp struct {
	Bout        string   `json:"bout"` // the bout record's id
	Name        string   `json:"name,omitempty"`
	CampStart   string   `json:"camp_start"` // the first day drawn
	BoutDay     string   `json:"bout_day"`
	WeighInDay  string   `json:"weigh_in_day,omitempty"` // the venue's calendar day
	WeightClass string   `json:"weight_class,omitempty"`
	LimitKg     *float64 `json:"limit_kg"` // null: no upper limit
	// Current is the camp of the day asked: the bout the flags of that
	// day are judged against.
	Current bool `json:"current"`
	// Days are the calendar days drawn, DaysOut each one's days to the
	// bout (day − bout day: −55 … 0; a camp still running stops at the
	// day asked, before its bout).
	Days    []string `json:"days"`
	DaysOut []int    `json:"days_out"`
	// MorningKg and PathKg are the morning mass and the planned path, as
	// on the fighter's charts. OverLimitPct and PathOverLimitPct are the
	// same against the camp's own limit, (mass − limit) / limit × 100,
	// the form in which sanctioning bodies state check weights, so camps
	// at different limits share one scale; null without a limit.
	MorningKg    []*float64 `json:"morning_kg"`
	OverLimitPct []*float64 `json:"over_limit_pct"`
	// Path is the planned path over the whole camp, to the bout day even
	// for a camp still running, so the way still to go is drawn.
	Path CampPath `json:"path"`
	// CMJCm is the day's CMJ (mean of the valid attempts), as jump_drop
	// judges it.
	CMJCm []*float64 `json:"cmj_cm"`
	// Weeks are the camp's weeks counted back from the bout, furthest
	// first.
	Weeks []CampWeek `json:"weeks"`
}

// CampPath is a camp's planned path day by day, as on the fighter's
// charts, in kg and against the limit.
type CampPath struct {
	DaysOut      []int      `json:"days_out"`
	Kg           []*float64 `json:"kg"`
	OverLimitPct []*float64 `json:"over_limit_pct"`
}

// CampWeek is one week of a camp counted back from its bout: WeeksOut 0
// is the 7 days ending on the bout day, 1 the 7 days before them, and so
// on.
type CampWeek struct {
	WeeksOut int    `json:"weeks_out"`
	From     string `json:"from"`
	To       string `json:"to"`
	// Days is how many of the week's days fall inside the camp as drawn
	// (fewer than 7 in a week the camp starts in, or in this week of a
	// camp still running): its sums cover those days only.
	Days       int     `json:"days"`
	LoadAU     float64 `json:"load_au"`     // session load, rpe × minutes (Foster et al. 2001)
	Rounds     int     `json:"spar_rounds"` // sparring rounds
	HardRounds int     `json:"hard_rounds"` // at intensity ≥ spar_density's hard intensity
	// MeanCMJCm is the mean of the week's daily CMJ values; null without
	// a test.
	MeanCMJCm *float64 `json:"mean_cmj_cm"`
}

// CampInput gives Camps one camp's bout and the input to compute it from:
// the athlete's records (at least LookbackDays before the camp start on),
// thresholds and bouts, with Bout set to this camp's.
type CampInput struct {
	Bout  devsync.Record
	Input flags.Input
}

// CampRange is the span Camps draws for a bout on the day asked: from the
// camp start (DefaultCampDays before the bout without one) to the bout
// day, or to the day asked if that is earlier. ok is false for a bout
// whose camp starts after the day asked, or that cannot be read.
func CampRange(bout devsync.Record, asked string) (from, to string, ok bool) {
	var b records.Bout
	if bout.Deleted || json.Unmarshal(bout.Body, &b) != nil {
		return "", "", false
	}
	bd, err := day.Parse(b.BoutDay)
	if err != nil {
		return "", "", false
	}
	a, err := day.Parse(asked)
	if err != nil {
		return "", "", false
	}
	start := bd - DefaultCampDays + 1
	if cs, err := day.Parse(b.CampStart); err == nil && cs <= bd {
		start = cs
	}
	end := bd
	if a < end {
		end = a
	}
	if start > end {
		return "", "", false
	}
	// A camp longer than a chart draws keeps its last MaxDays days.
	if int(end-start)+1 > MaxDays {
		start = end - MaxDays + 1
	}
	return start.String(), end.String(), true
}

// Camps lines up a fighter's camps by days to the bout: the camp whose
// bout is current (current: that bout record's id) and the camps before
// it, newest first, at most MaxCamps. A later camp than the current one
// is not shown. Each camp's numbers are Build's for its own span, so they
// are the numbers its charts and flags showed.
func Camps(ins []CampInput, current, asked string) []Camp {
	type cand struct {
		in       CampInput
		b        records.Bout
		from, to string
	}
	var cs []cand
	var curDay string
	for _, ci := range ins {
		var b records.Bout
		if json.Unmarshal(ci.Bout.Body, &b) != nil {
			continue
		}
		if ci.Bout.ID == current {
			curDay = b.BoutDay
		}
		from, to, ok := CampRange(ci.Bout, asked)
		if !ok {
			continue
		}
		cs = append(cs, cand{ci, b, from, to})
	}
	sort.Slice(cs, func(i, j int) bool {
		if cs[i].b.BoutDay != cs[j].b.BoutDay {
			return cs[i].b.BoutDay > cs[j].b.BoutDay
		}
		return cs[i].in.Bout.ID < cs[j].in.Bout.ID
	})
	out := []Camp{}
	for _, c := range cs {
		if curDay != "" && c.b.BoutDay > curDay {
			continue
		}
		if len(out) == MaxCamps {
			break
		}
		out = append(out, campOf(c.in, c.b, c.from, c.to, c.in.Bout.ID == current))
	}
	return out
}

func campOf(ci CampInput, b records.Bout, from, to string, current bool) Camp {
	in := ci.Input
	bout := ci.Bout
	in.Bout = &bout
	s := Build(in, from, to)
	bd := day.MustParse(b.BoutDay)
	c := Camp{Bout: bout.ID, Name: b.Name, CampStart: from, BoutDay: b.BoutDay, WeightClass: b.WeightClass,
		WeighInDay: s.Mass.WeighInDay, LimitKg: s.Mass.LimitKg, Current: current,
		Days: s.Days, DaysOut: make([]int, len(s.Days)), MorningKg: s.Mass.MorningKg,
		OverLimitPct: make([]*float64, len(s.Days)), CMJCm: s.Jump.MeanCm, Weeks: []CampWeek{}}
	limit := 0.0
	if c.LimitKg != nil {
		limit = *c.LimitKg
	}
	for i, d := range s.Days {
		c.DaysOut[i] = int(day.MustParse(d) - bd)
		c.OverLimitPct[i] = OverLimitPct(s.Mass.MorningKg[i], limit)
	}
	// The path on to the bout day: the days after to, from a series of
	// their own (only its path is read).
	days, path := s.Days, s.Mass.PathKg
	if to != b.BoutDay && CheckRange(day.MustParse(to).String(), b.BoutDay) == nil {
		rest := Build(in, (day.MustParse(to) + 1).String(), b.BoutDay)
		days, path = append(append([]string(nil), days...), rest.Days...), append(append([]*float64(nil), path...), rest.Mass.PathKg...)
	}
	c.Path = CampPath{DaysOut: make([]int, len(days)), Kg: path, OverLimitPct: make([]*float64, len(days))}
	for i, d := range days {
		c.Path.DaysOut[i] = int(day.MustParse(d) - bd)
		c.Path.OverLimitPct[i] = OverLimitPct(path[i], limit)
	}
	// Weeks back from the bout: week k holds days −7k−6 … −7k.
	byWeek := map[int]*CampWeek{}
	cmj := map[int][]float64{}
	for i := range s.Days {
		k := -c.DaysOut[i] / 7
		w := byWeek[k]
		if w == nil {
			lo, hi := bd-day.Number(7*k+6), bd-day.Number(7*k)
			w = &CampWeek{WeeksOut: k, From: lo.String(), To: hi.String()}
			byWeek[k] = w
		}
		w.Days++
		if v := s.Load.DailyAU[i]; v != nil {
			w.LoadAU += *v
		}
		w.Rounds += s.Sparring.Rounds[i]
		w.HardRounds += s.Sparring.HardRounds[i]
		if v := s.Jump.MeanCm[i]; v != nil {
			cmj[k] = append(cmj[k], *v)
		}
	}
	for _, w := range byWeek {
		if v := cmj[w.WeeksOut]; len(v) > 0 {
			sum := 0.0
			for _, x := range v {
				sum += x
			}
			w.MeanCMJCm = f64(sum / float64(len(v)))
		}
		w.LoadAU = math.Round(w.LoadAU*10) / 10
		c.Weeks = append(c.Weeks, *w)
	}
	sort.Slice(c.Weeks, func(i, j int) bool { return c.Weeks[i].WeeksOut > c.Weeks[j].WeeksOut })
	return c
}

// OverLimitPct is how far a mass is above a weigh-in limit, as a
// percentage of the limit: (mass − limit) / limit × 100 (negative under
// it); null without a mass or a limit.
func OverLimitPct(massKg *float64, limitKg float64) *float64 {
	if massKg == nil || limitKg <= 0 {
		return nil
	}
	return f64((*massKg - limitKg) / limitKg * 100)
}
