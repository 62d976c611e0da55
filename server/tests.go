package server

import (
	"encoding/json"
	"fmt"
	"math"
	"net/http"
	"sort"
	"strconv"
	"strings"

	"github.com/gorilla/mux"

	"cornerbook/server/fitness"
	"cornerbook/server/fitness/trend"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// The tests that drive prescriptions: each athlete's test history with
// its changes, and the per-athlete targets of a prescription drawn from
// the latest tests. Every number is computed here, never in the browser.

func (s *Server) routeTests(api *mux.Router) {
	api.HandleFunc("/athletes/{id}/tests", s.serve(s.handleTests)).Methods(http.MethodGet)
	api.HandleFunc("/prescription", s.serve(s.handlePrescription)).Methods(http.MethodGet)
}

// TestsReport is one athlete's tests, oldest first, and the latest values
// a prescription would use on the report's day.
type TestsReport struct {
	Athlete string        `json:"athlete"`
	Name    string        `json:"name"`
	Day     string        `json:"day"`
	Tests   []trend.Entry `json:"tests"`
	Latest  trend.Latest  `json:"latest"`
	// Sessions are the interval sessions prescribed from the tests, with
	// what was done against them.
	Sessions []trend.Session `json:"sessions"`
}

var testKinds = []string{records.KindFitnessTest, records.KindStrength, records.KindJump, records.KindIntervals}

// Tests reads one athlete's tests from the store (every camp) and builds
// their history as of day ("" = today in the camp's zone).
func (s *Server) Tests(athlete, day string) (TestsReport, error) {
	ath, err := s.store.Get(athlete)
	if err != nil || ath.Deleted || ath.Kind != records.KindAthlete {
		return TestsReport{}, userError(CodeNotFound, "athlete", fmt.Sprintf("no athlete with id %q", athlete))
	}
	if day == "" {
		day = s.flags.Today()
	}
	var recs []devsync.Record
	for _, kind := range testKinds {
		if err := s.store.Range(athlete, kind, "0000-01-01", day, func(r devsync.Record) error {
			recs = append(recs, r)
			return nil
		}); err != nil {
			return TestsReport{}, err
		}
	}
	var a records.Athlete
	json.Unmarshal(ath.Body, &a)
	h := trend.Build(recs)
	if h == nil {
		h = []trend.Entry{}
	}
	ss := trend.Sessions(recs)
	if ss == nil {
		ss = []trend.Session{}
	}
	return TestsReport{Athlete: athlete, Name: a.Name, Day: day, Tests: h, Latest: trend.LatestOf(h, a.BirthYear, day), Sessions: ss}, nil
}

func (s *Server) handleTests(w http.ResponseWriter, r *http.Request) error {
	id, day, err := s.fighterRead(r, "tests")
	if err != nil {
		return err
	}
	rep, err := s.Tests(id, day)
	if err != nil {
		return err
	}
	writeJSON(w, http.StatusOK, rep)
	return nil
}

// Target is one athlete's share of a prescription.
type Target struct {
	Athlete string `json:"athlete"`
	Name    string `json:"name"`
	trend.Latest
	TargetRepM float64 `json:"target_rep_m,omitempty"` // distance per repetition
	TargetHRLo float64 `json:"target_hr_lo,omitempty"`
	TargetHRHi float64 `json:"target_hr_hi,omitempty"`
	Exercise   string  `json:"exercise,omitempty"`
	TargetKg   float64 `json:"target_kg,omitempty"` // load at the share of the latest e1RM
	// Missing says in words why a target could not be drawn.
	Missing string `json:"missing,omitempty"`
}

// handlePrescription draws each athlete's targets from their latest tests:
// pct_vift and work_s → distance per repetition (Buchheit 2008);
// hr_lo_pct and hr_hi_pct → a heart-rate band from HRmax (measured, else
// Tanaka 2001); exercise and pct_1rm → a load from the latest e1RM.
func (s *Server) handlePrescription(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	q := r.URL.Query()
	num := func(name string, lo, hi float64) (float64, bool, error) {
		v := q.Get(name)
		if v == "" {
			return 0, false, nil
		}
		x, err := strconv.ParseFloat(v, 64)
		if err != nil || math.IsNaN(x) || x < lo || x > hi {
			return 0, false, userError(devsync.CodeBadRequest, name, fmt.Sprintf("must be a number from %g to %g; got %q", lo, hi, v))
		}
		return x, true, nil
	}
	pct, hasPct, err := num("pct_vift", records.MinPctVIFT, records.MaxPctVIFT)
	if err != nil {
		return err
	}
	work, hasWork, err := num("work_s", 1, records.MaxIntervalS)
	if err != nil {
		return err
	}
	if hasPct != hasWork {
		return userError(devsync.CodeBadRequest, "work_s", "a distance needs both pct_vift and work_s")
	}
	lo, hasLo, err := num("hr_lo_pct", records.MinPctHRMax, records.MaxPctHRMax)
	if err != nil {
		return err
	}
	hi, hasHi, err := num("hr_hi_pct", records.MinPctHRMax, records.MaxPctHRMax)
	if err != nil {
		return err
	}
	if hasLo != hasHi || (hasLo && hi < lo) {
		return userError(devsync.CodeBadRequest, "hr_hi_pct", "a heart-rate band needs hr_lo_pct and hr_hi_pct, the upper end not below the lower")
	}
	pct1RM, has1RM, err := num("pct_1rm", 20, 110)
	if err != nil {
		return err
	}
	exercise := strings.TrimSpace(q.Get("exercise"))
	if has1RM && exercise == "" {
		return userError(devsync.CodeBadRequest, "exercise", "a load needs the exercise as well as pct_1rm")
	}
	day := q.Get("day")
	if day == "" {
		day = s.flags.Today()
	} else if _, err := addDays(day, 0); err != nil {
		return userError(devsync.CodeBadRequest, "day", "must be a calendar day YYYY-MM-DD")
	}
	var ids []string
	if v := q.Get("athletes"); v != "" {
		ids = strings.Split(v, ",")
	} else {
		ath, err := s.flags.Athletes()
		if err != nil {
			return err
		}
		for _, a := range ath {
			ids = append(ids, a.ID)
		}
	}
	out := []Target{}
	for _, id := range ids {
		if who.Role == "athlete" && id != who.Athlete {
			continue
		}
		rep, err := s.Tests(id, day)
		if err != nil {
			return err
		}
		t := Target{Athlete: id, Name: rep.Name, Latest: rep.Latest}
		var missing []string
		if hasPct {
			if t.VIFTKmh > 0 {
				t.TargetRepM = round2(fitness.RepDistanceM(t.VIFTKmh, pct, work))
			} else {
				missing = append(missing, "no 30-15 IFT yet")
			}
		}
		if hasLo {
			if t.HRMaxBpm > 0 {
				b := fitness.Band(t.HRMaxBpm, lo, hi)
				t.TargetHRLo, t.TargetHRHi = round2(b.LoBpm), round2(b.HiBpm)
			} else {
				missing = append(missing, "no HRmax: no measured maximum and no birth year")
			}
		}
		if has1RM {
			t.Exercise = exercise
			if kg, ok := lookupExercise(t.E1RMKg, exercise); ok {
				t.TargetKg = round2(fitness.LoadAtPct(kg, pct1RM))
			} else {
				missing = append(missing, "no "+exercise+" test yet")
			}
		}
		t.Missing = strings.Join(missing, "; ")
		out = append(out, t)
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	writeJSON(w, http.StatusOK, map[string]any{"day": day, "targets": out})
	return nil
}

func lookupExercise(m map[string]float64, exercise string) (float64, bool) {
	for k, v := range m {
		if strings.EqualFold(strings.TrimSpace(k), exercise) {
			return v, true
		}
	}
	return 0, false
}

func round2(v float64) float64 { return math.Round(v*100) / 100 }

// ChangeWords says a test's change from the one before it in words with
// units: against the published typical error where the test has one
// (naming its source), else plainly.
func ChangeWords(e trend.Entry, c fitness.Change) string {
	dec := 1
	if e.Unit == "%" || e.Unit == "m/s" {
		dec = 2
	}
	d := strconv.FormatFloat(c.Delta, 'f', dec, 64)
	if c.Delta >= 0 {
		d = "+" + d
	}
	w := fmt.Sprintf("%s %s since %s", d, unitWords(e.Unit), strconv.FormatFloat(c.From, 'f', dec, 64))
	if e.Unit != "%" {
		w = fmt.Sprintf("%s %s (%+.1f %%) since %s", d, unitWords(e.Unit), c.Pct, strconv.FormatFloat(c.From, 'f', dec, 64))
	}
	if c.TE > 0 {
		lim := strconv.FormatFloat(c.Limit90, 'f', 2, 64)
		if c.Clear() {
			return fmt.Sprintf("%s: beyond the test's noise (±%s %s at 90 %%, typical error from %s)", w, lim, e.Unit, c.Source)
		}
		return fmt.Sprintf("%s: within the test's noise (±%s %s at 90 %%, typical error from %s)", w, lim, e.Unit, c.Source)
	}
	return w
}

func unitWords(u string) string {
	if u == "%" {
		return "points"
	}
	return u
}
