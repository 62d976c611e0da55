package plan

import (
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strings"

	"cornerbook/server/flags/day"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// Done is what was logged in one camp week up to today.
type Done struct {
	LoadAU   float64 `json:"load_au"`  // session load, RPE × minutes (Foster et al. 2001)
	Sessions int     `json:"sessions"` // sessions logged
	// ByEmphasis counts sessions by their focus id ("" for none given).
	ByEmphasis map[string]int `json:"by_emphasis"`
	Rounds     int            `json:"rounds"`      // sparring rounds
	HardRounds int            `json:"hard_rounds"` // at spar_density.hard_intensity or above
	Days       int            `json:"days"`        // days of the week up to today (0 for a week ahead)
}

// ReportWeek is one plan week with its planned and done figures.
type ReportWeek struct {
	Week          int               `json:"week"`
	Start         string            `json:"start"`
	Level         string            `json:"level"`
	Strength      *records.Emphasis `json:"strength"`
	Conditioning  *records.Emphasis `json:"conditioning"`
	SparRounds    *int              `json:"spar_rounds"`
	HardRounds    *int              `json:"hard_rounds"`
	Travel        *records.Travel   `json:"travel"`
	Note          string            `json:"note,omitempty"`
	PlannedLoadAU *float64          `json:"planned_load_au"`
	Done          Done              `json:"done"`
	Current       bool              `json:"current"`
	// Verdict is "hot", "cold" or "" (on plan, or not judged yet); Words
	// says it with the numbers.
	Verdict string `json:"verdict,omitempty"`
	Words   string `json:"words,omitempty"`
}

// BoutSummary names the bout a report is about.
type BoutSummary struct {
	ID          string  `json:"id"`
	Name        string  `json:"name,omitempty"`
	CampStart   string  `json:"camp_start"`
	BoutDay     string  `json:"bout_day"`
	WeighIn     string  `json:"weigh_in"`
	WeighInType string  `json:"weigh_in_type"`
	LimitKg     float64 `json:"limit_kg"`
	StartMassKg float64 `json:"start_mass_kg"`
	ReferenceAU float64 `json:"reference_load_au"`
}

// Report is a bout's plan week by week, planned against done, with the
// checks in words.
type Report struct {
	Bout   BoutSummary  `json:"bout"`
	Today  string       `json:"today"`
	Weeks  []ReportWeek `json:"weeks"`
	Checks []Issue      `json:"checks"`
	Path   any          `json:"path"`
}

// sessionBody and roundBody are what the report reads of those records.
type sessionBody struct {
	Focus   string  `json:"focus"`
	Minutes float64 `json:"minutes"`
	RPE     float64 `json:"rpe"`
	LoadAU  float64 `json:"load_au"`
}

type roundBody struct {
	Activity  string `json:"activity"`
	Intensity int    `json:"intensity"`
}

// BuildReport lays a bout's plan beside what was logged. recs are the
// athlete's session and round records (others are skipped) from at least
// PriorWeeks weeks before camp start to today; today is the camp's day.
// The weeks before camp whose days the log fully covers feed the
// first_week_spike check.
// A week is judged hot or cold on load once it has min_days days behind
// it (off_plan: projected to 7 days, outside ± tolerance_pct), and on
// sparring once it holds more rounds or hard rounds than planned.
func BuildReport(id string, b records.Bout, recs []devsync.Record, today string, th map[string]map[string]float64) Report {
	rep := Report{Bout: BoutSummary{ID: id, Name: b.Name, CampStart: b.CampStart, BoutDay: b.BoutDay, WeighIn: b.WeighIn,
		WeighInType: b.WeighInType, LimitKg: b.LimitKg, StartMassKg: b.StartMassKg, ReferenceAU: b.ReferenceLoadAU}, Today: today, Weeks: []ReportWeek{}}
	start, err1 := day.Parse(b.CampStart)
	now, err2 := day.Parse(today)
	if err1 != nil || err2 != nil {
		rep.Checks = Check(b, th)
		return rep
	}
	hardAt := int(param(th, records.RuleSparDensity, "hard_intensity"))
	// A week before camp counts only when the athlete's log covers all of
	// it: a log that began mid-week would read as a light week.
	firstLogged := now + 1
	for _, r := range recs {
		if d, err := day.Parse(r.Day); err == nil && !r.Deleted && d < firstLogged {
			firstLogged = d
		}
	}
	done := map[int]*Done{}
	prior := map[int]float64{} // weeks before camp: -1, -2, -3
	for _, r := range recs {
		if r.Deleted {
			continue
		}
		d, err := day.Parse(r.Day)
		if err != nil || d > now {
			continue
		}
		k := int(math.Floor(float64(d-start)/7)) + 1
		switch r.Kind {
		case records.KindSession:
			var s sessionBody
			if json.Unmarshal(r.Body, &s) != nil {
				continue
			}
			load := s.LoadAU
			if load <= 0 {
				load = s.RPE * s.Minutes
			}
			if k <= 0 {
				if k > -PriorWeeks {
					prior[k] += load
				}
				continue
			}
			w := weekDone(done, k)
			w.LoadAU += load
			w.Sessions++
			w.ByEmphasis[s.Focus]++
		case records.KindRound:
			var rd roundBody
			if k <= 0 || json.Unmarshal(r.Body, &rd) != nil || rd.Activity != "spar" {
				continue
			}
			w := weekDone(done, k)
			w.Rounds++
			if rd.Intensity >= hardAt {
				w.HardRounds++
			}
		}
	}
	var ctx Context
	for k := -PriorWeeks + 1; k <= 0; k++ {
		if v, ok := prior[k]; ok && firstLogged <= start+day.Number(7*(k-1)) {
			ctx.PriorWeeksAU = append(ctx.PriorWeeksAU, v)
		}
	}
	rep.Checks = CheckWith(b, th, ctx)
	rep.Path = PathFor(b, th)
	tol := param(th, records.RuleOffPlan, "tolerance_pct")
	minDays := int(param(th, records.RuleOffPlan, "min_days"))
	for i, w := range b.Weeks {
		k := i + 1
		first := start + day.Number(7*i)
		rw := ReportWeek{Week: k, Start: first.String(), Level: w.Level, Strength: w.Strength, Conditioning: w.Conditioning,
			SparRounds: w.SparRounds, HardRounds: w.HardRounds, Travel: w.Travel, Note: w.Note}
		if rw.SparRounds == nil {
			rw.SparRounds = w.SparCapRounds // an older plan's flat cap
		}
		if f, ok := Fraction(w.Level, th); ok && b.ReferenceLoadAU > 0 {
			v := math.Round(f * b.ReferenceLoadAU)
			rw.PlannedLoadAU = &v
		}
		if dw := done[k]; dw != nil {
			rw.Done = *dw
		} else {
			rw.Done = Done{ByEmphasis: map[string]int{}}
		}
		switch {
		case now < first:
			rw.Done.Days = 0
		case now > first+6:
			rw.Done.Days = 7
		default:
			rw.Done.Days = int(now-first) + 1
			rw.Current = true
		}
		rw.Verdict, rw.Words = judge(rw, tol, minDays)
		rep.Weeks = append(rep.Weeks, rw)
	}
	return rep
}

func weekDone(m map[int]*Done, k int) *Done {
	if m[k] == nil {
		m[k] = &Done{ByEmphasis: map[string]int{}}
	}
	return m[k]
}

// judge says whether a week ran hot or cold, in words with its numbers.
func judge(w ReportWeek, tolPct float64, minDays int) (string, string) {
	if w.Done.Days == 0 {
		return "", ""
	}
	var hot, cold []string
	if w.PlannedLoadAU != nil && *w.PlannedLoadAU > 0 && w.Done.Days >= minDays {
		projected := w.Done.LoadAU * 7 / float64(w.Done.Days)
		dev := (projected - *w.PlannedLoadAU) / *w.PlannedLoadAU * 100
		what := fmt.Sprintf("load %.0f AU against %.0f AU planned", w.Done.LoadAU, *w.PlannedLoadAU)
		if w.Done.Days < 7 {
			what = fmt.Sprintf("load %.0f AU in %d days, on course for %.0f AU against %.0f AU planned", w.Done.LoadAU, w.Done.Days, projected, *w.PlannedLoadAU)
		}
		switch {
		case dev > tolPct:
			hot = append(hot, fmt.Sprintf("%s (%+.0f %%)", what, dev))
		case dev < -tolPct:
			cold = append(cold, fmt.Sprintf("%s (%+.0f %%)", what, dev))
		}
	}
	if w.SparRounds != nil && w.Done.Rounds > *w.SparRounds {
		hot = append(hot, fmt.Sprintf("%d sparring rounds against %d planned", w.Done.Rounds, *w.SparRounds))
	}
	if w.HardRounds != nil && w.Done.HardRounds > *w.HardRounds {
		hot = append(hot, fmt.Sprintf("%d hard rounds against %d planned", w.Done.HardRounds, *w.HardRounds))
	}
	ran := "Ran"
	if w.Current {
		ran = "Running"
	}
	switch {
	case len(hot) > 0:
		return "hot", fmt.Sprintf("%s hot: %s.", ran, strings.Join(hot, "; "))
	case len(cold) > 0:
		return "cold", fmt.Sprintf("%s cold: %s.", ran, strings.Join(cold, "; "))
	}
	return "", ""
}

// EmphasisText is an emphasis in words: the coach's label, else the words
// of its ids; "" for none.
func EmphasisText(e *records.Emphasis) string {
	if e == nil {
		return ""
	}
	if e.Label != "" {
		return e.Label
	}
	s := make([]string, len(e.IDs))
	for i, id := range e.IDs {
		s[i] = records.EmphasisWords(id)
	}
	return strings.Join(s, " + ")
}

// DoneText is the sessions of a week by emphasis in words, most first.
func DoneText(d Done) string {
	type kv struct {
		k string
		n int
	}
	var xs []kv
	for k, n := range d.ByEmphasis {
		xs = append(xs, kv{k, n})
	}
	sort.Slice(xs, func(i, j int) bool {
		if xs[i].n != xs[j].n {
			return xs[i].n > xs[j].n
		}
		return xs[i].k < xs[j].k
	})
	s := make([]string, 0, len(xs))
	for _, x := range xs {
		name := "no focus"
		if x.k != "" {
			name = strings.ToLower(records.EmphasisWords(x.k))
		}
		s = append(s, fmt.Sprintf("%d %s", x.n, name))
	}
	return strings.Join(s, ", ")
}
