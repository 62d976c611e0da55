package records

import (
	"encoding/json"
	"math"
	"sort"
	"strings"
	"time"
)

// Enumerations of the record format (PRODUCT.md "Record format").
var (
	Units        = []string{"kg", "lb"}
	Sexes        = []string{"f", "m"}
	WeighInTypes = []string{"day_before", "same_day"}
	Levels       = []string{"rest", "low", "medium", "medium_heavy", "heavy", "taper"}
	JumpTests    = []string{JumpCMJ, JumpDrop}
	JumpMethods  = []string{"mat", "force_plate", "other"}
	Activities   = []string{"spar", "pads", "bag", "drill", "other"}
	SessionTypes = []string{"boxing", "spar", "conditioning", "strength", "other"}
	// SessionFocuses are the emphasis ids (Emphases) and "technical".
	SessionFocuses = append(EmphasisIDs(""), "technical")
	IncidentTypes  = []string{"head_knock", "knockdown", "stoppage", "knockout", "knockout_loc", "injury"}
)

// Plausibility ranges. Each carries its source; "common practice" means
// no single published source, only what practitioners accept.
const (
	MinMassKg, MaxMassKg   = 25, 250      // common practice, no source: youth flyweight to super-heavy
	MinLimitKg, MaxLimitKg = 40, 150      // common practice: the lightest and heaviest limits in use are 102 lb and 224 lb
	MinSleepH, MaxSleepH   = 0, 16        // common practice, no source
	MinRHR, MaxRHR         = 25, 150      // bpm; common practice, no source (trained resting rates reach the 30s)
	MinFlightMs            = 200          // REFERENCES.md §1.2 (common practice): 0.20–1.00 s
	MaxFlightMs            = 1000         //
	MinHeightCm            = 4.9          // REFERENCES.md §1.2: h = g·t²/8 at 200 ms, to 0.1 cm
	MaxHeightCm            = 122.6        // REFERENCES.md §1.2: h = g·t²/8 at 1000 ms, to 0.1 cm
	MinAttempts            = 1            // common practice: three attempts are usual
	MaxAttempts            = 6            //
	MinUSG, MaxUSG         = 1.000, 1.040 // REFERENCES.md §6.4 (common practice)
	MinRoundS, MaxRoundS   = 10, 600      // common practice: rounds are 2–3 min; drills shorter, long bag rounds up to 10 min
	MinSessionMin          = 1            // REFERENCES.md §3.1 (common practice): 1–300 min
	MaxSessionMin          = 300          //
	MaxIntervalS           = 3600         // s per work or rest bout; common practice, no source
	MaxReps, MaxSets       = 200, 20      // common practice, no source
	MinHR, MaxHR           = 40, 230      // bpm; common practice, no source
	MinBirthYear           = 1940         // common practice, no source
	MinAgeYears            = 10           // youngest athlete: common practice, no source
	MaxSparCap             = 200          // rounds per week; common practice, no source
	MaxCampDays            = 365          // a camp is 6–12 weeks (PRODUCT.md); a year catches a mistyped year
	MaxDayBeforeDays       = 3            // a day-before weigh-in is 1–3 days before the bout; common practice
	MaxReferenceLoadAU     = 50000        // weekly AU: 14 sessions of 300 min at RPE 10 is 42,000
	MaxCheckinHour         = 23.5         // local hour
	MaxBoutNameLen         = 120
	MaxShortLen            = 40   // modality, protocol id, jump session id
	limitMatchKg           = 0.01 // a limit typed or shown to 0.01 kg still names its class
)

