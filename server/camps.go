package server

import (
	"fmt"
	"net/http"

	"github.com/gorilla/mux"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
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

// Camps computes a fighter's camp history as of the day on ("" = today).
func (s *Server) Camps(athlete, on string) (CampHistory, error) {
	if on == "" {
		on = s.flags.Today()
	}
	cur, err := s.flags.input(athlete, on)
	if err != nil {
		return CampHistory{}, err
	}
	out := CampHistory{Athlete: athlete, Name: athleteName(cur.Athlete), Units: series.Units(cur.Athlete), Day: on,
		Camps: []series.Camp{}, Tests: []CampTest{}, Caution: flags.CautionMass}
	current := ""
	if cur.Bout != nil {
		current = cur.Bout.ID
	}
	for _, span := range series.CampSpans(cur.Bouts, current, on) {
		in := cur // the athlete, bouts and thresholds of the day; the camp's own records
		if err := s.flags.reach(&in, span.From, span.To); err != nil {
			return CampHistory{}, err
		}
		out.Camps = append(out.Camps, span.Camp(in))
	}
	rep, err := s.Tests(athlete, on)
	if err != nil {
		return CampHistory{}, err
	}
	for _, e := range rep.Tests {
		for _, c := range out.Camps {
			if len(c.Days) == 0 || e.Day < c.Days[0] || e.Day > c.Days[len(c.Days)-1] {
				continue
			}
			out.Tests = append(out.Tests, CampTest{Camp: c.Bout, DaysOut: int(day.MustParse(e.Day) - day.MustParse(c.BoutDay)), Day: e.Day, Series: e.Series, Label: e.Label,
				Value: e.Value, Unit: e.Unit, Better: e.Better, Summary: e.Summary})
		}
	}
	return out, nil
}

func (s *Server) handleCamps(w http.ResponseWriter, r *http.Request) error {
	id, on, err := s.fighterRead(r, "camps")
	if err != nil {
		return err
	}
	h, err := s.Camps(id, on)
	if err != nil {
		return err
	}
	writeJSON(w, http.StatusOK, h)
	return nil
}

// fighterRead authorizes a read of one fighter's numbers (what: "camps",
// "fight week", …) and gives the fighter's id from the path and the day
// asked, today when none is given. An athlete's device reads only its own
// fighter; a day that is not a calendar day is refused by name.
func (s *Server) fighterRead(r *http.Request, what string) (id, on string, err error) {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return "", "", err
	}
	id = mux.Vars(r)["id"]
	if who.Role == "athlete" && id != who.Athlete {
		return "", "", userError(devsync.CodeForbidden, "id", "this device may only see its own athlete's "+what)
	}
	on = r.URL.Query().Get("day")
	if on == "" {
		return id, s.flags.Today(), nil
	}
	if _, err := day.Parse(on); err != nil {
		return "", "", userError(devsync.CodeBadRequest, "day", fmt.Sprintf("must be a calendar day written YYYY-MM-DD; got %q", on))
	}
	return id, on, nil
}
