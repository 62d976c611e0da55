// Package series builds the chart data of one athlete's page: per calendar
// day, morning mass against the planned path and the limit, CMJ against its
// baseline and noise band, daily load with the acute and chronic averages
// and their ratio, sparring rounds against the week's cap, and the
// wellness total against its threshold.
//
// The package is pure: no I/O, no clock; the records and the days are
// passed in. Every day from..to is present, so charts share one x axis;
// a value the day does not have is null. Masses stay in kg (Units says how
// the athlete wants them shown).
//
// Each number is the one the flag engine (server/flags) computes for the
// same day, from the same records and thresholds: the same choice of a
// day's morning mass, CMJ and wellness check-in, the same windows, and the
// same functions of flags/stats for the averages. A test pins the two
// together on the demo camp. Where the engine computes a value only on
// some days (a baseline on a test day, a trend inside the camp), the
// series computes it on every day by the same rule, so lines are
// continuous:
//   - the CMJ baseline on a day without a test uses the measuring method
//     of the latest test day (the engine does not mix methods);
//   - the wellness threshold is drawn on every day with enough check-ins
//     in the 28 days before it;
//   - the rate of loss (mass_loss_fast) is given inside the final days too,
//     where the rule is silent.
package series

import (
	"encoding/json"
	"math"

	"cornerbook/server/flags"
	"cornerbook/server/flags/day"
	devsync "cornerbook/sync"
)

// MaxDays is the longest range Build draws.
const MaxDays = 731

// Projection labels and methods.
const (
	ProjectSlope = "slope" // at the least-squares slope of the recent morning masses
	ProjectRate  = "rate"  // at a constant percentage of body mass per week
)

// Series is the chart data of one athlete over Days.
type Series struct {
	Athlete  string   `json:"athlete"`
	From     string   `json:"from"`
	To       string   `json:"to"`
	Units    string   `json:"units"` // "kg" or "lb": how the screen shows masses; values here are kg
	Days     []string `json:"days"`  // every calendar day from..to, the shared x axis
	Mass     Mass     `json:"mass"`
	Jump     Jump     `json:"jump"`
	Load     Load     `json:"load"`
	Sparring Sparring `json:"sparring"`
	Wellness Wellness `json:"wellness"`
}

// Mass is morning body mass against the plan, in kg.
type Mass struct {
	MorningKg []*float64 `json:"morning_kg"` // the day's earliest check-in with a mass
	// TrendKg is the exponentially weighted mean of the morning masses
	// (λ = 2/(N+1), N = mass_above_path.ewma_n, seeded with the first mass
	// of the camp or of the 42 days before, whichever is later), as the
	// mass_above_path rule computes it; null before the camp starts (with
	// a bout) and on days with no mass in that window.
	TrendKg []*float64 `json:"trend_kg"`
	// PathKg is the planned path (the coach's knots or the default path),
	// from camp start to the weigh-in day.
	PathKg     []*float64 `json:"path_kg"`
	LimitKg    *float64   `json:"limit_kg"`               // null: no upper limit
	WeighInDay string     `json:"weigh_in_day,omitempty"` // the venue's calendar day
	// LossPctWeek is the mass_loss_fast value: minus the least-squares
	// slope of the morning masses over the last window_days, as % of the
	// trend per week (positive for a loss); null with fewer than
	// min_checkins masses.
	LossPctWeek []*float64 `json:"loss_pct_week"`
	// Projections are two projected weigh-in masses per day, each labelled.
	Projections []Projection `json:"projections"`
	Caution     string       `json:"caution"`
}

// Projection is the trend carried forward to the weigh-in day, per day up
// to the weigh-in.
type Projection struct {
	Method string `json:"method"` // ProjectSlope or ProjectRate
	Label  string `json:"label"`
	// RatePctWeek is the assumed loss for ProjectRate (cut_at_risk.rate_pct_week).
	RatePctWeek *float64   `json:"rate_pct_week,omitempty"`
	WeighInKg   []*float64 `json:"weigh_in_kg"`
}