func validateAthlete(c *check, raw json.RawMessage) (any, error) {
	var b Athlete
	present, err := decodeBody(raw, &b, KindAthlete)
	if err != nil {
		return nil, err
	}
	c.present = present
	if err := name("body.name", b.Name, "the athlete's name"); err != nil {
		return nil, err
	}
	if b.Units == "" {
		b.Units = "kg" // storage is kg; display in kg unless chosen otherwise
	}
	if err := oneOf("body.units", b.Units, Units); err != nil {
		return nil, err
	}
	if present.has("birth_year") {
		hi := c.at.Year() - MinAgeYears
		if c.now != nil && c.now.Year()-MinAgeYears < hi {
			hi = c.now.Year() - MinAgeYears
		}
		if b.BirthYear < MinBirthYear || b.BirthYear > hi {
			return nil, fe("body.birth_year", "must be between %d and %d (athletes aged %d or over); got %d",
				MinBirthYear, hi, MinAgeYears, b.BirthYear)
		}
	}
	if b.Sex != "" {
		if err := oneOf("body.sex", b.Sex, Sexes); err != nil {
			return nil, fe("body.sex", "must be f, m or left out; got %q", b.Sex)
		}
	}
	return &b, nil
}

func validateSettings(c *check, raw json.RawMessage) (any, error) {
	var b Settings
	if _, err := decodeBody(raw, &b, KindSettings); err != nil {
		return nil, err
	}
	rules := make([]string, 0, len(b.Thresholds))
	for r := range b.Thresholds {
		rules = append(rules, r)
	}
	sort.Strings(rules)
	for _, id := range rules {
		rule, ok := RuleByID(id)
		if !ok {
			return nil, fe("body.thresholds."+id, "is not a flag rule")
		}
		names := make([]string, 0, len(b.Thresholds[id]))
		for k := range b.Thresholds[id] {
			names = append(names, k)
		}
		sort.Strings(names)
		for _, k := range names {
			field := "body.thresholds." + id + "." + k
			prm, ok := ParamOf(id, k)
			if !ok {
				if len(rule.Params) == 0 {
					return nil, fe(field, "is not a setting: this flag rule has no thresholds of its own")
				}
				return nil, fe(field, "is not a setting of this flag rule")
			}
			v := b.Thresholds[id][k]
			if err := between(field, v, prm.Min, prm.Max, prm.Unit); err != nil {
				return nil, err
			}
			if prm.Whole && v != math.Trunc(v) {
				return nil, fe(field, "must be a whole number of %s; got %s", prm.Unit, fmtNum(v))
			}
		}
	}
	perAthlete := c.rec.Athlete != ""
	if b.TimeZone != "" {
		if perAthlete {
			return nil, fe("body.time_zone", "is a camp-wide setting; set it on the camp's settings (no athlete)")
		}
		if err := loadZone("body.time_zone", b.TimeZone); err != nil {
			return nil, err
		}
	}
	if b.GymName != "" {
		if perAthlete {
			return nil, fe("body.gym_name", "is a camp-wide setting; set it on the camp's settings (no athlete)")
		}
		if err := name("body.gym_name", b.GymName, "the gym's name"); err != nil {
			return nil, err
		}
	}
	if b.CheckinHour != nil {
		if err := between("body.checkin_hour", *b.CheckinHour, 0, MaxCheckinHour, "h (local time, 10.5 = 10:30)"); err != nil {
			return nil, err
		}
	}
	return &b, nil
}

