package server

import (
	"encoding/json"
	"fmt"
	"net/http"

	"github.com/gorilla/mux"

	"cornerbook/server/flags"
	"cornerbook/server/records"
	"cornerbook/server/series"
	devsync "cornerbook/sync"
)

// The camp history: a fighter's camps side by side, aligned by days to
// the bout — mass against its path, CMJ, weekly load, sparring and the
// tests of each camp. Every number is the hub's, from the same series the
// fighter's charts draw.

func (s *Server) routeCamps(api *mux.Router) {
	api.HandleFunc("/athletes/{id}/camps", s.serve(s.handleCamps)).Methods(http.MethodGet)
}

// CampHistory is one fighter's camps on a day, newest first.
type CampHistory struct {
	Athlete string        `json:"athlete"`
	Name    string        `json:"name"`
	Units   string        `json:"units"` // how the screen shows masses; values are kg
	Day     string        `json:"day"`
	Camps   []series.Camp `json:"camps"`
	// Tests are the fitness and strength tests taken inside the camps
	// shown, each with its camp and days to that camp's bout.
	Tests   []CampTest `json:"tests"`
	Caution string     `json:"caution"`
}

// CampTest is one test result placed in its camp.
type CampTest struct {
	Camp    string  `json:"camp"` // the camp's bout id
	DaysOut int     `json:"days_out"`
	Day     string  `json:"day"`
	Series  string  `json:"series"` // the entries compared with each other
	Label   string  `json:"label"`
	Value   float64 `json:"value"`
	Unit    string  `json:"unit"`
	Better  string  `json:"better"` // "up" or "down"
	Summary string  `json:"summary"`
}

// Camps computes a fighter's camp history as of day ("" = today).
func (s *Server) Camps(athlete, day string) (CampHistory, error) {
	if day == "" {
		day = s.flags.Today()
	}
	cur, err := s.flags.input(athlete, day)
	if err != nil {
		return CampHistory{}, err
	}
	out := CampHistory{Athlete: athlete, Name: athleteName(cur.Athlete), Units: "kg", Day: day, Camps: []series.Camp{}, Tests: []CampTest{}, Caution: flags.CautionMass}
	if a, ok := unitsOf(cur.Athlete); ok {
		out.Units = a
	}
	current := ""
	if cur.Bout != nil {
		current = cur.Bout.ID
	}
	var ins []series.CampInput
	for _, b := range cur.Bouts {
		from, to, ok := series.CampRange(b, day)
		if !ok {
			continue
		}
		in, err := s.flags.seriesInput(athlete, from, to)
		if err != nil {
			return CampHistory{}, err
		}
		ins = append(ins, series.CampInput{Bout: b, Input: in})
	}
	out.Camps = series.Camps(ins, current, day)
	rep, err := s.Tests(athlete, day)
	if err != nil {
		return CampHistory{}, err
	}
	for _, e := range rep.Tests {
		for _, c := range out.Camps {
			if len(c.Days) == 0 || e.Day < c.Days[0] || e.Day > c.Days[len(c.Days)-1] {
				continue
			}
			i, _ := dayIndex(c.Days, e.Day)
			out.Tests = append(out.Tests, CampTest{Camp: c.Bout, DaysOut: c.DaysOut[i], Day: e.Day, Series: e.Series, Label: e.Label,
				Value: e.Value, Unit: e.Unit, Better: e.Better, Summary: e.Summary})
		}
	}
	return out, nil
}

// dayIndex is the position of d in the consecutive days ds.
func dayIndex(ds []string, d string) (int, bool) {
	for i, x := range ds {
		if x == d {
			return i, true
		}
	}
	return 0, false
}

func unitsOf(a devsync.Record) (string, bool) {
	var b records.Athlete
	if err := json.Unmarshal(a.Body, &b); err != nil || b.Units == "" {
		return "", false
	}
	return b.Units, true
}

func (s *Server) handleCamps(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	id := mux.Vars(r)["id"]
	if who.Role == "athlete" && id != who.Athlete {
		return userError(devsync.CodeForbidden, "id", "this device may only see its own athlete's camps")
	}
	day := r.URL.Query().Get("day")
	if day != "" {
		if _, err := addDays(day, 0); err != nil {
			return userError(devsync.CodeBadRequest, "day", fmt.Sprintf("must be a calendar day written YYYY-MM-DD; got %q", day))
		}
	}
	h, err := s.Camps(id, day)
	if err != nil {
		return err
	}
	writeJSON(w, http.StatusOK, h)
	return nil
}