// Jump is the daily CMJ in cm against the athlete's baseline.
type Jump struct {
	MeanCm []*float64 `json:"mean_cm"` // mean of the day's valid attempts (the value jump_drop judges)
	BestCm []*float64 `json:"best_cm"`
	// BaselineCm is the mean of the daily values over the window_days
	// before the day (at least min_days test days).
	BaselineCm  []*float64 `json:"baseline_cm"`
	NoisePct    []*float64 `json:"noise_pct"` // max(CV of those daily values, cv_floor_pct)
	BandLowCm   []*float64 `json:"band_low_cm"`
	BandHighCm  []*float64 `json:"band_high_cm"`       // baseline × (1 ± noise)
	TestDays    []int      `json:"baseline_test_days"` // test days in the window before the day
	MinTestDays int        `json:"min_test_days"`      // jump_drop.min_days: fewer and the baseline is forming
}

// Load is the daily session load in AU.
type Load struct {
	// DailyAU is the sum of the day's sessions (rpe × minutes, Foster et
	// al. 2001, or the stored load_au); 0 on a day without sessions from
	// the athlete's first record on, null before it. Intervals records are
	// not added: their RPE is the same session's sRPE, as in the engine.
	DailyAU []*float64 `json:"daily_au"`
	// AcuteAU and ChronicAU are the exponentially weighted averages (N =
	// acute_n and chronic_n, both seeded with the first day's load;
	// Williams et al. 2017). Ratio is null until min_days days are on
	// record, as in the load_spike rule.
	AcuteAU      []*float64 `json:"acute_au"`
	ChronicAU    []*float64 `json:"chronic_au"`
	Ratio        []*float64 `json:"ratio"`
	WatchAt      float64    `json:"watch_ratio"`
	LowAt        float64    `json:"low_ratio"`
	RatioMinDays int        `json:"ratio_min_days"` // load_spike.min_days
	// WeekLevel is the planned level of the day's camp week ("" outside
	// the plan) and PlannedWeekAU its planned weekly load, level fraction ×
	// reference_load_au: what off_plan compares the week's load with.
	WeekLevel     []string   `json:"week_level"`
	PlannedWeekAU []*float64 `json:"planned_week_au"`
	Caution       string     `json:"caution"`
}

// Sparring is sparring rounds per day against the caps.
type Sparring struct {
	Rounds     []int `json:"rounds"`      // sparring rounds of the day
	HardRounds []int `json:"hard_rounds"` // at intensity ≥ hard_intensity (3)
	// RollingRounds and RollingHard are the totals of the window_days (7)
	// ending the day, the numbers spar_density compares with the caps.
	RollingRounds []int `json:"rolling_rounds"`
	RollingHard   []int `json:"rolling_hard_rounds"`
	// CapRounds is the cap of the day's plan week (the week's planned
	// spar_rounds, else its spar_cap_rounds), else spar_density.cap_rounds.
	CapRounds []int `json:"cap_rounds"`
	// HardCaps is the day's plan week's hard_rounds, else HardCap
	// (spar_density.hard_cap_rounds).
	HardCaps    []int   `json:"hard_caps"`
	HardCap     int     `json:"hard_cap_rounds"`
	AlertFactor float64 `json:"alert_factor"`
	WindowDays  int     `json:"window_days"`
}

// Wellness is the five-item total (5–25, 5 = best per item; McLean et al.
// 2010) against the athlete's own recent days.
type Wellness struct {
	Total []*float64 `json:"total"` // the day's earliest complete check-in
	// Mean is the mean of the totals over the window_days before the day,
	// with at least min_checkins; WatchBelow and AlertBelow are mean +
	// watch_z (alert_z) × max(SD, sd_floor): the totals at or below which
	// wellness_drop raises a watch (alert).
	Mean        []*float64 `json:"baseline_mean"`
	WatchBelow  []*float64 `json:"watch_threshold"`
	AlertBelow  []*float64 `json:"alert_threshold"`
	Checkins    []int      `json:"baseline_checkins"` // complete check-ins in the window before the day
	MinCheckins int        `json:"min_checkins"`      // wellness_drop.min_checkins
}