func validateBout(c *check, raw json.RawMessage) (any, error) {
	var b Bout
	present, err := decodeBody(raw, &b, KindBout)
	if err != nil {
		return nil, err
	}
	if err := text("body.name", b.Name, MaxBoutNameLen, false); err != nil {
		return nil, err
	}
	if b.CampStart == "" {
		return nil, fe("body.camp_start", "is required: the first day of the camp, YYYY-MM-DD")
	}
	start, err := parseDay("body.camp_start", b.CampStart)
	if err != nil {
		return nil, err
	}
	if b.BoutDay == "" {
		return nil, fe("body.bout_day", "is required: the day of the bout, YYYY-MM-DD")
	}
	boutDay, err := parseDay("body.bout_day", b.BoutDay)
	if err != nil {
		return nil, err
	}
	if boutDay.Before(start) {
		return nil, fe("body.bout_day", "is %s, before the camp starts on %s", DayWords(b.BoutDay), DayWords(b.CampStart))
	}
	if days := int(boutDay.Sub(start).Hours() / 24); days > MaxCampDays {
		return nil, fe("body.bout_day", "is %d days after the camp start; a camp is at most %d days — check the year", days, MaxCampDays)
	}
	loc := time.UTC
	if b.WeighInZone != "" {
		if err := loadZone("body.weigh_in_zone", b.WeighInZone); err != nil {
			return nil, err
		}
		loc, _ = time.LoadLocation(b.WeighInZone)
	}
	if b.WeighIn == "" {
		return nil, fe("body.weigh_in", "is required: the weigh-in date and time, RFC 3339 with offset (e.g. 2026-03-13T10:00:00+01:00)")
	}
	wi, err := time.Parse(time.RFC3339, b.WeighIn)
	if err != nil {
		return nil, fe("body.weigh_in", "must be a date and time in RFC 3339 with offset (e.g. 2026-03-13T10:00:00+01:00); got %q", b.WeighIn)
	}
	if b.WeighInZone != "" {
		wi = wi.In(loc)
	}
	wiDay := civil(wi)
	if wiDay.After(boutDay) {
		return nil, fe("body.weigh_in", "is on %s, after the bout day, %s", DayWords(wiDay.Format(time.DateOnly)), DayWords(b.BoutDay))
	}
	if wiDay.Before(start) {
		return nil, fe("body.weigh_in", "is on %s, before the camp starts on %s", DayWords(wiDay.Format(time.DateOnly)), DayWords(b.CampStart))
	}
	if err := oneOf("body.weigh_in_type", b.WeighInType, WeighInTypes); err != nil {
		return nil, err
	}
	gap := int(boutDay.Sub(wiDay).Hours() / 24)
	switch {
	case b.WeighInType == "same_day" && gap != 0:
		return nil, fe("body.weigh_in_type", "is set to \"Same day\", but it is on %s and the bout on %s; choose \"Day before\" or move the weigh-in",
			DayWords(wiDay.Format(time.DateOnly)), DayWords(b.BoutDay))
	case b.WeighInType == "day_before" && (gap < 1 || gap > MaxDayBeforeDays):
		return nil, fe("body.weigh_in_type", "is set to \"Day before\", so it must be 1 to %d days before the bout on %s; it is on %s",
			MaxDayBeforeDays, DayWords(b.BoutDay), DayWords(wiDay.Format(time.DateOnly)))
	}
	if err := boutLimit(&b, present); err != nil {
		return nil, err
	}
	if !present.has("start_mass_kg") {
		return nil, fe("body.start_mass_kg", "is required: the fighter's morning mass at camp start, %d to %d kg", MinMassKg, MaxMassKg)
	}
	if err := between("body.start_mass_kg", b.StartMassKg, MinMassKg, MaxMassKg, "kg"); err != nil {
		return nil, err
	}
	if err := between("body.reference_load_au", b.ReferenceLoadAU, 0, MaxReferenceLoadAU, "AU per week"); err != nil {
		return nil, err
	}
	prev := ""
	for i, k := range b.Path {
		field := "body.path[" + itoa(i) + "]"
		if k.Day == "" {
			return nil, fe(field+".day", "is required: the day of this point of the planned path, YYYY-MM-DD")
		}
		d, err := parseDay(field+".day", k.Day)
		if err != nil {
			return nil, err
		}
		if d.Before(start) || d.After(boutDay) {
			return nil, fe(field+".day", "is %s, outside the camp (%s to %s)", DayWords(k.Day), DayWords(b.CampStart), DayWords(b.BoutDay))
		}
		if prev != "" && k.Day <= prev {
			return nil, fe(field+".day", "is %s; path days must be in order, each after the one before (%s)", DayWords(k.Day), DayWords(prev))
		}
		prev = k.Day
		if err := between(field+".mass_kg", k.MassKg, MinMassKg, MaxMassKg, "kg"); err != nil {
			return nil, err
		}
	}
	for i, w := range b.Weeks {
		field := "body.weeks[" + itoa(i) + "]"
		if w.Week != i+1 {
			return nil, fe(field+".week", "must be %d: weeks are numbered 1, 2, 3, … in order; got %d", i+1, w.Week)
		}
		if ws := start.AddDate(0, 0, 7*i); ws.After(boutDay) {
			return nil, fe(field+".week", "week %d would start on %s, after the bout on %s", w.Week, DayWords(ws.Format(time.DateOnly)), DayWords(b.BoutDay))
		}
		if err := oneOf(field+".level", w.Level, Levels); err != nil {
			return nil, err
		}
		if w.SparCapRounds != nil {
			if err := betweenInt(field+".spar_cap_rounds", *w.SparCapRounds, 0, MaxSparCap, "sparring rounds"); err != nil {
				return nil, err
			}
		}
		if err := validateWeek(field, w, start.AddDate(0, 0, 7*i)); err != nil {
			return nil, err
		}
	}
	if err := checkBoutFightWeek(&b); err != nil {
		return nil, err
	}
	return &b, nil
}

