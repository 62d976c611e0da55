package server

import (
	"encoding/json"
	"fmt"
	"net/http"
	"sort"
	"strconv"
	"time"

	"github.com/gorilla/mux"

	"cornerbook/server/fightweek"
	"cornerbook/server/flags/day"
	"cornerbook/server/medical"
	"cornerbook/server/records"
	"cornerbook/server/series"
	devsync "cornerbook/sync"
)

func (s *Server) routeFightWeek(api *mux.Router) {
	api.HandleFunc("/athletes/{id}/fightweek", s.serve(s.handleFightWeek)).Methods(http.MethodGet)
	api.HandleFunc("/athletes/{id}/medical", s.serve(s.handleMedical)).Methods(http.MethodGet)
	api.HandleFunc("/fightweek/presets", s.serve(s.handlePresets)).Methods(http.MethodGet)
}

// FightWeekView is one fighter's fight week as the screens and the command
// line read it: the computed numbers (fightweek.Summary, whose JSON fields
// are the command line's contract) and the words around them.
type FightWeekView struct {
	fightweek.Summary
	Athlete        string   `json:"athlete"`
	Name           string   `json:"name"`
	Units          string   `json:"units"`
	Bout           string   `json:"bout,omitempty"` // the bout record's id; "" when the fighter has none
	BoutName       string   `json:"bout_name,omitempty"`
	BoutDay        string   `json:"bout_day,omitempty"`
	BoutAt         string   `json:"bout_at,omitempty"`
	WeighInPlanned string   `json:"weigh_in_planned,omitempty"`
	WeighInType    string   `json:"weigh_in_type,omitempty"`
	LimitKg        float64  `json:"limit_kg,omitempty"`
	Today          string   `json:"today"`
	RulesWords     string   `json:"rules_words,omitempty"` // the bout's weigh-in rules in words
	Preset         *Preset  `json:"preset,omitempty"`      // where the rules came from
	Cautions       []string `json:"cautions"`
	// HoursToBout counts down from the hub's clock to bout_at (negative after).
	HoursToBout *float64 `json:"hours_to_bout,omitempty"`
	// Words are the fight week's numbers in a coach's sentences.
	Words []string `json:"words"`
}

// Preset is a weigh-in preset's provenance as a screen shows it.
type Preset struct {
	ID      string `json:"id"`
	Name    string `json:"name"`
	Source  string `json:"source"`
	Sure    string `json:"sure"` // in words
	Caution string `json:"caution"`
}