// CheckRange reports whether from..to is a range Build draws: two calendar
// days, to not before from, at most MaxDays days. The error is a
// *devsync.FieldError naming "from" or "to".
func CheckRange(from, to string) error {
	f, err := day.Parse(from)
	if err != nil {
		return devsync.Invalid("from", "must be a calendar day written YYYY-MM-DD; got %q", from)
	}
	t, err := day.Parse(to)
	if err != nil {
		return devsync.Invalid("to", "must be a calendar day written YYYY-MM-DD; got %q", to)
	}
	if t < f {
		return devsync.Invalid("to", "is %s, before from %s", to, from)
	}
	if n := int(t-f) + 1; n > MaxDays {
		return devsync.Invalid("to", "asks for %d days; a chart shows at most %d", n, MaxDays)
	}
	return nil
}

// Build computes the series of in.Athlete over from..to (inclusive) from
// in.Records, in.Bout and in.Settings (in.Day, Now and Location are not
// used). Records after to, deleted records and other athletes' records are
// ignored; records before from feed the baselines and averages, so pass
// the athlete's history (the load averages run from the first record). A
// range CheckRange refuses gives a Series with no days.
func Build(in flags.Input, from, to string) Series {
	s := Series{Athlete: in.Athlete.ID, From: from, To: to, Units: Units(in.Athlete)}
	if CheckRange(from, to) != nil {
		s.alloc(0)
		return s
	}
	b := newBuilder(&in, day.MustParse(from), day.MustParse(to))
	n := int(b.to-b.from) + 1
	s.alloc(n)
	for i := 0; i < n; i++ {
		s.Days[i] = (b.from + day.Number(i)).String()
	}
	b.mass(&s)
	b.jump(&s)
	b.load(&s)
	b.spar(&s)
	b.wellness(&s)
	return s
}

// Units is how an athlete wants masses shown: "lb" or "kg" (the default).
func Units(a devsync.Record) string {
	var body struct {
		Units string `json:"units"`
	}
	if json.Unmarshal(a.Body, &body) == nil && body.Units == "lb" {
		return "lb"
	}
	return "kg"
}

func (s *Series) alloc(n int) {
	ptrs := func() []*float64 { return make([]*float64, n) }
	ints := func() []int { return make([]int, n) }
	s.Days = make([]string, n)
	s.Mass = Mass{MorningKg: ptrs(), TrendKg: ptrs(), PathKg: ptrs(), LossPctWeek: ptrs(), Projections: []Projection{}, Caution: flags.CautionMass}
	s.Jump = Jump{MeanCm: ptrs(), BestCm: ptrs(), BaselineCm: ptrs(), NoisePct: ptrs(), BandLowCm: ptrs(), BandHighCm: ptrs(), TestDays: ints()}
	s.Load = Load{DailyAU: ptrs(), AcuteAU: ptrs(), ChronicAU: ptrs(), Ratio: ptrs(), WeekLevel: make([]string, n), PlannedWeekAU: ptrs(), Caution: flags.CautionLoad}
	s.Sparring = Sparring{Rounds: ints(), HardRounds: ints(), RollingRounds: ints(), RollingHard: ints(), CapRounds: ints(), HardCaps: ints()}
	s.Wellness = Wellness{Total: ptrs(), Mean: ptrs(), WatchBelow: ptrs(), AlertBelow: ptrs(), Checkins: ints()}
}

func f64(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

// recentDays is the flag engine's indexed window: check-ins, jumps and
// rounds older than this many days before the evaluated day are not read
// (the longest window a rule reads: 28-day baselines and the 42-day trend).
const recentDays = 42
