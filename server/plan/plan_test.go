package plan_test

import (
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	"cornerbook/server/plan"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// campStart is a Monday.
const campStart = "2026-01-05"

func d(off int) string { return (day.MustParse(campStart) + day.Number(off)).String() }

// w is that day as the plan checks name it ("Mon 5 Jan").
func w(off int) string { return (day.MustParse(campStart) + day.Number(off)).Words() }

func near(t *testing.T, what string, got, want, tol float64) {
	t.Helper()
	if math.IsNaN(got) || math.Abs(got-want) > tol {
		t.Fatalf("%s = %.6f, want %.6f ± %g", what, got, want, tol)
	}
}

// bout is a validated day-before bout: the weigh-in is the day before the
// bout, at 10:00 with an offset.
func bout(t *testing.T, boutOff int, startKg, limitKg float64, path []records.Knot, weeks []records.Week) records.Bout {
	t.Helper()
	b := records.Bout{
		CampStart: campStart, BoutDay: d(boutOff), WeighIn: d(boutOff-1) + "T10:00:00+01:00", WeighInType: "day_before",
		WeightClass: records.ClassCustom, LimitKg: limitKg, StartMassKg: startKg, ReferenceLoadAU: 2500, Path: path, Weeks: weeks,
	}
	raw, _ := json.Marshal(b)
	rec := devsync.Record{ID: "bout-1", Kind: records.KindBout, Athlete: "ath-1", At: campStart + "T08:00:00+01:00", Device: "dev", Body: raw}
	if err := records.Prepare(&rec); err != nil {
		t.Fatalf("the test bout does not validate: %v", err)
	}
	var out records.Bout
	if err := json.Unmarshal(rec.Body, &out); err != nil {
		t.Fatal(err)
	}
	return out
}

func issuesOf(is []plan.Issue, field, level string) []plan.Issue {
	var out []plan.Issue
	for _, i := range is {
		if (field == "" || i.Field == field) && (level == "" || i.Level == level) {
			out = append(out, i)
		}
	}
	return out
}

func checksOf(is []plan.Issue, id string) []plan.Issue {
	var out []plan.Issue
	for _, i := range is {
		if i.Check == id {
			out = append(out, i)
		}
	}
	return out
}

func messages(is []plan.Issue) string {
	var s []string
	for _, i := range is {
		s = append(s, i.Level+" "+i.Check+" "+i.Field+": "+i.Message)
	}
	return strings.Join(s, "\n")
}

func TestDefaultWeeks_Errors(t *testing.T) {
	for _, c := range []struct{ start, bout, field string }{
		{"2026-13-01", d(50), "body.camp_start"},
		{campStart, "soon", "body.bout_day"},
		{campStart, campStart, "body.bout_day"},
		{campStart, d(-3), "body.bout_day"},
		{campStart, d(400), "body.bout_day"},
	} {
		_, err := plan.DefaultWeeks(c.start, c.bout)
		var fe *devsync.FieldError
		if !errors.As(err, &fe) || fe.Field != c.field || fe.Reason == "" {
			t.Fatalf("DefaultWeeks(%q, %q) = %v, want a field error on %s", c.start, c.bout, err, c.field)
		}
	}
}

// Settings move the plan with the off_plan and spar_density rules: a
// lighter taper level changes the cut TaperCut reports, and the sparring
// cap sets the sparring peak.
func TestDefaultWeeks_FollowsThresholds(t *testing.T) {
	th := records.Resolve(map[string]map[string]float64{
		records.RuleOffPlan:     {"level_taper": 0.45},
		records.RuleSparDensity: {"cap_rounds": 24},
	})
	ws, err := plan.DefaultWeeksFor(campStart, d(55), th)
	if err != nil {
		t.Fatal(err)
	}
	peak := 0
	for _, w := range ws {
		peak = max(peak, *w.SparRounds)
	}
	if peak != 24 || *ws[6].SparRounds != 12 { // the taper's first week keeps half the peak
		t.Fatalf("sparring peak %d, taper week %d", peak, *ws[6].SparRounds)
	}
	cut, _ := plan.TaperCut(ws, th)
	near(t, "taper cut", cut, 55, 1e-9)
	// The level fractions are off_plan's (common practice, no source).
	if f, ok := plan.Fraction("medium_heavy", th); !ok || f != 0.85 {
		t.Fatalf("medium_heavy fraction %v %v", f, ok)
	}
	if _, ok := plan.Fraction("extreme", th); ok {
		t.Fatal("an unknown level has a fraction")
	}
	if plan.SparCap("rest", th) != 0 {
		t.Fatal("a rest week allows sparring")
	}
}

// Bosquet et al. 2007 (REFERENCES.md §13): a 2500 AU reference week gives a
// taper band of 1000–1475 AU (60 % to 41 % cut). A taper level of 0.75
// (25 % cut) is outside it, and Check says so with the band in AU, naming
// the model; an info, as the settled taper reading has it.
func TestCheck_TaperOutsideBand(t *testing.T) {
	lo, hi := flags.TaperBand(2500, 41, 60)
	near(t, "band low", lo, 1000, 1e-9)
	near(t, "band high", hi, 1475, 1e-9)
	th := records.Resolve(map[string]map[string]float64{records.RuleOffPlan: {"level_taper": 0.75}})
	ws, err := plan.DefaultWeeksFor(campStart, d(55), th)
	if err != nil {
		t.Fatal(err)
	}
	is := checksOf(plan.Check(bout(t, 55, 70, 66.5, nil, ws), th), plan.CheckTaperCut)
	if len(is) != 1 || is[0].Threshold != "off_plan.taper_min_pct" || is[0].Field != "body.weeks[6].level" || is[0].Level != plan.LevelInfo ||
		!strings.Contains(is[0].Message, "25 % cut") || !strings.Contains(is[0].Message, "1000–1475 AU") || !strings.Contains(is[0].Message, "1875 AU") ||
		!strings.Contains(is[0].Message, "Bosquet et al. 2007 meta-analysis") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	// A cut beyond 60 % (level 0.3) is named the other way.
	th = records.Resolve(map[string]map[string]float64{records.RuleOffPlan: {"level_taper": 0.3}})
	is = checksOf(plan.Check(bout(t, 55, 70, 66.5, nil, ws), th), plan.CheckTaperCut)
	if len(is) != 1 || is[0].Threshold != "off_plan.taper_max_pct" || !strings.Contains(is[0].Message, "70 % cut") {
		t.Fatalf("issues:\n%s", messages(is))
	}
	// Inside the band (the default 50 % cut): nothing.
	if is := checksOf(plan.Check(bout(t, 55, 70, 66.5, nil, ws), nil), plan.CheckTaperCut); len(is) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
}

func TestCheck_Weeks(t *testing.T) {
	ws, _ := plan.DefaultWeeks(campStart, d(55))
	// Six weeks for an eight-week camp.
	is := issuesOf(plan.Check(bout(t, 55, 70, 66.5, nil, ws[:6]), nil), "body.weeks", plan.LevelWatch)
	if len(is) != 1 || !strings.Contains(is[0].Message, "weeks 7 and 8, from "+w(42)) {
		t.Fatalf("issues:\n%s", messages(is))
	}
	// No taper, and five loading weeks in a row.
	levels := []string{"medium", "medium_heavy", "heavy", "heavy", "heavy", "low", "medium", "heavy"}
	var custom []records.Week
	for i, l := range levels {
		custom = append(custom, records.Week{Week: i + 1, Level: l})
	}
	all := plan.Check(bout(t, 55, 70, 66.5, nil, custom), nil)
	if is := issuesOf(all, "body.weeks[7].level", plan.LevelInfo); len(is) != 1 || is[0].Check != plan.CheckTaperLength ||
		!strings.Contains(is[0].Message, "No week is planned as a taper") || !strings.Contains(is[0].Message, "(week 8) is planned heavy") {
		t.Fatalf("issues:\n%s", messages(all))
	}
	if is := issuesOf(all, "body.weeks[0].level", plan.LevelInfo); len(is) != 1 || !strings.Contains(is[0].Message, "Weeks 1 to 5") {
		t.Fatalf("issues:\n%s", messages(all))
	}
	// No week plan at all: the default is offered.
	is = issuesOf(plan.Check(bout(t, 55, 70, 66.5, nil, nil), nil), "body.weeks", plan.LevelInfo)
	if len(is) != 1 || !strings.Contains(is[0].Message, "medium, medium-heavy, low, medium-heavy, heavy, heavy, taper, taper") {
		t.Fatalf("issues:\n%s", messages(is))
	}
}

// Garthe et al. 2011 (REFERENCES.md §6.1): a constant 0.7 %/week path from
// 70.0 kg passes 69.5100, 69.0234, … and reaches 66.1747 kg after 8 weeks.
// Given as weekly knots, every segment asks for 0.7 %/week (±0.001) and
// Check raises nothing about it.
func TestCheck_GartheGeometricPath(t *testing.T) {
	want := []float64{70, 69.5100, 69.0234, 68.5403, 68.0605, 67.5841, 67.1110, 66.6412, 66.1747}
	var knots []records.Knot
	for k, kg := range want {
		near(t, "geometric mass", flags.GeometricMass(70, 0.7, float64(k)), kg, 0.0005)
		knots = append(knots, records.Knot{Day: d(7 * k), MassKg: kg})
	}
	b := bout(t, 57, 70, 66.17, knots, nil)
	for _, s := range plan.Segments(plan.Path(b), day.MustParse(d(56)), 7) {
		near(t, "segment rate", s.PctWeek, 0.7, 0.001)
	}
	for _, i := range plan.Check(b, nil) {
		if i.Field == "body.path" {
			t.Fatalf("unexpected path issue: %s", i.Message)
		}
	}
}

// 70 → 65 kg over 4 weeks asks for 5/70/4 = 1.7857 %/week, above the
// 1.5 %/week alert level of mass_loss_fast (Garthe et al. 2011: 0.7 %/week
// preserved lean mass better than 1.4 %/week); 70 → 66.5 kg over 8 weeks
// (0.625 %/week) does not.
func TestCheck_FastPathSegment(t *testing.T) {
	fast := bout(t, 58, 70, 65, []records.Knot{{Day: d(0), MassKg: 70}, {Day: d(28), MassKg: 65}, {Day: d(57), MassKg: 65}}, nil)
	is := issuesOf(plan.Check(fast, nil), "body.path", plan.LevelWatch)
	if len(is) != 1 {
		t.Fatalf("issues:\n%s", messages(is))
	}
	m := is[0].Message
	for _, part := range []string{"70.0 kg on " + w(0), "65.0 kg on " + w(28), "1.79 %", "0.29 %/week above the 1.5 %/week", "1.25 kg a week"} {
		if !strings.Contains(m, part) {
			t.Fatalf("message lacks %q: %s", part, m)
		}
	}
	// WeeksNeeded(70, 65, 0.7) = ln(65/70)/ln(0.993) = 10.5498 weeks [D].
	near(t, "weeks at 0.7 %/week", flags.WeeksNeeded(70, 65, 0.7), 10.5498, 0.0005)
	if !strings.Contains(m, "10.5 weeks") || is[0].Threshold != "mass_loss_fast.alert_pct_week" || is[0].Caution != flags.CautionMass {
		t.Fatalf("issue %+v", is[0])
	}
	slow := bout(t, 58, 70, 66.5, []records.Knot{{Day: d(0), MassKg: 70}, {Day: d(56), MassKg: 66.5}}, nil)
	for _, i := range plan.Check(slow, nil) {
		if i.Field == "body.path" {
			t.Fatalf("0.625 %%/week flagged: %s", i.Message)
		}
	}
	// Between the watch (1.0) and alert (1.5) levels: an info.
	mid := bout(t, 58, 70, 66.5, []records.Knot{{Day: d(0), MassKg: 70}, {Day: d(28), MassKg: 66.5}}, nil) // 1.25 %/week
	if is := issuesOf(plan.Check(mid, nil), "body.path", plan.LevelInfo); len(is) != 1 || !strings.Contains(is[0].Message, "1.25 %") {
		t.Fatalf("issues:\n%s", messages(plan.Check(mid, nil)))
	}
}

// Linear plan 70.0 → 65.0 kg over 56 days: day 21 is 68.1250 kg
// (REFERENCES.md §6.1, common practice). Path returns the coach's knots
// and flags.PathAt interpolates them.
func TestPath_LinearExample(t *testing.T) {
	b := bout(t, 57, 70, 65, []records.Knot{{Day: d(0), MassKg: 70}, {Day: d(56), MassKg: 65}}, nil)
	b.Path[0], b.Path[1] = b.Path[1], b.Path[0] // Path sorts knots given out of order
	p := plan.Path(b)
	if len(p) != 2 || p[0].Day != day.MustParse(d(0)) {
		t.Fatalf("path %+v", p)
	}
	near(t, "day-21 plan", flags.PathAt(p, day.MustParse(d(21))), 68.1250, 0.0005)
}

// The default path of PRODUCT.md: start mass at camp start, limit × 1.05
// seven days before a day-before weigh-in (× 1.03 same-day), then the
// limit at the weigh-in.
func TestPath_Default(t *testing.T) {
	limit := records.LbToKg(135) // 61.23496995 kg, REFERENCES.md §7.2
	b := bout(t, 56, 70, limit, nil, nil)
	p := plan.Path(b)
	wi := day.MustParse(d(55))
	if len(p) != 3 || p[1].Day != wi-7 || p[2].Day != wi {
		t.Fatalf("path %+v", p)
	}
	near(t, "knee", p[1].MassKg, limit*1.05, 1e-9)
	near(t, "end", p[2].MassKg, limit, 1e-9)
	b.WeighInType, b.BoutDay, b.WeighIn = "same_day", d(55), d(55)+"T09:00:00+01:00"
	near(t, "same-day knee", plan.Path(b)[1].MassKg, limit*1.03, 1e-9)
	b.LimitKg = 0
	if plan.Path(b) != nil {
		t.Fatal("a path without a limit")
	}
}

func TestCheck_Mass(t *testing.T) {
	limit := records.LbToKg(135)
	// Start mass below the limit.
	below := plan.Check(bout(t, 56, 60.5, limit, nil, nil), nil)
	if is := issuesOf(below, "body.start_mass_kg", plan.LevelInfo); len(is) != 1 || !strings.Contains(is[0].Message, "60.5 kg is at or below the 61.23 kg limit") {
		t.Fatalf("issues:\n%s", messages(below))
	}
	// limit × 1.05 = 64.30 kg above a 63.5 kg start: the path is flat until the final days.
	flat := plan.Check(bout(t, 56, 63.5, limit, nil, nil), nil)
	if is := issuesOf(flat, "body.start_mass_kg", plan.LevelInfo); len(is) != 1 || !strings.Contains(is[0].Message, "(64.3 kg)") ||
		is[0].Threshold != "mass_above_path.factor_day_before" {
		t.Fatalf("issues:\n%s", messages(flat))
	}
	// The default path's final week asks 1 − 1/1.05 = 4.76 % [D], under the
	// 5 % watch level of cut_at_risk: no final-phase issue. A coach's path
	// going 66.5 → 61.23 kg in the final 7 days asks 7.92 %: a watch, just
	// under the 8 % alert level (levels: PRODUCT.md, anchored on Reale et
	// al. 2017, common practice).
	for _, i := range plan.Check(bout(t, 56, 66.5, limit, nil, nil), nil) {
		if strings.Contains(i.Message, "The path plans") {
			t.Fatalf("default path flagged: %s", i.Message)
		}
	}
	acute := bout(t, 56, 70, limit, []records.Knot{{Day: d(0), MassKg: 70}, {Day: d(48), MassKg: 66.5}, {Day: d(55), MassKg: limit}}, nil)
	var hit *plan.Issue
	for _, i := range plan.Check(acute, nil) {
		if strings.Contains(i.Message, "The path plans") {
			hit = &i
		}
	}
	// (66.5 − 61.23497) / 66.5 = 7.917 % [D]: above 5 %, not above 8 %.
	if hit == nil || hit.Level != plan.LevelWatch || hit.Threshold != "cut_at_risk.watch_pct_day_before" || !strings.Contains(hit.Message, "7.9 %") ||
		!strings.Contains(hit.Message, "supervised by a sports dietitian or physician") {
		t.Fatalf("final-phase issue %+v", hit)
	}
	// A path ending above the limit.
	high := plan.Check(bout(t, 56, 70, limit, []records.Knot{{Day: d(0), MassKg: 70}, {Day: d(55), MassKg: 66}}, nil), nil)
	if is := issuesOf(high, "body.path", plan.LevelWatch); len(is) == 0 || !strings.Contains(messages(is), "66.0 kg on the weigh-in day") {
		t.Fatalf("issues:\n%s", messages(high))
	}
	// 70 kg at 1 %/week for the 48 days to the final phase: 70 × 0.99^(48/7)
	// = 65.3383 kg [D], leaving 4.10 kg = 6.3 % for the final days, above 5 %.
	left := issuesOf(plan.Check(bout(t, 56, 70, limit, nil, nil), nil), "body.start_mass_kg", plan.LevelWatch)
	near(t, "gradual projection", flags.GeometricMass(70, 1, 48.0/7), 65.3383, 0.0005)
	if len(left) != 1 || !strings.Contains(left[0].Message, "reaches 65.3 kg") || !strings.Contains(left[0].Message, "4.1 kg (6.3 %") {
		t.Fatalf("issues:\n%s", messages(left))
	}
	// No upper limit: one info and nothing else about mass.
	heavy := bout(t, 56, 95, 90, nil, nil)
	heavy.WeightClass, heavy.LimitKg = "pro_heavyweight", 0
	if is := plan.Check(heavy, nil); len(issuesOf(is, "body.limit_kg", plan.LevelInfo)) != 1 || len(issuesOf(is, "body.start_mass_kg", "")) != 0 {
		t.Fatalf("issues:\n%s", messages(is))
	}
}

// Body-mass issues are prompts: each carries the mass caution, and no
// issue ever asks for a faster loss.
func TestCheck_FramedAsPrompts(t *testing.T) {
	limit := records.LbToKg(135)
	cases := []records.Bout{
		bout(t, 30, 72, limit, nil, nil),
		bout(t, 58, 70, 65, []records.Knot{{Day: d(0), MassKg: 70}, {Day: d(28), MassKg: 65}}, nil),
	}
	for _, b := range cases {
		for _, i := range plan.Check(b, nil) {
			low := strings.ToLower(i.Message)
			for _, bad := range []string{"cut faster", "lose faster", "speed up", "increase the rate"} {
				if strings.Contains(low, bad) {
					t.Fatalf("issue suggests a faster loss: %s", i.Message)
				}
			}
			if strings.Contains(i.Field, "mass") || i.Field == "body.path" {
				if i.Caution != flags.CautionMass {
					t.Fatalf("mass issue without the caution: %+v", i)
				}
			}
		}
	}
}

func TestCheck_BadDates(t *testing.T) {
	is := plan.Check(records.Bout{CampStart: "2026-02-30", BoutDay: d(50)}, nil)
	if len(is) != 1 || is[0].Field != "body.camp_start" || is[0].Level != plan.LevelWatch {
		t.Fatalf("issues:\n%s", messages(is))
	}
}
