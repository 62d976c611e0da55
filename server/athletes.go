package server

import (
	"encoding/json"
	"fmt"
	"net/http"
	"time"

	"github.com/gorilla/mux"

	"cornerbook/server/flags"
	"cornerbook/server/plan"
	"cornerbook/server/records"
	"cornerbook/server/series"
	devsync "cornerbook/sync"
)

func (s *Server) routeAthletes(api *mux.Router) {
	api.HandleFunc("/athletes/{id}/series", s.serve(s.handleSeries)).Methods(http.MethodGet)
	api.HandleFunc("/athletes/{id}/plan", s.serve(s.handlePlanReport)).Methods(http.MethodGet)
	api.HandleFunc("/plan/default", s.serve(s.handleDefaultPlan)).Methods(http.MethodGet)
	api.HandleFunc("/plan/check", s.serve(s.handleCheckPlan)).Methods(http.MethodPost)
	api.HandleFunc("/tables", s.serve(s.handleTables)).Methods(http.MethodGet)
	api.HandleFunc("/baselines", s.serve(s.handleBaselines)).Methods(http.MethodGet)
}

// handleSeries returns an athlete's chart data, computed by the same rules
// as the flags (nothing is computed in the browser).
func (s *Server) handleSeries(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	id := mux.Vars(r)["id"]
	if who.Role == "athlete" && id != who.Athlete {
		return userError(devsync.CodeForbidden, "id", "this device may only see its own athlete's charts")
	}
	q := r.URL.Query()
	to := q.Get("to")
	if to == "" {
		to = s.flags.Today()
	}
	from := q.Get("from")
	if from == "" {
		var err error
		if from, err = addDays(to, -41); err != nil {
			return err
		}
	}
	if err := series.CheckRange(from, to); err != nil {
		return fromField(err)
	}
	in, err := s.flags.seriesInput(id, from, to)
	if err != nil {
		return err
	}
	writeJSON(w, http.StatusOK, series.Build(in, from, to))
	return nil
}

// handleDefaultPlan generates the step-loading plan for a camp.
func (s *Server) handleDefaultPlan(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	q := r.URL.Query()
	athlete := q.Get("athlete")
	if who.Role == "athlete" && athlete != "" && athlete != who.Athlete {
		return userError(devsync.CodeForbidden, "athlete", "this device may only see its own athlete's plan")
	}
	th, err := s.flags.settingsFor(athlete)
	if err != nil {
		return err
	}
	weeks, err := plan.DefaultWeeksFor(q.Get("camp_start"), q.Get("bout_day"), th)
	if err != nil {
		if e := fromField(err); e != nil {
			e.Field = trimBody(e.Field)
			return e
		}
		return err
	}
	// Why each week of a starting plan is what it is, in words (camps
	// the generator plans; empty otherwise).
	why := make([]string, len(weeks))
	if gen, err := plan.Generate(q.Get("camp_start"), q.Get("bout_day"), th); err == nil && len(gen) == len(weeks) {
		for i, g := range gen {
			why[i] = g.Why
		}
	}
	writeJSON(w, http.StatusOK, map[string]any{"weeks": weeks, "why": why})
	return nil
}

func trimBody(f string) string {
	if len(f) > 5 && f[:5] == "body." {
		return f[5:]
	}
	return f
}

// PlanCheck is the answer to a plan check: the issues in plain words, the
// taper cut, and the planned path the flags will use.
type PlanCheck struct {
	Issues   []plan.Issue `json:"issues"`
	TaperCut *float64     `json:"taper_cut_pct"`
	Path     any          `json:"path"`
	Valid    string       `json:"invalid,omitempty"` // the first validation error, if the bout would be refused
	Field    string       `json:"field,omitempty"`
}

// handleCheckPlan explains a bout's plan before it is saved: the record
// rules first, then the plan's own checks.
func (s *Server) handleCheckPlan(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	var req struct {
		Athlete string          `json:"athlete"`
		Bout    json.RawMessage `json:"bout"`
	}
	if err := decodeStrict(w, r, 64<<10, &req); err != nil {
		return err
	}
	if who.Role == "athlete" && req.Athlete != "" && req.Athlete != who.Athlete {
		return userError(devsync.CodeForbidden, "athlete", "this device may only see its own athlete's plan")
	}
	var out PlanCheck
	probe := devsync.Record{ID: "01000000-0000-7000-8000-000000000000", Kind: records.KindBout, Athlete: req.Athlete,
		Day: s.flags.Today(), At: s.now().Format(time.RFC3339), Device: "plan-check", Body: req.Bout}
	if probe.Athlete == "" {
		probe.Athlete = "01000000-0000-7000-8000-000000000001"
	}
	if err := records.PrepareAt(s.now())(&probe); err != nil {
		if e := fromField(err); e != nil {
			out.Valid, out.Field = e.Reason, e.Field
		} else {
			return err
		}
	}
	var b records.Bout
	if err := json.Unmarshal(probe.Body, &b); err != nil {
		return userError(devsync.CodeBadRequest, "bout", fmt.Sprintf("is not a bout: %v", err))
	}
	th, err := s.flags.settingsFor(req.Athlete)
	if err != nil {
		return err
	}
	if out.Valid == "" {
		out.Issues = plan.Check(b, th)
		if pct, ok := plan.TaperCut(b.Weeks, th); ok {
			out.TaperCut = &pct
		}
		out.Path = plan.PathFor(b, th)
	}
	if out.Issues == nil {
		out.Issues = []plan.Issue{}
	}
	writeJSON(w, http.StatusOK, out)
	return nil
}

