package series

import (
	"encoding/json"
	"math"
	"slices"
	"sort"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	"cornerbook/server/flags/stats"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// MaxCamps is how many camps the camp history draws side by side: the
// one of the day and the ones before it, newest first.
const MaxCamps = 4

// Camp is one of a fighter's camps, day by day from its start to its bout
// (or to the day asked, for a camp still running), each day placed by its
// days to the bout so that camps of different lengths and dates line up.
type Camp struct {
	Bout        string   `json:"bout"` // the bout record's id
	Name        string   `json:"name,omitempty"`
	CampStart   string   `json:"camp_start"`
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
	// MorningKg is the morning mass, as on the fighter's charts, and
	// OverLimitPct the same against the camp's own limit, (mass − limit) /
	// limit × 100, the form in which sanctioning bodies state check
	// weights, so camps at different limits share one scale; null without
	// a limit.
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

// CampSpan is one camp the history draws: its bout and the days drawn.
type CampSpan struct {
	Bout     devsync.Record
	From, To string
	Current  bool
	body     records.Bout
}

// campRange is the span drawn for a bout on the day asked: from the camp
// start to the bout day, or to the day asked if that is earlier (a stored
// bout's camp is at most records.MaxCampDays long, within a chart's
// MaxDays). ok is false for a camp that starts after the day asked.
func campRange(b records.Bout, asked string) (from, to string, ok bool) {
	start, err1 := day.Parse(b.CampStart)
	bd, err2 := day.Parse(b.BoutDay)
	a, err3 := day.Parse(asked)
	if err1 != nil || err2 != nil || err3 != nil {
		return "", "", false
	}
	end := min(bd, a)
	if start > end {
		return "", "", false
	}
	return start.String(), end.String(), true
}

// CampSpans picks the camps the history draws on the day asked: the camp
// whose bout is current (current: that bout record's id) and the camps
// before it, newest first, at most MaxCamps. A later camp than the
// current one, and a camp not started by the day asked, are left out.
func CampSpans(bouts []devsync.Record, current, asked string) []CampSpan {
	var out []CampSpan
	curDay := ""
	for _, r := range bouts {
		var b records.Bout
		if r.Deleted || json.Unmarshal(r.Body, &b) != nil {
			continue
		}
		if r.ID == current {
			curDay = b.BoutDay
		}
		if from, to, ok := campRange(b, asked); ok {
			out = append(out, CampSpan{Bout: r, From: from, To: to, Current: r.ID == current, body: b})
		}
	}
	out = slices.DeleteFunc(out, func(c CampSpan) bool { return curDay != "" && c.body.BoutDay > curDay })
	sort.Slice(out, func(i, j int) bool {
		if out[i].body.BoutDay != out[j].body.BoutDay {
			return out[i].body.BoutDay > out[j].body.BoutDay
		}
		return out[i].Bout.ID < out[j].Bout.ID
	})
	return out[:min(len(out), MaxCamps)]
}

// Camp computes the camp from in: the athlete's records from LookbackDays
// before From on, thresholds and bouts (in.Bout is set to the camp's).
// Its numbers are Build's for its own span, so they are the numbers its
// charts and flags showed.
func (cs CampSpan) Camp(in flags.Input) Camp {
	b := cs.body
	bout := cs.Bout
	in.Bout = &bout
	s := Build(in, cs.From, cs.To)
	bd := day.MustParse(b.BoutDay)
	from := day.MustParse(cs.From)
	c := Camp{Bout: bout.ID, Name: b.Name, CampStart: cs.From, BoutDay: b.BoutDay, WeightClass: b.WeightClass,
		WeighInDay: s.Mass.WeighInDay, LimitKg: s.Mass.LimitKg, Current: cs.Current,
		Days: s.Days, DaysOut: make([]int, len(s.Days)), MorningKg: s.Mass.MorningKg,
		OverLimitPct: make([]*float64, len(s.Days)), CMJCm: s.Jump.MeanCm, Weeks: []CampWeek{}}
	limit := 0.0
	if c.LimitKg != nil {
		limit = *c.LimitKg
	}
	// The planned path over the whole camp, on to the bout day.
	c.Path = CampPath{Kg: PathOnly(in, from, bd)}
	c.Path.DaysOut, c.Path.OverLimitPct = make([]int, len(c.Path.Kg)), make([]*float64, len(c.Path.Kg))
	for i, kg := range c.Path.Kg {
		c.Path.DaysOut[i] = int(from-bd) + i
		c.Path.OverLimitPct[i] = OverLimitPct(kg, limit)
	}
	// Days in order, and weeks back from the bout (week k holds days
	// −7k−6 … −7k), furthest first: a new week begins where k changes.
	var cmj []float64
	closeWeek := func() {
		if n := len(c.Weeks); n > 0 {
			w := &c.Weeks[n-1]
			w.LoadAU = math.Round(w.LoadAU*10) / 10
			if len(cmj) > 0 {
				w.MeanCMJCm = f64(stats.Mean(cmj))
			}
		}
		cmj = cmj[:0]
	}
	for i := range s.Days {
		out := int(from-bd) + i
		c.DaysOut[i] = out
		c.OverLimitPct[i] = OverLimitPct(s.Mass.MorningKg[i], limit)
		if k := -out / 7; len(c.Weeks) == 0 || c.Weeks[len(c.Weeks)-1].WeeksOut != k {
			closeWeek()
			c.Weeks = append(c.Weeks, CampWeek{WeeksOut: k, From: (bd - day.Number(7*k+6)).String(), To: (bd - day.Number(7*k)).String()})
		}
		w := &c.Weeks[len(c.Weeks)-1]
		w.Days++
		if v := s.Load.DailyAU[i]; v != nil {
			w.LoadAU += *v
		}
		w.Rounds += s.Sparring.Rounds[i]
		w.HardRounds += s.Sparring.HardRounds[i]
		if v := s.Jump.MeanCm[i]; v != nil {
			cmj = append(cmj, *v)
		}
	}
	closeWeek()
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
