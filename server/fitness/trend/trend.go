// Package trend turns an athlete's test records (fitness tests, strength
// tests, drop jumps) into a history: each test with its derived values
// and its change from the one before it of the same test, judged against
// the test's published typical error where one exists, else shown plainly.
// It also picks the latest values prescriptions are drawn from. Pure: it
// reads records handed to it and never the store.
package trend

import (
	"encoding/json"
	"fmt"
	"math"
	"sort"
	"strconv"
	"strings"

	"cornerbook/server/fitness"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// Entry is one test with its derived values. The value fields are named as
// the command line's --json promises; a field is absent when the test does
// not give it.
type Entry struct {
	ID       string `json:"id"`
	Day      string `json:"day"`
	Kind     string `json:"kind"`
	Test     string `json:"test"`  // ift_30_15, repeated_sprint, hr_max, strength, dj
	Label    string `json:"label"` // words: "30-15 IFT", "Back squat", "Drop jump 40 cm"
	Exercise string `json:"exercise,omitempty"`

	VIFTKmh    *float64 `json:"vift_kmh,omitempty"`
	Stage      int      `json:"stage,omitempty"`
	StartKmh   float64  `json:"start_kmh,omitempty"`
	SDecPct    *float64 `json:"sdec_pct,omitempty"`
	FatiguePct *float64 `json:"fatigue_pct,omitempty"`
	BestS      *float64 `json:"best_s,omitempty"`
	HRMaxBpm   *float64 `json:"hr_max_bpm,omitempty"`
	EpleyKg    *float64 `json:"e1rm_epley_kg,omitempty"`
	BrzyckiKg  *float64 `json:"e1rm_brzycki_kg,omitempty"`
	LV1RMKg    *float64 `json:"lv_1rm_kg,omitempty"`
	MinVel     float64  `json:"min_velocity_ms,omitempty"`
	RSI        *float64 `json:"rsi,omitempty"`
	DropCm     float64  `json:"drop_cm,omitempty"`

	// Series is the key of the entries this one is compared with (a test,
	// or a strength exercise, or a drop height); Value the number compared,
	// named by ValueKey, with its Unit.
	Series   string  `json:"series"`
	ValueKey string  `json:"value_key"`
	Value    float64 `json:"value"`
	Unit     string  `json:"unit"`
	// Better says which way is better: "up" or "down" (a sprint decrement
	// that grows is a worse result).
	Better string `json:"better"`
	// Change is from the previous entry of the same series, if any.
	Change *fitness.Change `json:"change,omitempty"`
	// Summary is the entry in words with units, as a coach reads it.
	Summary string `json:"summary"`
}

func p(v float64) *float64 { return &v }

// Build makes the history of one athlete's test records, oldest first.
// Other kinds, CMJs and deleted records are skipped.
func Build(recs []devsync.Record) []Entry {
	sorted := append([]devsync.Record(nil), recs...)
	sort.SliceStable(sorted, func(i, j int) bool {
		if sorted[i].Day != sorted[j].Day {
			return sorted[i].Day < sorted[j].Day
		}
		return sorted[i].At < sorted[j].At
	})
	var out []Entry
	last := map[string]int{}
	for _, r := range sorted {
		if r.Deleted {
			continue
		}
		e, ok := entryOf(r)
		if !ok {
			continue
		}
		if i, seen := last[e.Series]; seen {
			var rel *fitness.Reliability
			if e.Test == records.ProtocolIFT {
				rel = &fitness.IFTReliability
			}
			c := fitness.ChangeOf(out[i].Value, e.Value, rel)
			e.Change = &c
		}
		last[e.Series] = len(out)
		out = append(out, e)
	}
	return out
}

func entryOf(r devsync.Record) (Entry, bool) {
	e := Entry{ID: r.ID, Day: r.Day, Kind: r.Kind, Better: "up"}
	switch r.Kind {
	case records.KindFitnessTest:
		var b records.FitnessTest
		if json.Unmarshal(r.Body, &b) != nil {
			return e, false
		}
		e.Test, e.Series = b.Protocol, b.Protocol
		switch b.Protocol {
		case records.ProtocolIFT:
			e.Label, e.VIFTKmh, e.Stage, e.StartKmh = "30-15 IFT", p(b.VIFTKmh), b.Stage, b.StartKmh
			e.ValueKey, e.Value, e.Unit = "vift_kmh", b.VIFTKmh, "km/h"
			e.Summary = fmt.Sprintf("V_IFT %s km/h (stage %d from %s km/h)", num(b.VIFTKmh, 1), b.Stage, num(b.StartKmh, 0))
		case records.ProtocolSprint:
			e.Label, e.SDecPct, e.FatiguePct, e.BestS = "Repeated sprints", p(b.SDecPct), p(b.FatiguePct), p(b.BestS)
			e.ValueKey, e.Value, e.Unit, e.Better = "sdec_pct", b.SDecPct, "%", "down"
			dist := ""
			if b.DistanceM > 0 {
				dist = " × " + num(b.DistanceM, 0) + " m"
			}
			e.Summary = fmt.Sprintf("%d sprints%s: best %s s, decrement %s %%, fatigue %s %%", len(b.SprintS), dist, num(b.BestS, 2), num(b.SDecPct, 2), num(b.FatiguePct, 2))
		case records.ProtocolHRMax:
			e.Label, e.HRMaxBpm = "Maximal heart rate", p(float64(b.HRMaxBpm))
			e.ValueKey, e.Value, e.Unit = "hr_max_bpm", float64(b.HRMaxBpm), "bpm"
			e.Summary = fmt.Sprintf("HRmax %d bpm (measured)", b.HRMaxBpm)
		default:
			return e, false
		}
	case records.KindStrength:
		var b records.Strength
		if json.Unmarshal(r.Body, &b) != nil {
			return e, false
		}
		e.Test, e.Exercise = records.KindStrength, b.Exercise
		e.Label = upperFirst(b.Exercise)
		e.Series = "strength:" + strings.ToLower(strings.TrimSpace(b.Exercise))
		e.MinVel = b.MinVelocityMs
		var parts []string
		if b.EpleyKg > 0 {
			e.EpleyKg, e.BrzyckiKg = p(b.EpleyKg), p(b.BrzyckiKg)
			e.ValueKey, e.Value = "e1rm_epley_kg", b.EpleyKg
			parts = append(parts, fmt.Sprintf("e1RM %s kg (Epley), %s kg (Brzycki)", num(b.EpleyKg, 1), num(b.BrzyckiKg, 1)))
		}
		if b.LV1RMKg > 0 {
			e.LV1RMKg = p(b.LV1RMKg)
			if e.ValueKey == "" {
				e.ValueKey, e.Value = "lv_1rm_kg", b.LV1RMKg
			}
			parts = append(parts, fmt.Sprintf("1RM %s kg at %s m/s (load–velocity)", num(b.LV1RMKg, 1), num(b.MinVelocityMs, 2)))
		}
		if e.ValueKey == "" {
			parts = append(parts, "no estimate: every set over 10 reps and fewer than 3 loads with a bar speed")
		}
		e.Unit = "kg"
		e.Summary = fmt.Sprintf("%d sets: %s", len(b.Sets), strings.Join(parts, "; "))
	case records.KindJump:
		var b records.Jump
		if json.Unmarshal(r.Body, &b) != nil || b.Test != records.JumpDrop {
			return e, false
		}
		e.Test, e.DropCm, e.RSI = records.JumpDrop, b.DropCm, p(b.RSI)
		e.Label = "Drop jump " + num(b.DropCm, 0) + " cm"
		e.Series = "dj:" + num(b.DropCm, 0)
		e.ValueKey, e.Value, e.Unit = "rsi", b.RSI, "m/s"
		e.Summary = fmt.Sprintf("best RSI %s m/s over %d attempts", num(b.RSI, 2), len(b.RSIs))
	default:
		return e, false
	}
	return e, true
}

// Latest holds the values a prescription is drawn from for one athlete on
// a day: the latest V_IFT, the HRmax (the latest measured one, else the
// age prediction of Tanaka 2001 from the birth year), and the latest
// e1RM of each exercise (Epley, else the load–velocity 1RM).
type Latest struct {
	VIFTKmh   float64            `json:"vift_kmh,omitempty"`
	VIFTDay   string             `json:"vift_day,omitempty"`
	HRMaxBpm  float64            `json:"hr_max_bpm,omitempty"`
	HRMaxFrom string             `json:"hr_max_from,omitempty"` // measured or age
	HRMaxDay  string             `json:"hr_max_day,omitempty"`
	E1RMKg    map[string]float64 `json:"e1rm_kg,omitempty"` // exercise → kg
	E1RMDay   map[string]string  `json:"e1rm_day,omitempty"`
}

// LatestOf picks the latest values on or before day from a history (as
// Build returns it, oldest first). birthYear 0 means unknown: no predicted
// HRmax.
func LatestOf(h []Entry, birthYear int, day string) Latest {
	var l Latest
	for _, e := range h {
		if e.Day > day {
			break
		}
		switch {
		case e.VIFTKmh != nil:
			l.VIFTKmh, l.VIFTDay = *e.VIFTKmh, e.Day
		case e.HRMaxBpm != nil:
			l.HRMaxBpm, l.HRMaxFrom, l.HRMaxDay = *e.HRMaxBpm, records.HRMaxMeasured, e.Day
		case e.Test == records.KindStrength && (e.EpleyKg != nil || e.LV1RMKg != nil):
			if l.E1RMKg == nil {
				l.E1RMKg, l.E1RMDay = map[string]float64{}, map[string]string{}
			}
			v := e.LV1RMKg
			if e.EpleyKg != nil {
				v = e.EpleyKg
			}
			l.E1RMKg[e.Exercise], l.E1RMDay[e.Exercise] = *v, e.Day
		}
	}
	if l.HRMaxFrom == "" && birthYear > 0 && len(day) >= 4 {
		if y, err := strconv.Atoi(day[:4]); err == nil && y > birthYear {
			l.HRMaxBpm, l.HRMaxFrom = math.Round(fitness.TanakaHRmax(float64(y-birthYear))*10)/10, records.HRMaxAge
		}
	}
	return l
}

func num(v float64, dec int) string { return strconv.FormatFloat(v, 'f', dec, 64) }

func upperFirst(s string) string {
	s = strings.TrimSpace(s)
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}

// Session is one interval session prescribed from a test, with what was
// done against it.
type Session struct {
	ID         string   `json:"id"`
	Day        string   `json:"day"`
	Protocol   string   `json:"protocol,omitempty"`
	Reps       int      `json:"reps"` // planned, reps × sets
	DoneReps   *int     `json:"done_reps,omitempty"`
	TargetRepM float64  `json:"target_rep_m,omitempty"`
	DoneRepM   *float64 `json:"done_rep_m,omitempty"`
	TargetHRLo float64  `json:"target_hr_lo,omitempty"`
	TargetHRHi float64  `json:"target_hr_hi,omitempty"`
	HRPeak     *int     `json:"hr_peak,omitempty"`
	// DonePct is the distance covered as a share of the target, and
	// RepsPct the reps done as a share of those planned (absent until done).
	DonePct *float64 `json:"done_pct,omitempty"`
	RepsPct *float64 `json:"reps_pct,omitempty"`
}

// Sessions lists the interval sessions that carry a target from a test,
// oldest first, each with what was done against it.
func Sessions(recs []devsync.Record) []Session {
	var out []Session
	for _, r := range recs {
		if r.Deleted || r.Kind != records.KindIntervals {
			continue
		}
		var b records.Intervals
		if json.Unmarshal(r.Body, &b) != nil || (b.TargetRepM == 0 && b.TargetHRLo == 0) {
			continue
		}
		s := Session{ID: r.ID, Day: r.Day, Protocol: b.Protocol, Reps: b.Reps * max(b.Sets, 1), DoneReps: b.DoneReps,
			TargetRepM: b.TargetRepM, DoneRepM: b.DoneRepM, TargetHRLo: b.TargetHRLo, TargetHRHi: b.TargetHRHi, HRPeak: b.HRPeak}
		if b.DoneRepM != nil && b.TargetRepM > 0 {
			s.DonePct = p(math.Round(*b.DoneRepM/b.TargetRepM*1000) / 10)
		}
		if b.DoneReps != nil && s.Reps > 0 {
			s.RepsPct = p(math.Round(float64(*b.DoneReps)/float64(s.Reps)*1000) / 10)
		}
		out = append(out, s)
	}
	sort.SliceStable(out, func(i, j int) bool { return out[i].Day < out[j].Day })
	return out
}