// FightWeek computes an athlete's fight week for the bout the flags read
// on today (the nearest bout on or after it, else the latest before it).
// An empty today is today in the camp's time zone.
func (s *Server) FightWeek(athlete, today string) (FightWeekView, error) {
	if today == "" {
		today = s.flags.Today()
	}
	in, err := s.flags.input(athlete, today)
	if err != nil {
		return FightWeekView{}, err
	}
	v := FightWeekView{Athlete: athlete, Today: today, Cautions: fightweek.Cautions, Words: []string{}}
	v.Summary.Checks = []fightweek.Check{}
	var ab records.Athlete
	_ = json.Unmarshal(in.Athlete.Body, &ab)
	v.Name, v.Units = ab.Name, "kg"
	if ab.Units == "lb" {
		v.Units = "lb"
	}
	if in.Bout == nil {
		v.Words = append(v.Words, "No bout is planned for this fighter.")
		return v, nil
	}
	var b records.Bout
	if err := json.Unmarshal(in.Bout.Body, &b); err != nil {
		return v, fmt.Errorf("the bout record %s is unreadable: %w", in.Bout.ID, err)
	}
	v.Bout, v.BoutName, v.BoutDay, v.BoutAt, v.WeighInPlanned, v.WeighInType, v.LimitKg =
		in.Bout.ID, b.Name, b.BoutDay, b.BoutAt, b.WeighIn, b.WeighInType, b.LimitKg
	if b.Rules != nil {
		v.RulesWords = fightweek.RulesWords(*b.Rules)
		if p, ok := fightweek.PresetByID(b.Rules.Preset); ok {
			v.Preset = &Preset{ID: p.ID, Name: p.Name, Source: p.Source, Sure: fightweek.SureWords(p.Sure), Caution: p.Caution}
		}
	}
	boutDay, err := day.Parse(b.BoutDay)
	if err != nil {
		return v, nil
	}
	// Weigh-ins of this bout: from 60 days before its day to its day.
	var ws []fightweek.WeighIn
	from, to := (boutDay - 60).String(), b.BoutDay
	err = s.store.Range(athlete, records.KindWeighIn, from, to, func(r devsync.Record) error {
		var w records.WeighIn
		if json.Unmarshal(r.Body, &w) == nil {
			ws = append(ws, fightweek.WeighIn{ID: r.ID, Type: w.Type, At: r.At, MassKg: w.MassKg, Made: w.Made})
		}
		return nil
	})
	if err != nil {
		return v, err
	}
	// Morning masses and the planned path from the chart code, over the
	// fight week's days (the week before the weigh-in's day and two more
	// for the nearest-earlier rule).
	wd := boutDay
	if d, ok := fightweek.DayOf(b.WeighIn); ok {
		if n, err := day.Parse(d); err == nil {
			wd = n
		}
	}
	for _, w := range ws {
		if w.Type == fightweek.TypeOfficial {
			if d, ok := fightweek.DayOf(w.At); ok {
				if n, err := day.Parse(d); err == nil {
					wd = n
				}
			}
		}
	}
	sFrom, sTo := (wd - 9).String(), b.BoutDay
	if boutDay < wd {
		sTo = wd.String()
	}
	if in.Day < sTo {
		// The history must reach the fight week's last day.
		if in, err = s.flags.seriesInput(athlete, sFrom, sTo); err != nil {
			return v, err
		}
	}
	ser := series.Build(in, sFrom, sTo)
	var mornings []fightweek.Morning
	path := map[string]float64{}
	for i, d := range ser.Days {
		if m := ser.Mass.MorningKg[i]; m != nil {
			mornings = append(mornings, fightweek.Morning{Day: d, MassKg: *m})
		}
		if p := ser.Mass.PathKg[i]; p != nil {
			path[d] = *p
		}
	}
	v.Summary = fightweek.Compute(fightweek.Input{LimitKg: b.LimitKg, WeighInPlanned: b.WeighIn, BoutAt: b.BoutAt, BoutDay: b.BoutDay,
		Rules: b.Rules, Units: v.Units, WeighIns: ws, Mornings: mornings,
		PathKg: func(d string) (float64, bool) { p, ok := path[d]; return p, ok }})
	if t, err := time.Parse(time.RFC3339, b.BoutAt); err == nil {
		h := t.Sub(s.now()).Hours()
		v.HoursToBout = &h
	}
	v.Words = fightWeekWords(&v)
	return v, nil
}

// fightWeekWords states the numbers in sentences with the athlete's units.
func fightWeekWords(v *FightWeekView) []string {
	out := []string{}
	m := func(kg float64) string { return fightweek.Mass(kg, v.Units) }
	if o := v.Official; o != nil {
		made := "made the limit"
		if !o.Made {
			made = "did not make the limit"
		}
		line := fmt.Sprintf("Official weigh-in %s at %s: %s", m(o.MassKg), clockWords(o.At), made)
		if v.LimitKg > 0 {
			line += " of " + m(v.LimitKg)
		}
		out = append(out, line+".")
	}
	if v.Mass7dBeforeKg != nil {
		line := fmt.Sprintf("Morning mass 7 days before the weigh-in (%s): %s", day.Words(v.Mass7dBeforeDay), m(*v.Mass7dBeforeKg))
		if v.AcuteLossPct != nil {
			line += fmt.Sprintf("; %.1f %% lost to the official weigh-in", *v.AcuteLossPct)
		}
		out = append(out, line+".")
	}
	if v.RegainPct != nil && v.FightDayKg != nil {
		out = append(out, fmt.Sprintf("Regained %.1f %% of the official mass by the fight-day weigh-in (%s).", *v.RegainPct, m(*v.FightDayKg)))
	}
	if v.HoursWeighInToBout != nil {
		from := "the official weigh-in"
		if v.HoursPlanned {
			from = "the planned weigh-in"
		}
		out = append(out, fmt.Sprintf("%s h from %s to the bout.", strconv.FormatFloat(*v.HoursWeighInToBout, 'f', 1, 64), from))
	}
	return out
}