// boutLimit checks the weight class and limit. A known class fixes the
// limit (filled in exactly when absent); an unlimited class (heavyweight,
// "+92 kg") has limit_kg 0 or absent, which the flag rules read as "no
// mass limit"; "custom" or no class takes any limit in range.
func boutLimit(b *Bout, present fieldSet) error {
	hasLimit := present.has("limit_kg") && b.LimitKg != 0
	if b.WeightClass != "" && b.WeightClass != ClassCustom {
		cl, ok := ClassByID(b.WeightClass)
		if !ok {
			return fe("body.weight_class", "%q is not in the weight-class table; pick a class or use \"custom\" with limit_kg", b.WeightClass)
		}
		if cl.Unlimited() {
			if hasLimit {
				return fe("body.limit_kg", "must be left out: %s has no upper limit; choose a custom limit for a catchweight", cl.Label)
			}
			b.LimitKg = 0
			return nil
		}
		if !hasLimit {
			b.LimitKg = cl.LimitKg()
			return nil
		}
		if math.Abs(b.LimitKg-cl.LimitKg()) > limitMatchKg {
			return fe("body.limit_kg", "is %s kg, but %s is %s %s (%.3f kg); choose a custom limit for a catchweight",
				fmtNum(b.LimitKg), cl.Label, fmtNum(cl.Limit), cl.Unit, cl.LimitKg())
		}
		b.LimitKg = cl.LimitKg()
		return nil
	}
	if !hasLimit {
		return fe("body.limit_kg", "is required: the weigh-in limit, %d to %d kg (or pick a weight class)", MinLimitKg, MaxLimitKg)
	}
	return between("body.limit_kg", b.LimitKg, MinLimitKg, MaxLimitKg, "kg")
}

