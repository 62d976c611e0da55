package plan_test

import (
	"encoding/json"
	"errors"
	"fmt"
	"slices"
	"strings"
	"testing"

	"cornerbook/server/plan"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// fullBout is a validated bout of either weigh-in type: a 147 lb class
// (66.68 kg) fighter starting camp at 70.0 kg with a 2500 AU habitual week
// (the REFERENCES §13 worked example).
func fullBout(t *testing.T, boutOff int, weighInType string, weeks []records.Week) records.Bout {
	t.Helper()
	b := records.Bout{CampStart: campStart, BoutDay: d(boutOff), WeighInType: weighInType,
		WeightClass: records.ClassCustom, LimitKg: 66.68, StartMassKg: 70.0, ReferenceLoadAU: 2500, Weeks: weeks}
	b.WeighIn = d(boutOff-1) + "T10:00:00+01:00"
	if weighInType == "same_day" {
		b.WeighIn = d(boutOff) + "T09:00:00+01:00"
	}
	raw, _ := json.Marshal(b)
	rec := devsync.Record{ID: "bout-1", Kind: records.KindBout, Athlete: "ath-1", At: campStart + "T08:00:00+01:00", Device: "dev", Body: raw}
	if err := records.Prepare(&rec); err != nil {
		t.Fatalf("the bout does not validate: %v", err)
	}
	var out records.Bout
	if err := json.Unmarshal(rec.Body, &out); err != nil {
		t.Fatal(err)
	}
	return out
}

func gen(t *testing.T, boutOff int) []plan.Generated {
	t.Helper()
	g, err := plan.Generate(campStart, d(boutOff), nil)
	if err != nil {
		t.Fatal(err)
	}
	return g
}

func weeksOf(g []plan.Generated) []records.Week {
	out := make([]records.Week, len(g))
	for i, w := range g {
		out[i] = w.Week
	}
	return out
}

// The 10-week starting plan, week by week, with why each week is what it
// is. Sources: Bosquet et al. 2007 (taper 8–14 days, cut 41–60 %); Issurin
// 2008 (block order, residuals: maximal strength 30 ± 5 days, speed
// 5 ± 3); Wang et al. 2023 (a pre-taper overload); Gabbett 2016 (no first
// week over 1.5 × the habitual week); lighter weeks every third or fourth
// week and the sparring peak in the back half are common practice, no
// source.
func TestGenerate_TenWeeksWeekByWeek(t *testing.T) {
	g := gen(t, 7*9+5) // the bout on the sixth day of week 10
	want := []struct {
		level, strength, cond string
		spar, hard            int
		why                   string // why the week is what it is
	}{
		{"medium", "max_strength", "aerobic", 12, 2, "the camp opens at medium, below the habitual week"},
		{"medium_heavy", "max_strength", "aerobic", 15, 4, "load rises a step"},
		{"low", "max_strength", "aerobic", 9, 2, "lighter week after 2 building weeks"},
		{"medium_heavy", "max_strength", "anaerobic", 20, 6, "the block starts a step above the last one"},
		{"heavy", "max_strength", "anaerobic", 22, 8, "load rises a step (heavy)"},
		{"low", "max_strength", "anaerobic", 12, 5, "lighter week after 2 building weeks"},
		{"medium_heavy", "strength_speed", "fight_specific", 27, 13, "strength–speed before the taper"},
		{"heavy", "strength_speed", "fight_specific", 30, 15, "the heaviest week, straight before the taper (a pre-taper overload)"},
		{"taper", "speed", "fight_specific", 15, 6, "Taper, first week: load cut to the taper level, intensity kept"},
		{"taper", "speed", "fight_specific", 8, 0, "Taper, fight week: load cut, speed kept sharp, no hard sparring"},
	}
	if len(g) != len(want) {
		t.Fatalf("%d weeks, want %d", len(g), len(want))
	}
	for i, w := range want {
		got := g[i]
		if got.Week.Week != i+1 || got.Level != w.level || got.Strength.IDs[0] != w.strength || got.Strength.IDs[1] != "plyometric" ||
			got.Conditioning.IDs[0] != w.cond || *got.SparRounds != w.spar || *got.HardRounds != w.hard || !strings.Contains(got.Why, w.why) {
			t.Errorf("week %d: %s %v %v %d/%d %q; want %s %s %s %d/%d, why %q", i+1, got.Level, got.Strength.IDs, got.Conditioning.IDs,
				*got.SparRounds, *got.HardRounds, got.Why, w.level, w.strength, w.cond, w.spar, w.hard, w.why)
		}
	}
	if !strings.Contains(g[7].Why, "the sparring peak") {
		t.Errorf("week 8 why %q: the sparring peak", g[7].Why)
	}
}

// Every starting plan of 6, 8, 10, 12 and 16 weeks, for each day of the
// final week the bout can fall on and each weigh-in type, is a valid bout
// and raises no check above info; and it keeps the shape it promises.
func TestGenerate_CampLengthsRaiseNothingAboveInfo(t *testing.T) {
	for _, n := range []int{6, 8, 10, 12, 16} {
		for lastDays := 1; lastDays <= 7; lastDays++ {
			boutOff := 7*(n-1) + lastDays
			g := gen(t, boutOff)
			ws := weeksOf(g)
			name := fmt.Sprintf("%d weeks, bout on day %d of the final week", n, lastDays)
			if len(ws) != n {
				t.Fatalf("%s: %d weeks", name, len(ws))
			}
			for _, typ := range []string{"day_before", "same_day"} {
				for _, is := range plan.Check(fullBout(t, boutOff, typ, ws), nil) {
					if is.Level != plan.LevelInfo {
						t.Errorf("%s, %s: %s %s %s: %s", name, typ, is.Level, is.Check, is.Field, is.Message)
					}
				}
			}
			// The taper: the last two weeks, 8–14 days (Bosquet et al. 2007).
			if taperDays := 7 + lastDays; ws[n-1].Level != "taper" || ws[n-2].Level != "taper" || ws[n-3].Level == "taper" || taperDays < 8 || taperDays > 14 {
				t.Errorf("%s: taper %s/%s, %d days", name, ws[n-2].Level, ws[n-1].Level, taperDays)
			}
			peak, lastMax := 0, 0
			for i, w := range ws {
				if !slices.Contains(w.Strength.IDs, "plyometric") && !slices.Contains(w.Strength.IDs, "speed") {
					t.Errorf("%s: week %d has no speed or jump work", name, i+1)
				}
				if *w.SparRounds > *ws[max(peak-1, 0)].SparRounds || peak == 0 {
					peak = i + 1
				}
				if slices.Contains(w.Strength.IDs, "max_strength") {
					lastMax = i + 1
				}
				if i > 0 && w.Level == "low" && ws[i-1].Level == "low" {
					t.Errorf("%s: two low weeks in a row", name)
				}
			}
			if 2*peak <= n {
				t.Errorf("%s: sparring peaks in week %d, not in the back half", name, peak)
			}
			// Strength ends on speed, after strength–speed; conditioning on fight-paced rounds.
			if ws[n-1].Strength.IDs[0] != "speed" || ws[n-3].Strength.IDs[0] != "strength_speed" || lastMax != n-4 || ws[n-3].Conditioning.IDs[0] != "fight_specific" {
				t.Errorf("%s: strength %v → %v, last max-strength week %d, conditioning %v", name, ws[n-3].Strength.IDs, ws[n-1].Strength.IDs, lastMax, ws[n-3].Conditioning.IDs)
			}
			// Load lightens at least every fourth week before the taper.
			run := 0
			for _, w := range ws[:n-2] {
				if w.Level == "low" {
					run = 0
					continue
				}
				if run++; run > 4 {
					t.Errorf("%s: more than four building weeks in a row", name)
				}
			}
		}
	}
}

// Blocks progress: each later block's building weeks average at least the
// first block's, and reach heavy.
func TestGenerate_BlocksProgress(t *testing.T) {
	for _, n := range []int{8, 12, 16} {
		ws := weeksOf(gen(t, 7*(n-1)+3))
		var blocks [][]float64
		cur := []float64{}
		for _, w := range ws[:n-2] {
			if w.Level == "low" {
				blocks, cur = append(blocks, cur), []float64{}
				continue
			}
			f, _ := plan.Fraction(w.Level, nil)
			cur = append(cur, f)
		}
		blocks = append(blocks, cur)
		mean := func(x []float64) float64 {
			s := 0.0
			for _, v := range x {
				s += v
			}
			return s / float64(len(x))
		}
		for i := 1; i < len(blocks); i++ {
			if mean(blocks[i]) <= mean(blocks[0]) || slices.Max(blocks[i]) != 1.0 {
				t.Errorf("%d weeks: block %d %v does not progress from block 1 %v", n, i+1, blocks[i], blocks[0])
			}
		}
	}
}

func TestGenerate_CampLengthRefused(t *testing.T) {
	for _, off := range []int{7*4 + 3, 7*16 + 2} { // 5 and 17 weeks
		_, err := plan.Generate(campStart, d(off), nil)
		var fe *devsync.FieldError
		if !errors.As(err, &fe) || fe.Field != "body.bout_day" || !strings.Contains(fe.Reason, "6–16 weeks") {
			t.Fatalf("bout on day %d: %v", off, err)
		}
	}
}
