package server_test

import (
	"encoding/json"
	"testing"

	"github.com/stretchr/testify/require"

	"cornerbook/server/demo"
	"cornerbook/server/flags"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// TestDemoCamp_HubFeedsTheRulesWholeHistory: the hub's flags (a window of
// records, its cache, the bout it picks, the first record's day it looks
// up) are exactly the rules run over each fighter's whole history, for
// every athlete-day of the demo camp — what `cornerbook flags --json`
// prints is what the settled readings give.
func TestDemoCamp_HubFeedsTheRulesWholeHistory(t *testing.T) {
	srv := demoHub(t)
	all := demo.Build(demoToday)
	var camp records.Settings
	byAthlete := map[string][]devsync.Record{}
	var athletes []devsync.Record
	prepare := records.PrepareAt(demoToday)
	for _, r := range all {
		require.NoError(t, prepare(&r), "%s %s", r.Kind, r.ID) // as the hub stores it
		switch {
		case r.Kind == records.KindAthlete:
			athletes = append(athletes, r)
		case r.Kind == records.KindSettings && r.Athlete == "":
			require.NoError(t, json.Unmarshal(r.Body, &camp))
		}
		if r.Athlete != "" {
			byAthlete[r.Athlete] = append(byAthlete[r.Athlete], r)
		}
	}
	require.NotEmpty(t, athletes)
	for i := demo.HistoryDays - 1; i >= 0; i-- {
		day := demoToday.AddDate(0, 0, -i).Format("2006-01-02")
		for _, a := range athletes {
			in := flags.Input{Day: day, Now: demoToday, Location: demoToday.Location(), Athlete: a,
				Records: byAthlete[a.ID], Settings: records.Resolve(camp.Layer())}
			// The bout of the day: the nearest bout day on or after it,
			// else the latest before it.
			var best *devsync.Record
			bestDay := ""
			for _, r := range byAthlete[a.ID] {
				if r.Kind != records.KindBout || r.Deleted {
					continue
				}
				var b records.Bout
				require.NoError(t, json.Unmarshal(r.Body, &b))
				r := r
				in.Bouts = append(in.Bouts, r)
				switch {
				case best == nil,
					b.BoutDay >= day && (bestDay < day || b.BoutDay < bestDay),
					b.BoutDay < day && bestDay < day && b.BoutDay > bestDay:
					best, bestDay = &r, b.BoutDay
				}
			}
			in.Bout = best
			fs := flags.Compute(in)
			if fs == nil {
				fs = []flags.Flag{} // a day without flags (the hub answers [])
			}
			want, err := json.Marshal(fs)
			require.NoError(t, err)
			fl, err := srv.Flags(day, a.ID)
			require.NoError(t, err)
			if fl == nil {
				fl = []flags.Flag{}
			}
			got, err := json.Marshal(fl)
			require.NoError(t, err)
			require.JSONEq(t, string(want), string(got), "%s %s", day, a.ID)
		}
	}
}
