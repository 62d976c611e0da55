package server

import (
	"encoding/json"
	"fmt"
	"net/http"

	"cornerbook/server/plan"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// PlanReport is an athlete's current bout, week by week, planned against
// done up to day (the camp's day; "" for today), with the plan's checks.
// No bout: a user error naming the athlete.
func (s *Server) PlanReport(athlete, day string) (plan.Report, error) {
	return s.PlanReportOf(athlete, "", day)
}

// PlanReportOf is PlanReport for one bout of the athlete's (its record
// id; "" for the current bout).
func (s *Server) PlanReportOf(athlete, boutID, day string) (plan.Report, error) {
	if day == "" {
		day = s.flags.Today()
	}
	in, err := s.flags.input(athlete, day)
	if err != nil {
		return plan.Report{}, err
	}
	if boutID != "" {
		r, err := s.store.Get(boutID)
		if err != nil || r.Deleted || r.Kind != records.KindBout || r.Athlete != athlete {
			return plan.Report{}, userError(CodeNotFound, "bout", fmt.Sprintf("this athlete has no bout with id %q", boutID))
		}
		in.Bout = &r
	}
	if in.Bout == nil {
		return plan.Report{}, userError(CodeNotFound, "athlete", "this athlete has no bout yet: plan a bout and its camp first")
	}
	var b records.Bout
	if err := json.Unmarshal(in.Bout.Body, &b); err != nil {
		return plan.Report{}, fmt.Errorf("the bout record %s is unreadable: %w", in.Bout.ID, err)
	}
	from, err := addDays(b.CampStart, -7*plan.PriorWeeks)
	if err != nil {
		from = b.CampStart
	}
	var recs []devsync.Record
	for _, kind := range []string{records.KindSession, records.KindRound} {
		if err := s.store.Range(athlete, kind, from, day, func(r devsync.Record) error {
			recs = append(recs, r)
			return nil
		}); err != nil {
			return plan.Report{}, err
		}
	}
	return plan.BuildReport(in.Bout.ID, b, recs, day, in.Settings), nil
}

// handlePlanReport serves PlanReport; an athlete's device reads only its
// own athlete's plan.
func (s *Server) handlePlanReport(w http.ResponseWriter, r *http.Request) error {
	id, day, err := s.fighterRead(r, "plan")
	if err != nil {
		return err
	}
	rep, err := s.PlanReportOf(id, r.URL.Query().Get("bout"), day)
	if err != nil {
		return err
	}
	writeJSON(w, http.StatusOK, rep)
	return nil
}
