package server

import (
	"encoding/json"
	"net/http"
	"sort"
	"time"

	"github.com/gorilla/mux"

	"cornerbook/server/auth"
	"cornerbook/server/flags"
	"cornerbook/server/records"
	"cornerbook/server/series"
)

// Glance is one fighter's day at a glance, for the coach's home screen:
// any stand-down in force, the most serious finding, the morning mass
// against the planned path, and when the fighter's phone last synced.
// Every number is the hub's; the screen only words it.
type Glance struct {
	Athlete string `json:"athlete"`
	Name    string `json:"name"`
	Units   string `json:"units"`
	// Restrictions are the stand-downs in force that day.
	Restrictions []flags.Restriction `json:"restrictions"`
	// Worst is the most serious prompt (alert, watch, info), nil when
	// nothing is raised; Raised counts the prompts, Forming the rules
	// without enough data yet.
	Worst   *GlanceFlag `json:"worst,omitempty"`
	Raised  int         `json:"raised"`
	Forming int         `json:"forming"`
	// The day's morning mass, its trend and the planned path (kg; nil
	// when not known), with the class limit.
	MassKg  *float64 `json:"mass_kg"`
	TrendKg *float64 `json:"trend_kg"`
	PathKg  *float64 `json:"path_kg"`
	LimitKg *float64 `json:"limit_kg"`
	// Phones are the fighter's paired phones (athlete devices), latest
	// sync first; empty on a hub without pairing.
	Phones []GlancePhone `json:"phones"`
}

// GlanceFlag names a finding for the glance.
type GlanceFlag struct {
	Rule    string `json:"rule"`
	Level   string `json:"level"`
	Title   string `json:"title"`
	Decided bool   `json:"decided"`
}

// GlancePhone is one of the fighter's phones.
type GlancePhone struct {
	Name     string    `json:"name"`
	LastSync time.Time `json:"last_sync,omitzero"`
	Waiting  int       `json:"waiting"`
}

func (s *Server) routeGlance(api *mux.Router) {
	api.HandleFunc("/glance", s.serve(s.handleGlance)).Methods(http.MethodGet)
}

// handleGlance answers GET /api/glance?day=YYYY-MM-DD (default: the hub's
// today) with every fighter's day at a glance, in the board's order:
// fighters under a stand-down first, then by their most serious finding.
func (s *Server) handleGlance(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	day := r.URL.Query().Get("day")
	if day == "" {
		day = s.flags.Today()
	}
	if _, err := addDays(day, 0); err != nil {
		return err
	}
	ath, err := s.flags.Athletes()
	if err != nil {
		return err
	}
	var devs []auth.Device
	if s.cfg.Auth != nil && who.Role != "athlete" {
		if devs, err = s.cfg.Auth.Devices(); err != nil {
			return err
		}
	}
	out := []Glance{}
	for _, a := range ath {
		if who.Role == "athlete" && a.ID != who.Athlete {
			continue
		}
		var body records.Athlete
		json.Unmarshal(a.Body, &body)
		g := Glance{Athlete: a.ID, Name: body.Name, Units: body.Units, Restrictions: []flags.Restriction{}, Phones: []GlancePhone{}}
		if g.Units == "" {
			g.Units = "kg"
		}
		fl, err := s.flags.forAthlete(a.ID, day)
		if err != nil {
			return err
		}
		for _, f := range fl {
			switch {
			case f.Restriction != nil:
				g.Restrictions = append(g.Restrictions, *f.Restriction)
			case f.Status == flags.StatusForming:
				g.Forming++
			default:
				g.Raised++
				if g.Worst == nil { // flags come most serious first
					g.Worst = &GlanceFlag{Rule: f.Rule, Level: f.Level, Title: f.Title, Decided: f.Decision != nil}
				}
			}
		}
		in, err := s.flags.input(a.ID, day)
		if err != nil {
			return err
		}
		if ser := series.Build(in, day, day); len(ser.Days) == 1 {
			g.MassKg, g.TrendKg, g.PathKg, g.LimitKg = ser.Mass.MorningKg[0], ser.Mass.TrendKg[0], ser.Mass.PathKg[0], ser.Mass.LimitKg
		}
		for _, d := range devs {
			if d.Role == auth.RoleAthlete && d.Athlete == a.ID && !d.Revoked {
				g.Phones = append(g.Phones, GlancePhone{Name: d.Name, LastSync: d.LastSync, Waiting: d.Waiting})
			}
		}
		sortPhones(g.Phones)
		out = append(out, g)
	}
	sortGlance(out)
	writeJSON(w, http.StatusOK, map[string]any{"day": day, "athletes": out})
	return nil
}

func sortPhones(ps []GlancePhone) {
	sort.SliceStable(ps, func(i, j int) bool { return ps[i].LastSync.After(ps[j].LastSync) })
}

// sortGlance orders fighters as the day board does: a stand-down first,
// then the most serious finding (alert, watch, info, nothing), then name.
func sortGlance(gs []Glance) {
	rank := func(g Glance) int {
		switch {
		case len(g.Restrictions) > 0:
			return 0
		case g.Worst == nil:
			return 4
		case g.Worst.Level == flags.LevelAlert:
			return 1
		case g.Worst.Level == flags.LevelWatch:
			return 2
		}
		return 3
	}
	sort.SliceStable(gs, func(i, j int) bool {
		if ri, rj := rank(gs[i]), rank(gs[j]); ri != rj {
			return ri < rj
		}
		return gs[i].Name < gs[j].Name
	})
}