func clockWords(at string) string {
	if t, err := time.Parse(time.RFC3339, at); err == nil {
		return t.Format("Mon 2 Jan 15:04")
	}
	return at
}

func (s *Server) handleFightWeek(w http.ResponseWriter, r *http.Request) error {
	id, today, err := s.fighterRead(r, "fight week")
	if err != nil {
		return err
	}
	v, err := s.FightWeek(id, today)
	if err != nil {
		return err
	}
	writeJSON(w, http.StatusOK, v)
	return nil
}

func (s *Server) handlePresets(w http.ResponseWriter, r *http.Request) error {
	if _, err := s.authorize(r, accessRead); err != nil {
		return err
	}
	type set struct {
		ID      string `json:"id"`
		Name    string `json:"name"`
		Source  string `json:"source"`
		Sure    string `json:"sure"`
		Caution string `json:"caution"`
	}
	var sets []set
	for _, st := range medical.Sets {
		sets = append(sets, set{st.ID, st.Name, st.Source, fightweek.SureWords(st.Sure), st.Caution})
	}
	type preset struct {
		fightweek.Preset
		SureWords string `json:"sure_words"`
	}
	var ps []preset
	for _, p := range fightweek.Presets {
		ps = append(ps, preset{p, fightweek.SureWords(p.Sure)})
	}
	writeJSON(w, http.StatusOK, map[string]any{"weigh_in": ps, "stand_down": sets})
	return nil
}

// MedicalView is a fighter's stand-downs and return-to-sport ladders.
type MedicalView struct {
	Athlete    string          `json:"athlete"`
	Today      string          `json:"today"`
	StandDowns []StandDownView `json:"stand_downs"`
	Caution    string          `json:"caution"`
}

// StandDownView is one head incident's stand-down with its ladder.
type StandDownView struct {
	Incident    string           `json:"incident"`
	Type        string           `json:"type"`
	Day         string           `json:"day"`
	At          string           `json:"at"`
	SeenBy      string           `json:"seen_by,omitempty"`
	EarliestEnd string           `json:"earliest_end,omitempty"`
	Rule        string           `json:"rule"`
	Ends        []medical.SetEnd `json:"ends"`
	Cleared     bool             `json:"cleared"`
	ClearedBy   string           `json:"cleared_by,omitempty"`
	InForce     bool             `json:"in_force"`
	Ladder      medical.Ladder   `json:"ladder"`
	Steps       []StepView       `json:"steps"`
	StepNames   []medical.Step   `json:"step_names"`
	RTSCaution  string           `json:"rts_caution"`
}

// StepView is one logged return-to-sport step.
type StepView struct {
	ID           string `json:"id"`
	Step         int    `json:"step"`
	Name         string `json:"name"`
	At           string `json:"at"`
	Symptoms     string `json:"symptoms,omitempty"`
	SupervisedBy string `json:"supervised_by"`
}