func validateCheckin(c *check, raw json.RawMessage) (any, error) {
	var b Checkin
	if _, err := decodeBody(raw, &b, KindCheckin); err != nil {
		return nil, err
	}
	if b.MassKg == nil && b.SleepH == nil && b.Sleep == nil && b.Fatigue == nil && b.Soreness == nil &&
		b.Stress == nil && b.Mood == nil && b.RHR == nil && b.USG == nil && strings.TrimSpace(b.Note) == "" {
		return nil, fe("body", "a check-in needs at least one entry: body mass, hours of sleep, the wellness items, resting heart rate, USG or a note")
	}
	if b.MassKg != nil {
		if err := between("body.mass_kg", *b.MassKg, MinMassKg, MaxMassKg, "kg"); err != nil {
			return nil, err
		}
	}
	if b.SleepH != nil {
		if err := between("body.sleep_h", *b.SleepH, MinSleepH, MaxSleepH, "h"); err != nil {
			return nil, err
		}
	}
	// McLean et al. 2010: each item 1–5, 5 = best.
	for _, it := range []struct {
		name string
		v    *int
	}{{"sleep", b.Sleep}, {"fatigue", b.Fatigue}, {"soreness", b.Soreness}, {"stress", b.Stress}, {"mood", b.Mood}} {
		if it.v != nil && (*it.v < 1 || *it.v > 5) {
			return nil, fe("body."+it.name, "must be a whole number from 1 to 5 (5 = best); got %d", *it.v)
		}
	}
	if b.RHR != nil {
		if err := betweenInt("body.rhr_bpm", *b.RHR, MinRHR, MaxRHR, "bpm"); err != nil {
			return nil, err
		}
	}
	if b.USG != nil && (*b.USG < MinUSG || *b.USG > MaxUSG) {
		return nil, fe("body.usg", "must be a urine specific gravity between 1.000 and 1.040 (e.g. 1.020); got %s", fmtNum(*b.USG))
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateJump(c *check, raw json.RawMessage) (any, error) {
	var b Jump
	present, err := decodeBody(raw, &b, KindJump)
	if err != nil {
		return nil, err
	}
	if b.Test == "" {
		b.Test = JumpCMJ
	}
	if err := oneOf("body.test", b.Test, JumpTests); err != nil {
		return nil, err
	}
	if b.Method != "" {
		if err := oneOf("body.method", b.Method, JumpMethods); err != nil {
			return nil, err
		}
	}
	attempts := func(field string, n int) error {
		if n < MinAttempts || n > MaxAttempts {
			return fe(field, "must hold %d to %d attempts; got %d", MinAttempts, MaxAttempts, n)
		}
		return nil
	}
	switch {
	case len(b.FlightMs) > 0:
		// Flight time is what the mat measured; heights are derived from
		// it, replacing any heights sent along.
		if err := attempts("body.flight_ms", len(b.FlightMs)); err != nil {
			return nil, err
		}
		b.HeightsCm = make([]float64, len(b.FlightMs))
		for i, ms := range b.FlightMs {
			if math.IsNaN(ms) || ms < MinFlightMs || ms > MaxFlightMs {
				return nil, fe("body.flight_ms["+itoa(i)+"]", "must be between %d and %d ms (a jump of %.1f to %.1f cm); got %s",
					MinFlightMs, MaxFlightMs, JumpHeightCm(MinFlightMs), JumpHeightCm(MaxFlightMs), fmtNum(ms))
			}
			b.HeightsCm[i] = round4(JumpHeightCm(ms))
		}
	case len(b.HeightsCm) > 0:
		if err := attempts("body.heights_cm", len(b.HeightsCm)); err != nil {
			return nil, err
		}
		for i, h := range b.HeightsCm {
			if err := between("body.heights_cm["+itoa(i)+"]", h, MinHeightCm, MaxHeightCm, "cm"); err != nil {
				return nil, err
			}
		}
	default:
		return nil, fe("body.heights_cm", "is required: %d to %d attempts, as jump heights in cm or flight times in ms",
			MinAttempts, MaxAttempts)
	}
	b.BestCm, b.MeanCm = b.HeightsCm[0], 0
	for _, h := range b.HeightsCm {
		b.BestCm = math.Max(b.BestCm, h)
		b.MeanCm += h
	}
	b.MeanCm = round4(b.MeanCm / float64(len(b.HeightsCm)))
	if err := dropJump(&b, present); err != nil {
		return nil, err
	}
	if err := text("body.session", b.Session, MaxShortLen, false); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateRound(c *check, raw json.RawMessage) (any, error) {
	var b Round
	present, err := decodeBody(raw, &b, KindRound)
	if err != nil {
		return nil, err
	}
	if err := oneOf("body.activity", b.Activity, Activities); err != nil {
		return nil, err
	}
	if !present.has("seconds") {
		return nil, fe("body.seconds", "is required: the round's length, %d to %d s", MinRoundS, MaxRoundS)
	}
	if err := betweenInt("body.seconds", b.Seconds, MinRoundS, MaxRoundS, "s"); err != nil {
		return nil, err
	}
	if !present.has("intensity") {
		return nil, fe("body.intensity", "is required: 1 easy, 2 moderate or 3 hard")
	}
	if b.Intensity < 1 || b.Intensity > 3 {
		return nil, fe("body.intensity", "must be 1 (easy), 2 (moderate) or 3 (hard); got %d", b.Intensity)
	}
	if err := text("body.partner", b.Partner, MaxNameLen, false); err != nil {
		return nil, err
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateIntervals(c *check, raw json.RawMessage) (any, error) {
	var b Intervals
	present, err := decodeBody(raw, &b, KindIntervals)
	if err != nil {
		return nil, err
	}
	// A template id from Protocols, "custom", or a camp's own name for a
	// protocol: templates are a starting point, not a closed list.
	if err := text("body.protocol", b.Protocol, MaxShortLen, false); err != nil {
		return nil, err
	}
	if strings.TrimSpace(b.Modality) == "" {
		return nil, fe("body.modality", "is required: what the intervals were done on, e.g. %s", strings.Join(Modalities, ", "))
	}
	if err := text("body.modality", b.Modality, MaxShortLen, false); err != nil {
		return nil, err
	}
	if math.IsNaN(b.WorkS) || b.WorkS <= 0 || b.WorkS > MaxIntervalS {
		return nil, fe("body.work_s", "must be more than 0 and at most %d s per repetition; got %s", MaxIntervalS, fmtNum(b.WorkS))
	}
	for _, f := range []struct {
		name string
		v    float64
	}{{"rest_s", b.RestS}, {"set_rest_s", b.SetRestS}} {
		if err := between("body."+f.name, f.v, 0, MaxIntervalS, "s"); err != nil {
			return nil, err
		}
	}
	if !present.has("reps") {
		return nil, fe("body.reps", "is required: repetitions per set, 1 to %d", MaxReps)
	}
	if err := betweenInt("body.reps", b.Reps, 1, MaxReps, "repetitions per set"); err != nil {
		return nil, err
	}
	if !present.has("sets") {
		b.Sets = 1 // one set unless told otherwise
	}
	if err := betweenInt("body.sets", b.Sets, 1, MaxSets, "sets"); err != nil {
		return nil, err
	}
	if b.DoneReps != nil {
		if err := betweenInt("body.done_reps", *b.DoneReps, 0, b.Reps*b.Sets, "repetitions (reps × sets)"); err != nil {
			return nil, err
		}
	}
	if b.HRPeak != nil {
		if err := betweenInt("body.hr_peak", *b.HRPeak, MinHR, MaxHR, "bpm"); err != nil {
			return nil, err
		}
	}
	if b.HRMean != nil {
		if err := betweenInt("body.hr_mean", *b.HRMean, MinHR, MaxHR, "bpm"); err != nil {
			return nil, err
		}
		if b.HRPeak != nil && *b.HRMean > *b.HRPeak {
			return nil, fe("body.hr_mean", "is %d bpm, above the peak of %d bpm", *b.HRMean, *b.HRPeak)
		}
	}
	if b.RPE != nil {
		if err := rpe("body.rpe", *b.RPE); err != nil {
			return nil, err
		}
	}
	if !present.has("minutes") || b.MinutesDerived {
		b.Minutes = IntervalsSeconds(b.WorkS, b.RestS, b.Reps, b.Sets, b.SetRestS) / 60
		b.MinutesDerived = true
		if b.Minutes > MaxSessionMin {
			return nil, fe("body.minutes", "adds up to %s min (sets × reps × (work + rest) + rests between sets); a session is at most %d min — check reps and sets",
				fmtNum(math.Round(b.Minutes*10)/10), MaxSessionMin)
		}
	} else if err := between("body.minutes", b.Minutes, MinSessionMin, MaxSessionMin, "min"); err != nil {
		return nil, err
	}
	b.LoadAU = 0
	if b.RPE != nil {
		b.LoadAU = SessionLoad(*b.RPE, b.Minutes)
	}
	if err := intervalTargets(&b, present); err != nil {
		return nil, err
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateSession(c *check, raw json.RawMessage) (any, error) {
	var b Session
	present, err := decodeBody(raw, &b, KindSession)
	if err != nil {
		return nil, err
	}
	if err := oneOf("body.type", b.Type, SessionTypes); err != nil {
		return nil, err
	}
	if b.Focus != "" {
		if err := oneOf("body.focus", b.Focus, SessionFocuses); err != nil {
			return nil, err
		}
	}
	if !present.has("minutes") {
		return nil, fe("body.minutes", "is required: the session's length, %d to %d min", MinSessionMin, MaxSessionMin)
	}
	if err := between("body.minutes", b.Minutes, MinSessionMin, MaxSessionMin, "min"); err != nil {
		return nil, err
	}
	if !present.has("rpe") {
		return nil, fe("body.rpe", "is required: the session RPE, 0 to 10 on the CR-10 scale")
	}
	if err := rpe("body.rpe", b.RPE); err != nil {
		return nil, err
	}
	b.LoadAU = SessionLoad(b.RPE, b.Minutes)
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateIncident(c *check, raw json.RawMessage) (any, error) {
	var b Incident
	if _, err := decodeBody(raw, &b, KindIncident); err != nil {
		return nil, err
	}
	if err := oneOf("body.type", b.Type, IncidentTypes); err != nil {
		return nil, err
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	if err := checkIncidentMedical(&b); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateClearance(c *check, raw json.RawMessage) (any, error) {
	var b Clearance
	if _, err := decodeBody(raw, &b, KindClearance); err != nil {
		return nil, err
	}
	if err := checkID("body.incident", b.Incident, "the id of the incident this clearance ends"); err != nil {
		return nil, err
	}
	if err := name("body.by", b.By, "who gave the clearance, e.g. the ringside doctor"); err != nil {
		return nil, err
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateDecision(c *check, raw json.RawMessage) (any, error) {
	var b Decision
	if _, err := decodeBody(raw, &b, KindDecision); err != nil {
		return nil, err
	}
	// No rule: a decision for the athlete's whole day.
	if b.Rule != "" {
		if err := oneOf("body.rule", b.Rule, RuleIDs); err != nil {
			return nil, err
		}
	}
	if strings.TrimSpace(b.Note) == "" {
		return nil, fe("body.note", "is required: what was decided, up to %d characters", MaxNoteLen)
	}
	if err := note("body.note", b.Note); err != nil {
		return nil, err
	}
	if err := text("body.by", b.By, MaxNameLen, false); err != nil {
		return nil, err
	}
	return &b, nil
}

func validateNote(c *check, raw json.RawMessage) (any, error) {
	var b Note
	if _, err := decodeBody(raw, &b, KindNote); err != nil {
		return nil, err
	}
	if strings.TrimSpace(b.Text) == "" {
		return nil, fe("body.text", "is required: the note, up to %d characters", MaxNoteLen)
	}
	if err := note("body.text", b.Text); err != nil {
		return nil, err
	}
	if b.Audience != "" {
		if err := oneOf("body.audience", b.Audience, Audiences); err != nil {
			return nil, err
		}
	}
	if err := text("body.by", b.By, MaxNameLen, false); err != nil {
		return nil, err
	}
	return &b, nil
}

// round4 rounds a derived height to 0.0001 cm (1 µm), far below what a
// jump mat resolves, so exports carry no binary-fraction noise.
func round4(v float64) float64 { return math.Round(v*1e4) / 1e4 }

func itoa(i int) string {
	return fmtNum(float64(i))
}

// DayWords names a YYYY-MM-DD day in a refusal as a coach reads it, with
// its year, since a mistyped year is a usual cause: "Sat 12 Dec 2026".
// Anything else is given back as it is. The app's checks.js words days the
// same way.
func DayWords(s string) string {
	t, err := time.Parse(time.DateOnly, s)
	if err != nil {
		return s
	}
	return t.Format("Mon 2 Jan 2006")
}
