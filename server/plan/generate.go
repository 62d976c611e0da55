package plan

import (
	"fmt"
	"math"

	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// The starting plan
//
// Generate offers a first plan for a camp of 6–16 weeks; the coach edits
// every week. Its shape, and where each choice comes from:
//
//   - The last two weeks are the taper (level taper): with the bout on day
//     1–7 of the final week they hold 8–14 training days, the taper length
//     that worked best in Bosquet et al.'s 2007 meta-analysis (about two
//     weeks, load cut 41–60 % with intensity and frequency kept). The taper
//     level's load is level_taper × the reference week (0.5: a 50 % cut).
//   - The weeks before the taper are loading weeks in blocks: two or three
//     building weeks that rise in steps (medium → medium-heavy → heavy),
//     then a low week, so load lightens every third or fourth week (a
//     common 2:1 or 3:1 loading pattern; common practice, no source). The
//     final block runs straight into the taper and ends on its heaviest
//     week: a pre-taper overload improved the taper's effect (Wang et al.
//     2023). Block 1 peaks at medium-heavy; later blocks start a step
//     higher and peak at heavy, so load progresses between blocks. Week 1
//     is a medium week, below the reference week, so a fighter coming in
//     at their habitual load does not spike (Gabbett 2016: weekly load over
//     1.5 × the weeks before is the zone to avoid).
//   - Strength work follows block periodization (Issurin 2008, 2010):
//     maximal strength first, strength–speed in the two weeks before the
//     taper, speed in the taper, with jumps and throws (plyometrics) in
//     every week so speed is never left for longer than its short
//     residual (5 ± 3 days). The last maximal-strength week is the fourth
//     before the final one, 23–29 days before the bout, inside the 30 ± 5
//     days its residual lasts. Camps of 11 weeks or more put a two-week
//     strength–speed block in the middle of the maximal-strength weeks, as
//     Issurin's model repeats its blocks rather than running one quality
//     for three months.
//   - Conditioning moves from aerobic base (the first 40 % of the loading
//     weeks) to high-intensity intervals, then to fight-paced rounds from
//     the final block (in a one-block camp its last two weeks) through the
//     taper (Issurin: aerobic
//     residual 30 ± 5 days, anaerobic 18 ± 4; the fight-specific work
//     comes last so it is freshest on the night).
//   - Sparring rises from 40 % of the peak in week 1 to the peak in the
//     final block's first heavy week, in the last third of the camp; low
//     weeks spar half as much. Hard rounds rise from a fifth to half of
//     the rounds. The peak is spar_density.cap_rounds (30) rounds with
//     hard_cap_rounds (15) hard. The taper's first week keeps half the
//     rounds with some hard ones (intensity kept, Bosquet 2007); the
//     final week keeps light sparring and no hard rounds (common practice,
//     no source: no hard sparring in the last days before a bout).

// Generated is one week of a starting plan and why it is what it is.
type Generated struct {
	records.Week
	Why string `json:"why"`
}

// Camp lengths the generator plans.
const (
	GenMinWeeks = 6
	GenMaxWeeks = 16
)

// Generate builds the starting plan of a camp (see the package's notes
// above). th are the merged thresholds in force (nil for the defaults).
// An error is a *devsync.FieldError naming body.camp_start or
// body.bout_day; a camp outside 6–16 weeks is refused with the field
// named.
func Generate(campStart, boutDay string, th map[string]map[string]float64) ([]Generated, error) {
	start, bout, err := campDays(campStart, boutDay)
	if err != nil {
		return nil, err
	}
	n := WeeksFor(start, bout)
	if n < GenMinWeeks || n > GenMaxWeeks {
		return nil, devsync.Invalid("body.bout_day", "makes a camp of %d weeks; a starting plan is offered for %d–%d weeks — build this plan week by week", n, GenMinWeeks, GenMaxWeeks)
	}
	loading := n - 2
	blocks := blockSizes(loading)
	out := make([]Generated, 0, n)
	// Levels and the reason for each, block by block.
	k := 0
	for b, size := range blocks {
		final := b == len(blocks)-1
		build := size
		if !final {
			build = size - 1
		}
		levels := blockLevels(b, build, final)
		for j, lvl := range levels {
			k++
			why := fmt.Sprintf("Block %d, building week %d of %d: %s", b+1, j+1, build, stepWhy(j, lvl, b))
			if final && j == len(levels)-1 {
				why = fmt.Sprintf("Block %d, building week %d of %d: the heaviest week, straight before the taper (a pre-taper overload)", b+1, j+1, build)
			}
			out = append(out, Generated{Week: records.Week{Week: k, Level: lvl}, Why: why})
		}
		if !final {
			k++
			out = append(out, Generated{Week: records.Week{Week: k, Level: "low"},
				Why: fmt.Sprintf("Block %d, lighter week after %d building weeks", b+1, build)})
		}
	}
	out = append(out,
		Generated{Week: records.Week{Week: n - 1, Level: "taper"}, Why: "Taper, first week: load cut to the taper level, intensity kept"},
		Generated{Week: records.Week{Week: n, Level: "taper"}, Why: "Taper, fight week: load cut, speed kept sharp, no hard sparring"})

	// Strength and conditioning emphases.
	lastMax := n - 4 // 23–29 days before the bout: inside the 30 ± 5-day residual
	midFrom := 0     // a middle strength–speed block in long camps
	if n >= 11 {
		midFrom = lastMax/2 + 1
	}
	aerobicTo := max(int(0.4*float64(loading)), 1)
	finalStart := loading - (blocks[len(blocks)-1]) + 1
	fightFrom := finalStart // fight-paced rounds from the final block on
	if fightFrom <= aerobicTo+1 {
		fightFrom = loading - 1 // a camp of one block: its last two weeks
	}
	for i := range out {
		w := &out[i].Week
		k := w.Week
		var strength, why string
		switch {
		case k > loading:
			strength, why = "speed", "speed in the taper"
		case k > lastMax:
			strength, why = "strength_speed", "strength–speed before the taper"
		case midFrom > 0 && (k == midFrom || k == midFrom+1):
			strength, why = "strength_speed", "a strength–speed block between the maximal-strength blocks"
		default:
			strength, why = "max_strength", "maximal strength"
		}
		w.Strength = &records.Emphasis{IDs: []string{strength, "plyometric"}}
		var cond, cwhy string
		switch {
		case k >= fightFrom:
			cond, cwhy = "fight_specific", "fight-paced rounds"
		case k <= aerobicTo:
			cond, cwhy = "aerobic", "aerobic base"
		default:
			cond, cwhy = "anaerobic", "high-intensity intervals"
		}
		w.Conditioning = &records.Emphasis{IDs: []string{cond}}
		out[i].Why += "; " + why + " with jumps and throws; " + cwhy
	}

	// Sparring.
	peakRounds := param(th, records.RuleSparDensity, "cap_rounds")
	peakHard := param(th, records.RuleSparDensity, "hard_cap_rounds")
	peak := loading // the final block's first heavy week
	for k := finalStart; k <= loading; k++ {
		if out[k-1].Level == "heavy" {
			peak = k
			break
		}
	}
	for i := range out {
		w := &out[i].Week
		k := w.Week
		var rounds, hard float64
		switch {
		case k == n:
			rounds, hard = 0.25*peakRounds, 0
		case k == n-1:
			rounds, hard = 0.5*peakRounds, 0.4*peakHard
		case k <= peak:
			f := 1.0
			if peak > 1 {
				f = float64(k-1) / float64(peak-1)
			}
			rounds = peakRounds * (0.4 + 0.6*f)
			hard = rounds * (0.2 + 0.3*f)
		default: // after the peak, before the taper
			rounds = 0.9 * peakRounds
			hard = 0.8 * peakHard
		}
		if w.Level == "low" {
			rounds, hard = rounds/2, hard/2
		}
		r, h := int(math.Round(rounds)), int(math.Round(math.Min(hard, peakHard)))
		h = min(h, r)
		w.SparRounds, w.HardRounds = &r, &h
		if k == peak {
			out[i].Why += "; the sparring peak"
		}
	}
	return out, nil
}

// blockSizes splits the loading weeks into blocks: blocks of four (three
// building weeks and a low week) or three (two and a low week), longest
// first, and a final block of three or two building weeks that runs into
// the taper (four when the camp has only four loading weeks).
func blockSizes(loading int) []int {
	for _, final := range []int{3, 2} {
		rest := loading - final
		for fours := rest / 4; fours >= 0 && rest >= 0; fours-- {
			if (rest-4*fours)%3 != 0 {
				continue
			}
			var out []int
			for range fours {
				out = append(out, 4)
			}
			for range (rest - 4*fours) / 3 {
				out = append(out, 3)
			}
			return append(out, final)
		}
	}
	return []int{loading} // 4 loading weeks: one block that runs into the taper
}

// blockLevels are the building levels of block b: block 1 rises medium →
// medium-heavy; later blocks start a step higher and reach heavy; the
// final block ends on heavy.
func blockLevels(b, build int, final bool) []string {
	ladder := []string{"medium", "medium_heavy", "medium_heavy", "heavy"}
	if b > 0 {
		ladder = []string{"medium_heavy", "heavy", "heavy", "heavy"}
	}
	out := append([]string(nil), ladder[:build]...)
	if final {
		out[len(out)-1] = "heavy"
	}
	return out
}

func stepWhy(j int, lvl string, b int) string {
	switch {
	case j == 0 && b == 0:
		return "the camp opens at " + LevelWords(lvl) + ", below the habitual week"
	case j == 0:
		return "the block starts a step above the last one (" + LevelWords(lvl) + ")"
	}
	return "load rises a step (" + LevelWords(lvl) + ")"
}

// LevelWords is a plan level in words.
func LevelWords(level string) string {
	switch level {
	case "rest":
		return "rest"
	case "low":
		return "low"
	case "medium":
		return "medium"
	case "medium_heavy":
		return "medium–heavy"
	case "heavy":
		return "heavy"
	case "taper":
		return "taper"
	}
	return level
}