// Medical lists an athlete's head-incident stand-downs (all of them, the
// ones in force first) with the rule sets of the athlete's bouts, and each
// one's return-to-sport steps.
func (s *Server) Medical(athlete, today string) (MedicalView, error) {
	v := MedicalView{Athlete: athlete, Today: today, StandDowns: []StandDownView{}, Caution: medical.CautionClearance}
	ath, err := s.store.Get(athlete)
	if err != nil || ath.Kind != records.KindAthlete || ath.Deleted {
		return v, userError(CodeNotFound, "athlete", fmt.Sprintf("no athlete with id %q", athlete))
	}
	var ab records.Athlete
	_ = json.Unmarshal(ath.Body, &ab)
	var sets []string
	err = s.store.Range(athlete, records.KindBout, "", "", func(r devsync.Record) error {
		var b records.Bout
		if json.Unmarshal(r.Body, &b) == nil {
			sets = append(sets, b.StandDownSets...)
		}
		return nil
	})
	if err != nil {
		return v, err
	}
	var incs []medical.Incident
	type incMeta struct {
		at, seenBy string
	}
	meta := map[string]incMeta{}
	err = s.store.Range(athlete, records.KindIncident, "", "", func(r devsync.Record) error {
		var b records.Incident
		if json.Unmarshal(r.Body, &b) == nil {
			incs = append(incs, medical.Incident{ID: r.ID, Type: b.Type, Day: r.Day, LOC: b.LOC != nil && *b.LOC, ClinicianDay: b.ClinicianDay})
			meta[r.ID] = incMeta{r.At, b.SeenBy}
		}
		return nil
	})
	if err != nil {
		return v, err
	}
	cleared := map[string]string{}
	err = s.store.Range(athlete, records.KindClearance, "", "", func(r devsync.Record) error {
		var b records.Clearance
		if json.Unmarshal(r.Body, &b) == nil && r.Day <= today {
			cleared[b.Incident] = b.By
		}
		return nil
	})
	if err != nil {
		return v, err
	}
	steps := map[string][]StepView{}
	err = s.store.Range(athlete, records.KindRTSStep, "", "", func(r devsync.Record) error {
		var b records.RTSStep
		if json.Unmarshal(r.Body, &b) == nil && b.Step >= 1 && b.Step <= len(medical.Steps) {
			steps[b.Incident] = append(steps[b.Incident], StepView{ID: r.ID, Step: b.Step, Name: medical.Steps[b.Step-1].Name,
				At: r.At, Symptoms: b.Symptoms, SupervisedBy: b.SupervisedBy})
		}
		return nil
	})
	if err != nil {
		return v, err
	}
	year, _ := strconv.Atoi(today[:4])
	age := 0
	if ab.BirthYear > 0 {
		age = medical.AgeOn(year, ab.BirthYear)
	}
	for _, inc := range incs {
		sd := medical.Compute(inc, incs, sets)
		if !sd.Applies || inc.Day > today {
			continue
		}
		by, ok := cleared[inc.ID]
		inForce := !ok || (sd.Dated && today < sd.EarliestEnd)
		st := steps[inc.ID]
		sort.SliceStable(st, func(i, j int) bool { return instantLess(st[i].At, st[j].At) })
		var logged []medical.LoggedStep
		for _, x := range st {
			logged = append(logged, medical.LoggedStep{ID: x.ID, Step: x.Step, At: x.At})
		}
		if st == nil {
			st = []StepView{}
		}
		ends := sd.Ends
		if ends == nil {
			ends = []medical.SetEnd{}
		}
		v.StandDowns = append(v.StandDowns, StandDownView{Incident: inc.ID, Type: inc.Type, Day: inc.Day, At: meta[inc.ID].at,
			SeenBy: meta[inc.ID].seenBy, EarliestEnd: sd.EarliestEnd, Rule: sd.Rule, Ends: ends, Cleared: ok, ClearedBy: by,
			InForce: inForce, Ladder: medical.Build(logged, age), Steps: st, StepNames: medical.Steps, RTSCaution: medical.CautionRTS})
	}
	sort.SliceStable(v.StandDowns, func(i, j int) bool {
		a, b := v.StandDowns[i], v.StandDowns[j]
		if a.InForce != b.InForce {
			return a.InForce
		}
		return a.Day > b.Day
	})
	return v, nil
}

func instantLess(a, b string) bool {
	ta, e1 := time.Parse(time.RFC3339, a)
	tb, e2 := time.Parse(time.RFC3339, b)
	if e1 != nil || e2 != nil {
		return a < b
	}
	return ta.Before(tb)
}

func (s *Server) handleMedical(w http.ResponseWriter, r *http.Request) error {
	id, today, err := s.fighterRead(r, "stand-downs")
	if err != nil {
		return err
	}
	v, err := s.Medical(id, today)
	if err != nil {
		return err
	}
	writeJSON(w, http.StatusOK, v)
	return nil
}
