package main

import (
	"fmt"
	"io"
	"strings"

	"cornerbook/server"
	"cornerbook/server/plan"
)

// runPlan prints an athlete's current bout week by week, planned against
// done, and the plan's checks in words (--json: the same with ids).
func runPlan(args []string, stdout io.Writer) error {
	return runAthleteReport(args, stdout, "plan", "done up to this day, YYYY-MM-DD (default today in the camp's time zone)",
		func(srv *server.Server, athlete, day string) (any, func(io.Writer), error) {
			rep, err := srv.PlanReport(athlete, day)
			return rep, func(w io.Writer) { writePlanText(w, rep, srv.AthleteNames()[athlete]) }, err
		})
}

func writePlanText(w io.Writer, rep plan.Report, name string) {
	b := rep.Bout
	title := b.Name
	if title == "" {
		title = "bout on " + b.BoutDay
	}
	fmt.Fprintf(w, "%s — %s\nCamp %s to the bout on %s; done up to %s.\n\n", name, title, b.CampStart, b.BoutDay, rep.Today)
	for _, wk := range rep.Weeks {
		mark := "  "
		if wk.Current {
			mark = "▶ "
		}
		fmt.Fprintf(w, "%sWeek %d from %s: %s", mark, wk.Week, wk.Start, capital(plan.LevelWords(wk.Level)))
		if wk.PlannedLoadAU != nil {
			fmt.Fprintf(w, ", %.0f AU planned", *wk.PlannedLoadAU)
		}
		fmt.Fprintln(w)
		if s := plan.EmphasisText(wk.Strength); s != "" {
			fmt.Fprintf(w, "    Strength: %s\n", s)
		}
		if s := plan.EmphasisText(wk.Conditioning); s != "" {
			fmt.Fprintf(w, "    Conditioning: %s\n", s)
		}
		if wk.SparRounds != nil {
			hard := ""
			if wk.HardRounds != nil {
				hard = fmt.Sprintf(", %d hard", *wk.HardRounds)
			}
			fmt.Fprintf(w, "    Sparring: %d rounds%s\n", *wk.SparRounds, hard)
		}
		if t := wk.Travel; t != nil {
			shift := ""
			if j, err := plan.Journey(*t); err == nil {
				shift = fmt.Sprintf(" (clock %+g h)", j.ShiftH)
			}
			fmt.Fprintf(w, "    Travel: %s → %s, leaves %s, lands %s%s\n", t.FromZone, t.ToZone, t.DepartAt, t.ArriveAt, shift)
		}
		if wk.Note != "" {
			fmt.Fprintf(w, "    Note: %s\n", wk.Note)
		}
		if wk.Done.Days > 0 {
			d := wk.Done
			by := plan.DoneText(d)
			if by != "" {
				by = " (" + by + ")"
			}
			fmt.Fprintf(w, "    Done in %d %s: %.0f AU, %d %s%s, %d sparring rounds, %d hard\n", d.Days, plural(d.Days, "day", "days"), d.LoadAU,
				d.Sessions, plural(d.Sessions, "session", "sessions"), by, d.Rounds, d.HardRounds)
		}
		if wk.Words != "" {
			fmt.Fprintf(w, "    %s\n", wk.Words)
		}
	}
	fmt.Fprintln(w)
	if len(rep.Checks) == 0 {
		fmt.Fprintln(w, "The plan's checks find nothing to look at.")
	}
	for _, c := range rep.Checks {
		word := "Note"
		if c.Level == plan.LevelWatch {
			word = "Look at"
		}
		fmt.Fprintf(w, "%-8s %s\n", word+":", c.Message)
	}
}

func capital(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

func plural(n int, one, many string) string {
	if n == 1 {
		return one
	}
	return many
}
