package main

import (
	"fmt"
	"io"
	"strings"

	"cornerbook/server"
	"cornerbook/server/fightweek"
)

// runFightWeek prints a fighter's fight week: the official weigh-in, the
// mass a week before it, the acute loss, the regain, the hours from the
// weigh-in to the bout and every check against its cap.
func runFightWeek(args []string, stdout io.Writer) error {
	return runAthleteReport(args, stdout, "fightweek", "the day whose bout is shown, YYYY-MM-DD (default today in the camp's time zone)",
		func(srv *server.Server, athlete, day string) (any, func(io.Writer), error) {
			v, err := srv.FightWeek(athlete, day)
			return v, func(w io.Writer) { writeFightWeekText(w, &v) }, err
		})
}

func writeFightWeekText(w io.Writer, v *server.FightWeekView) {
	title := v.BoutName
	if title == "" && v.BoutDay != "" {
		title = "bout on " + v.BoutDay
	}
	fmt.Fprintf(w, "%s — %s\n", v.Name, title)
	if v.Bout == "" {
		fmt.Fprintln(w, "No bout is planned for this fighter.")
		return
	}
	if v.RulesWords != "" {
		fmt.Fprintf(w, "Weigh-in rules: %s\n", v.RulesWords)
	} else {
		fmt.Fprintln(w, "Weigh-in rules: official weigh-in only (no rule set picked).")
	}
	if v.Preset != nil {
		fmt.Fprintf(w, "  from: %s (%s)\n  %s\n", v.Preset.Source, v.Preset.Sure, v.Preset.Caution)
	}
	fmt.Fprintln(w)
	for _, line := range v.Words {
		fmt.Fprintln(w, line)
	}
	if len(v.Checks) > 0 {
		fmt.Fprintln(w, "\nChecks:")
		for _, c := range v.Checks {
			mark := "  "
			switch {
			case c.Pass == nil:
				mark = "– "
			case *c.Pass:
				mark = "✓ "
			default:
				mark = "✗ "
			}
			fmt.Fprintf(w, "%s%s\n", mark, c.Reason)
		}
	}
	fmt.Fprintln(w, "\nDay by day:")
	for _, d := range v.Days {
		var parts []string
		if d.MorningKg != nil {
			parts = append(parts, "morning "+fightweek.Mass(*d.MorningKg, v.Units))
		}
		if d.PathKg != nil {
			parts = append(parts, "path "+fightweek.Mass(*d.PathKg, v.Units))
		}
		label := fmt.Sprintf("%d days out", d.DaysToWeighIn)
		switch {
		case d.IsWeighInDay && d.IsBoutDay:
			label = "weigh-in and bout"
		case d.IsWeighInDay:
			label = "weigh-in day"
		case d.IsBoutDay:
			label = "bout day"
		case d.DaysToWeighIn == 1:
			label = "1 day out"
		}
		fmt.Fprintf(w, "  %s  %-18s %s\n", d.Day, label, strings.Join(parts, ", "))
	}
	fmt.Fprintln(w)
	for _, c := range v.Cautions {
		fmt.Fprintln(w, c)
	}
}