// handleTables serves the fixed tables screens pick from: weight classes,
// the CR-10 anchors, interval templates, thresholds with their limits.
func (s *Server) handleTables(w http.ResponseWriter, r *http.Request) error {
	if _, err := s.authorize(r, accessRead); err != nil {
		return err
	}
	type class struct {
		records.Class
		LimitKg float64 `json:"limit_kg"`
	}
	cls := make([]class, len(records.Classes))
	for i, c := range records.Classes {
		cls[i] = class{c, c.LimitKg()}
	}
	writeJSON(w, http.StatusOK, map[string]any{
		"classes": cls, "cr10": records.CR10, "protocols": records.Protocols, "rules": records.Rules,
		"levels": records.Levels, "emphases": records.Emphases,
	})
	return nil
}

// Baseline is one athlete's reference numbers for a day, for screens that
// show them beside an entry (the jump grid, ringside).
type Baseline struct {
	Athlete      string   `json:"athlete"`
	Name         string   `json:"name"`
	CMJBaseline  *float64 `json:"cmj_baseline_cm"` // 28-day mean of daily CMJ values before the day
	CMJNoisePct  *float64 `json:"cmj_noise_pct"`   // their day-to-day CV (floor 2 %)
	CMJTestDays  int      `json:"cmj_test_days"`   // test days in that window
	CMJLast      *float64 `json:"cmj_last_cm"`     // the latest daily mean before the day
	SparRounds7d int      `json:"spar_rounds_7d"`  // sparring rounds in the 7 days ending the day
	SparCap      int      `json:"spar_cap_rounds"` // the week's cap
	OnHold       bool     `json:"spar_on_hold"`    // a stand-down runs today
	HoldReason   string   `json:"spar_hold_reason,omitempty"`
	// Holds are the day's stand-down flags themselves (one per running
	// incident, and the alert for sparring during one), so ringside words
	// each restriction as the day board does.
	Holds []flags.Flag `json:"holds,omitempty"`
}

func (s *Server) handleBaselines(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	day := r.URL.Query().Get("day")
	if day == "" {
		day = s.flags.Today()
	}
	from, err := addDays(day, -27)
	if err != nil {
		return err
	}
	ath, err := s.flags.Athletes()
	if err != nil {
		return err
	}
	out := []Baseline{}
	for _, a := range ath {
		if who.Role == "athlete" && a.ID != who.Athlete {
			continue
		}
		in, err := s.flags.seriesInput(a.ID, from, day)
		if err != nil {
			return err
		}
		ser := series.Build(in, from, day)
		b := Baseline{Athlete: a.ID, Name: athleteName(a)}
		if n := len(ser.Days); n > 0 {
			last := n - 1
			b.CMJBaseline, b.CMJNoisePct = ser.Jump.BaselineCm[last], ser.Jump.NoisePct[last]
			if len(ser.Jump.TestDays) > last {
				b.CMJTestDays = ser.Jump.TestDays[last]
			}
			for i := last - 1; i >= 0; i-- {
				if ser.Jump.MeanCm[i] != nil {
					b.CMJLast = ser.Jump.MeanCm[i]
					break
				}
			}
			if len(ser.Sparring.RollingRounds) > last {
				b.SparRounds7d = ser.Sparring.RollingRounds[last]
			}
			if len(ser.Sparring.CapRounds) > last {
				b.SparCap = ser.Sparring.CapRounds[last]
			}
		}
		fl, err := s.flags.forAthlete(a.ID, day)
		if err != nil {
			return err
		}
		for _, f := range fl {
			if f.Rule == flags.RuleSparOnHold && f.Status == flags.StatusFlag {
				if !b.OnHold {
					b.OnHold, b.HoldReason = true, f.Reason
				}
				b.Holds = append(b.Holds, f)
			}
		}
		out = append(out, b)
	}
	writeJSON(w, http.StatusOK, map[string]any{"day": day, "athletes": out})
	return nil
}
