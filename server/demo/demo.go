// Package demo builds the invented demo camp: an invented gym and four
// invented fighters with six weeks of history ending on a given day, drawn
// from a fixed seed so the same day always gives the same camp. It is laid
// out so that every flag rule has something to show.
//
// Everything here is invented: the gym, the people, the bouts and every
// number. Day-to-day variability is realistic in size (morning body mass
// CV about 0.5 %, Cheuvront et al. 2004; CMJ day-to-day CV about 3–5 %,
// Markovic et al. 2004 — both as summarised in REFERENCES.md).
package demo

import (
	"encoding/binary"
	"encoding/json"
	"fmt"
	"math"
	"math/rand/v2"
	"time"

	"cornerbook/server/fightweek"
	"cornerbook/server/fitness"
	"cornerbook/server/plan"
	"cornerbook/server/records"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// Seed fixes the demo's random draws.
const Seed = 20261201

// GymName is the invented gym.
const GymName = "Millrace Boxing Gym"

// HistoryDays is how many days of history end on the seeding day.
const HistoryDays = 42

// SeedDevice numbers the seeding pushes.
const SeedDevice = "demo-seeder"

// fighter is one invented athlete and the story the demo tells about him or her.
type fighter struct {
	key       string
	name      string
	units     string
	sex       string
	birthYear int
	class     string
	limitKg   float64
	weighType string
	startMass float64
	campStart int // day offset from today (negative)
	boutIn    int // days from today to the bout
	massAt    func(d int) float64
	baseCMJ   float64
	refLoad   float64
	weeks     []records.Week
	aid       string // the athlete record's id, once added
}

// levelLoad is the share of the reference week each planned level asks
// for (the hub's default off_plan fractions), relative to medium-heavy:
// the demo's training follows the plan it was given.
var levelLoad = map[string]float64{"rest": 0.3 / 0.85, "low": 0.5 / 0.85, "medium": 0.7 / 0.85, "medium_heavy": 1, "heavy": 1 / 0.85, "taper": 0.5 / 0.85}

// planScale is how hard day d of the camp is, from the planned week.
func (f *fighter) planScale(d int) float64 {
	w := (d - f.campStart) / 7
	if d < f.campStart || w >= len(f.weeks) {
		return 0.8
	}
	return levelLoad[f.weeks[w].Level]
}

// Build returns every record of the demo camp for the history ending on
// today (the camp's local day), in the order they would have been logged.
func Build(today time.Time) []devsync.Record {
	g := &gen{rng: rand.New(rand.NewPCG(Seed, 0x5eed)), today: dayStart(today), loc: today.Location()}
	out := g.build()
	// Nothing is stamped ahead of the clock: an entry of later today is
	// stamped now, so a coach's edit of it (stamped after now) wins.
	now := today.UnixMilli()
	for i := range out {
		if out[i].Stamp.L > now {
			out[i].Stamp = devsync.HLC{L: now}
		}
	}
	return out
}

// SeedIfEmpty pushes the demo camp into an empty store through the normal
// push path. It returns how many records it stored (0 if the store already
// held data).
func SeedIfEmpty(db *storage.DB, now time.Time) (int, error) {
	seq, err := db.MaxSeq()
	if err != nil || seq > 0 {
		return 0, err
	}
	recs := Build(now)
	dev, err := db.Device(SeedDevice)
	if err != nil && err != storage.ErrNotFound {
		return 0, err
	}
	n := dev.LastN
	stored := 0
	for start := 0; start < len(recs); start += 500 {
		end := min(start+500, len(recs))
		req := devsync.PushRequest{Device: SeedDevice}
		for _, r := range recs[start:end] {
			n++
			req.Mutations = append(req.Mutations, devsync.Mutation{N: n, Op: devsync.OpUpsert, Record: r})
		}
		res, err := db.Push(req, nil)
		if err != nil {
			return stored, err
		}
		if len(res.Rejected) > 0 {
			rj := res.Rejected[0]
			return stored, fmt.Errorf("demo record %s refused: %s: %s", rj.ID, rj.Field, rj.Reason)
		}
		stored += res.Applied
	}
	return stored, nil
}

type gen struct {
	rng   *rand.Rand
	today time.Time
	loc   *time.Location
	out   []devsync.Record
}

func dayStart(t time.Time) time.Time {
	y, m, d := t.Date()
	return time.Date(y, m, d, 0, 0, 0, 0, t.Location())
}

func (g *gen) day(off int) time.Time { return g.today.AddDate(0, 0, off) }

func (g *gen) dayStr(off int) string { return g.day(off).Format("2006-01-02") }

// id makes a UUIDv7 from a time and the seeded generator (RFC 9562 layout).
func (g *gen) id(t time.Time) string {
	var b [16]byte
	ms := uint64(t.UnixMilli())
	b[0], b[1], b[2], b[3], b[4], b[5] = byte(ms>>40), byte(ms>>32), byte(ms>>24), byte(ms>>16), byte(ms>>8), byte(ms)
	binary.BigEndian.PutUint64(b[8:], g.rng.Uint64())
	binary.BigEndian.PutUint16(b[6:], uint16(g.rng.Uint32()))
	b[6] = (b[6] & 0x0f) | 0x70
	b[8] = (b[8] & 0x3f) | 0x80
	return fmt.Sprintf("%x-%x-%x-%x-%x", b[0:4], b[4:6], b[6:8], b[8:10], b[10:16])
}

// add appends one record logged at day offset off, hh:mm local time.
func (g *gen) add(kind, athlete string, off, hh, mm int, device string, body any) string {
	at := g.day(off).Add(time.Duration(hh)*time.Hour + time.Duration(mm)*time.Minute + time.Duration(g.rng.IntN(50))*time.Second)
	raw, err := json.Marshal(body)
	if err != nil {
		panic(err)
	}
	id := g.id(at)
	if kind == records.KindAthlete {
		athlete = id
	}
	g.out = append(g.out, devsync.Record{
		ID: id, Kind: kind, Athlete: athlete, Day: g.dayStr(off), At: at.Format(time.RFC3339),
		Device: device, Stamp: devsync.HLC{L: at.UnixMilli()}, Body: raw,
	})
	return id
}

func (g *gen) norm(sd float64) float64 { return g.rng.NormFloat64() * sd }

func round1(x float64) float64 { return math.Round(x*10) / 10 }
func round2(x float64) float64 { return math.Round(x*100) / 100 }

func ptr[T any](v T) *T { return &v }

const coachTablet = "demo-coach-tablet"

func (g *gen) build() []devsync.Record {
	start := -HistoryDays + 1
	// Camp-wide settings: the gym's name and the morning check-in hour.
	g.add(records.KindSettings, "", start, 6, 0, coachTablet, records.Settings{GymName: GymName, CheckinHour: ptr(10.0)})

	lb := records.LbToKg
	fs := []*fighter{
		{ // Pro lightweight, pounds. Story: mass stays above the planned
			// path, so the cut left for the final week grows; and his
			// training load jumps in the last week.
			key: "tomas", name: "Tomas Varga", units: "lb", sex: "m", birthYear: 1998,
			class: "pro_lightweight", limitKg: lb(135), weighType: "day_before", startMass: 67.2,
			campStart: start + 3, boutIn: 28, baseCMJ: 44.0, refLoad: 3300,
			massAt: func(d int) float64 { return 67.2 - 0.006*float64(d-start) },
		},
		{ // Amateur 57 kg woman, kilograms, same-day weigh-in. Story: a
			// fast-loss fortnight, concentrated urine this morning, and a
			// week of near-identical loads.
			key: "ines", name: "Ines Halloran", units: "kg", sex: "f", birthYear: 2001,
			class: "wb2025_f_57", limitKg: 57, weighType: "same_day", startMass: 60.6,
			campStart: start + 1, boutIn: 42, baseCMJ: 33.0, refLoad: 3400,
			massAt: func(d int) float64 {
				if d <= -14 {
					return 60.6 - 0.02*float64(d-start)
				}
				return 60.6 - 0.02*float64(-14-start) - 0.145*float64(d+14)
			},
		},
		{ // Amateur 71 kg, kilograms. Story: a hard-sparring streak this
			// week, with jump height and wellness falling today.
			key: "kofi", name: "Kofi Brandt", units: "kg", sex: "m", birthYear: 1996,
			class: "ol2024_m_71", limitKg: 71, weighType: "same_day", startMass: 74.2,
			campStart: start + 6, boutIn: 56, baseCMJ: 42.0, refLoad: 3400,
			massAt: func(d int) float64 { return 74.2 - 0.035*float64(d-start) },
		},
		{ // Pro welterweight, pounds. Story: a head knock five days ago, no
			// clearance yet, a sparring round logged during the stand-down,
			// a missed check-in this morning and a taper that cuts too little.
			key: "mateo", name: "Mateo Lindqvist", units: "lb", sex: "m", birthYear: 1994,
			class: "pro_welterweight", limitKg: lb(147), weighType: "day_before", startMass: 70.6,
			campStart: start, boutIn: 23, baseCMJ: 46.0, refLoad: 3400,
			massAt: func(d int) float64 { return 70.6 - 0.075*float64(d-start) },
		},
		{ // Pro welterweight, pounds, in fight week: the weigh-in tomorrow,
			// the bout the day after, under a check-weight programme
			// (30, 14 and 7 days); the 14-day check weight was over its cap.
			key: "sami", name: "Sami Arkwright", units: "lb", sex: "m", birthYear: 1999,
			class: "pro_welterweight", limitKg: lb(147), weighType: "day_before", startMass: 72.0,
			campStart: start, boutIn: 2, baseCMJ: 45.0, refLoad: 3300,
			massAt: func(d int) float64 {
				switch {
				case d <= -14:
					return 72.0 - 0.059*float64(d-start)
				case d <= -6:
					return 70.4 - 0.25*float64(d+14)
				}
				return 68.4 - 0.2*float64(d+6)
			},
		},
	}
	for _, f := range fs {
		g.fighter(f, start)
	}
	// The tests come last, so the camp's other draws stay as they were.
	for _, f := range fs {
		g.tests(f)
	}
	// Then the camps before this one, for the camp history: each drawn
	// after all of this camp's records, so this camp's draws do not move.
	for _, f := range fs {
		if pc, ok := pastCamps[f.key]; ok {
			g.pastCamp(f, pc)
		}
	}
	return g.out
}

// pastCamp is an earlier camp of a demo fighter, for the camp history.
type pastCamp struct {
	boutIn    int     // days from today to that bout (negative)
	weeks     int     // the camp's length
	limitKg   float64 // that bout's limit
	class     string
	startMass float64 // morning mass at camp start
	// weekOutPct is how far above the limit the morning mass was a week
	// before the weigh-in: he came down steadily to it, then made weight
	// about 0.5 % under the limit.
	weekOutPct float64
	baseCMJ    float64
	stages     [2]int // 30-15 IFT final stages, first week and four weeks in
	note       string
}

// pastCamps: Tomas's summer camp, when he came in on his path and jumped
// higher than now; Kofi's spring camp at the same 71 kg, a shorter one.
var pastCamps = map[string]pastCamp{
	"tomas": {boutIn: -168, weeks: 8, limitKg: records.LbToKg(135), class: "pro_lightweight", startMass: 66.4, weekOutPct: 3.5,
		baseCMJ: 46.5, stages: [2]int{21, 22}, note: "Made weight at the first attempt."},
	"kofi": {boutIn: -210, weeks: 6, limitKg: 71, class: "ol2024_m_71", startMass: 73.4, weekOutPct: 1.5,
		baseCMJ: 41.0, stages: [2]int{23, 24}, note: "Made weight at the first attempt."},
}

// pastCamp adds one earlier camp: its bout, a daily check-in, jumps,
// training and sparring as in this camp, the two 30-15 IFTs and the
// official weigh-in, which was made.
func (g *gen) pastCamp(f *fighter, pc pastCamp) {
	boutDay := pc.boutIn
	campStart := boutDay - 7*pc.weeks + 1
	weighDay := boutDay - 1
	if f.weighType == "same_day" {
		weighDay = boutDay
	}
	p := *f // the same fighter, in that camp
	p.key = f.key + "-past"
	p.campStart, p.boutIn, p.baseCMJ, p.limitKg, p.class = campStart, boutDay, pc.baseCMJ, pc.limitKg, pc.class
	p.startMass = pc.startMass
	weekOut, made := pc.limitKg*(1+pc.weekOutPct/100), pc.limitKg*0.995
	p.massAt = func(d int) float64 {
		if d <= weighDay-7 {
			return pc.startMass + (weekOut-pc.startMass)*float64(d-campStart)/float64(weighDay-7-campStart)
		}
		return weekOut + (made-weekOut)*float64(d-(weighDay-7))/7
	}
	p.weeks = planWeeks(campStart, boutDay)
	aid, phone := f.aid, "demo-phone-"+f.key
	g.add(records.KindBout, aid, campStart, 8, 0, coachTablet, records.Bout{
		Name: "Earlier bout, " + g.day(boutDay).Format("January 2006"), CampStart: g.dayStr(campStart),
		WeighIn: g.day(weighDay).Add(9 * time.Hour).Format(time.RFC3339), WeighInType: f.weighType, BoutDay: g.dayStr(boutDay),
		WeightClass: pc.class, LimitKg: round2(pc.limitKg), StartMassKg: pc.startMass, ReferenceLoadAU: f.refLoad, Weeks: p.weeks,
	})
	for d := campStart; d <= boutDay; d++ {
		wd := g.day(d).Weekday()
		if d <= weighDay {
			g.checkin(&p, aid, phone, d)
		}
		if d < boutDay-3 && (wd == time.Monday || wd == time.Wednesday || wd == time.Friday) {
			g.jump(&p, aid, d)
		}
		if wd == time.Sunday || d >= weighDay {
			continue
		}
		g.trainingDay(&p, aid, phone, d, wd)
	}
	for i, d := range []int{campStart + 1, campStart + 29} {
		g.add(records.KindFitnessTest, aid, d, 16, 0, coachTablet, records.FitnessTest{Protocol: records.ProtocolIFT, Stage: pc.stages[i]})
	}
	g.add(records.KindWeighIn, aid, weighDay, 9, 0, coachTablet, records.WeighIn{Type: "official", MassKg: round1(made), Note: pc.note})
}

func (g *gen) fighter(f *fighter, start int) {
	phone := "demo-phone-" + f.key
	aid := g.add(records.KindAthlete, "", start, 6, 0, coachTablet, records.Athlete{Name: f.name, Units: f.units, BirthYear: f.birthYear, Sex: f.sex})
	f.aid = aid

	campStart, boutDay := f.campStart, f.boutIn
	weighDay := boutDay - 1
	if f.weighType == "same_day" {
		weighDay = boutDay
	}
	weigh := g.day(weighDay).Add(9 * time.Hour)
	weeks := planWeeks(campStart, boutDay)
	if f.key == "mateo" {
		// The coach typed the taper week as "low" (a 25 % cut): off_plan
		// points out that this is lighter than the 41–60 % band.
		weeks[len(weeks)-1].Level = "low"
	}
	// The coach started from the product's starting plan for the camp's
	// content (strength and conditioning emphases), kept the older load
	// levels and sparring caps, and planned the journey to the bout.
	if gen, err := plan.Generate(g.dayStr(campStart), g.dayStr(boutDay), nil); err == nil && len(gen) == len(weeks) {
		for i := range weeks {
			weeks[i].Strength, weeks[i].Conditioning = gen[i].Strength, gen[i].Conditioning
		}
	}
	if f.key == "tomas" {
		// Week 8, a low week, opens with the flight to the bout's city:
		// 5 h west in winter, about 4 days to adjust, all in the low week.
		k := 8
		first := g.day(campStart + 7*(k-1))
		from, _ := time.LoadLocation("Europe/London")
		to, _ := time.LoadLocation("America/New_York")
		dep := time.Date(first.Year(), first.Month(), first.Day(), 9, 0, 0, 0, from)
		arr := dep.Add(8 * time.Hour).In(to)
		weeks[k-1].Travel = &records.Travel{DepartAt: dep.Format(time.RFC3339), ArriveAt: arr.Format(time.RFC3339), FromZone: "Europe/London", ToZone: "America/New_York"}
		weeks[k-1].Note = "Fly out Monday morning; easy runs and mobility until the body has adjusted."
	}
	f.weeks = weeks
	bout := records.Bout{
		Name: "Invented bout, week " + fmt.Sprint(len(weeks)), CampStart: g.dayStr(campStart), WeighIn: weigh.Format(time.RFC3339),
		WeighInType: f.weighType, BoutDay: g.dayStr(boutDay), WeightClass: f.class, LimitKg: round2(f.limitKg),
		StartMassKg: f.startMass, ReferenceLoadAU: f.refLoad, Weeks: weeks,
	}
	if f.key == "sami" {
		// The bout's contract names the check-weight programme; the
		// national board's stand-downs apply besides the ringside minimums.
		p, _ := fightweek.PresetByID("check_weights_30_14_7")
		rules := p.Rules
		bout.Rules = &rules
		bout.WeighIn = g.day(weighDay).Add(13 * time.Hour).Format(time.RFC3339)
		bout.BoutAt = g.day(boutDay).Add(21 * time.Hour).Format(time.RFC3339)
		bout.StandDownSets = []string{"pro_board_28_45"}
	}
	g.add(records.KindBout, aid, campStart, 8, 0, coachTablet, bout)

	for d := start; d <= 0; d++ {
		wd := g.day(d).Weekday()
		g.checkin(f, aid, phone, d)
		// Jumps on Monday, Wednesday and Friday mornings, three attempts.
		if wd == time.Monday || wd == time.Wednesday || wd == time.Friday || (f.key == "kofi" && d == 0) {
			g.jump(f, aid, d)
		}
		if wd == time.Sunday {
			continue // rest day: no sessions, no rounds
		}
		g.trainingDay(f, aid, phone, d, wd)
	}
	g.story(f, aid, phone)
}

// planWeeks is the step-loading plan the coach started from: three
// building weeks then a lighter one, and a taper in the final week.
func planWeeks(campStart, boutDay int) []records.Week {
	n := (boutDay - campStart + 6) / 7
	cycle := []string{"medium", "medium_heavy", "heavy", "low"}
	var ws []records.Week
	for i := 1; i <= n; i++ {
		lvl := cycle[(i-1)%4]
		if i == n {
			lvl = "taper"
		}
		ws = append(ws, records.Week{Week: i, Level: lvl, SparCapRounds: ptr(30)})
	}
	return ws
}

func (g *gen) checkin(f *fighter, aid, phone string, d int) {
	if f.key == "mateo" && d == 0 {
		return // missed this morning's check-in
	}
	if g.rng.Float64() < 0.03 && d < -2 {
		return // the odd forgotten morning
	}
	mass := round1(f.massAt(d) + g.norm(0.3))
	item := func() *int { return ptr(min(5, max(1, 3+g.rng.IntN(2)+g.rng.IntN(2)-g.rng.IntN(2)))) }
	c := records.Checkin{MassKg: ptr(mass), SleepH: ptr(round1(7.4 + g.norm(0.6))), Sleep: item(), Fatigue: item(),
		Soreness: item(), Stress: item(), Mood: item(), RHR: ptr(52 + g.rng.IntN(7))}
	if d%3 == 0 {
		c.USG = ptr(math.Round((1.010+g.rng.Float64()*0.007)*1000) / 1000)
	}
	switch {
	case f.key == "ines" && d == 0:
		c.USG = ptr(1.032) // concentrated: hydration alert
	case f.key == "ines" && d == -9:
		c.USG = ptr(1.023) // a watch-level reading earlier
	case f.key == "kofi" && d == 0:
		c.Sleep, c.Fatigue, c.Soreness, c.Stress, c.Mood = ptr(2), ptr(1), ptr(2), ptr(3), ptr(2)
		c.SleepH = ptr(5.4)
	}
	g.add(records.KindCheckin, aid, d, 7, 10+g.rng.IntN(40), phone, c)
}

func (g *gen) jump(f *fighter, aid string, d int) {
	base := f.baseCMJ * (1 + g.norm(0.025))
	if f.key == "kofi" && d == 0 {
		base = f.baseCMJ * 0.86 // a clear drop after the sparring streak
	}
	j := records.Jump{Test: "cmj", Method: "mat"}
	if f.units == "lb" {
		// This athlete's sessions use the mat's flight-time read-out.
		for i := 0; i < 3; i++ {
			h := base * (1 + g.norm(0.015))
			t := math.Sqrt(8 * h / 100 / 9.81)
			j.FlightMs = append(j.FlightMs, math.Round(t*1000))
		}
	} else {
		for i := 0; i < 3; i++ {
			j.HeightsCm = append(j.HeightsCm, round1(base*(1+g.norm(0.015))))
		}
	}
	g.add(records.KindJump, aid, d, 9, 40+g.rng.IntN(15), coachTablet, j)
}

func (g *gen) session(aid, device string, d, hh int, typ, focus string, minutes, rpe float64) {
	g.add(records.KindSession, aid, d, hh, g.rng.IntN(50), device, records.Session{Type: typ, Focus: focus, Minutes: minutes, RPE: rpe})
}

func (g *gen) rounds(aid string, d int, activity string, n, intensity int, seconds int) {
	for i := 0; i < n; i++ {
		g.add(records.KindRound, aid, d, 16, 5+4*i, coachTablet, records.Round{Activity: activity, Seconds: seconds, Intensity: intensity})
	}
}

func (g *gen) trainingDay(f *fighter, aid, phone string, d int, wd time.Weekday) {
	scale := f.planScale(d)
	if f.key == "tomas" {
		scale *= 0.8
		if d > -7 {
			scale = 2.5 // the last week's jump in load: double sessions
		}
	}
	if f.key == "ines" && d > -7 {
		// Near-identical sessions every day of the last week.
		g.session(aid, phone, d, 18, "boxing", "technical", 70, 6)
		g.rounds(aid, d, "pads", 4, 2, 180)
		return
	}
	// Boxing every training day.
	g.session(aid, phone, d, 18, "boxing", "technical", math.Round(60*scale+g.norm(8)), math.Round(5+g.rng.Float64()*2))
	switch wd {
	case time.Monday, time.Thursday:
		focus := "max_strength"
		if f.key == "mateo" {
			focus = "strength_speed" // no max-strength work all camp: residual gap
		}
		g.session(aid, phone, d, 11, "strength", focus, math.Round(50*scale), 7)
	case time.Tuesday, time.Friday:
		focus := "anaerobic"
		if wd == time.Friday {
			focus = "plyometric"
			if f.key == "kofi" && d > -12 {
				focus = "aerobic" // speed work dropped lately
			}
		}
		g.add(records.KindIntervals, aid, d, 10, 30, coachTablet, records.Intervals{
			Protocol: "rounds_3x1", Modality: "bike", WorkS: 180, RestS: 60, Reps: 6, Sets: 1, RPE: ptr(8.0), HRPeak: ptr(182 + g.rng.IntN(8)),
		})
		g.session(aid, phone, d, 10, "conditioning", focus, math.Round(35*scale), 8)
	}
	// Rounds: sparring on Tuesday and Thursday, pads and bag otherwise.
	switch {
	case f.key == "kofi" && d >= -3:
		g.rounds(aid, d, "spar", 7, 3, 180) // the hard streak
	case f.key == "mateo" && d >= -5:
		if d == -3 {
			g.rounds(aid, d, "spar", 1, 1, 120) // logged during the stand-down
		} else {
			g.rounds(aid, d, "drill", 3, 1, 180)
		}
	case wd == time.Tuesday || wd == time.Thursday:
		g.rounds(aid, d, "spar", 5+g.rng.IntN(3), 2+g.rng.IntN(2), 180)
	default:
		g.rounds(aid, d, "pads", 4, 2, 180)
		g.rounds(aid, d, "bag", 3, 2, 180)
	}
}

// story adds the one-off events.
func (g *gen) story(f *fighter, aid, phone string) {
	switch f.key {
	case "mateo":
		inc := g.add(records.KindIncident, aid, -5, 16, 40, coachTablet, records.Incident{Type: "head_knock", Note: "Heavy right hand in sparring; sat out the rest of the session.",
			SeenBy: "Dr. Ilse Marrow (camp doctor)"})
		g.add(records.KindNote, aid, -4, 9, 0, coachTablet, records.Note{Text: "Seen by the camp doctor; no contact until cleared.", By: "S&C coach"})
		// The return to sport, one step a day or slower (Patricios et al. 2023).
		g.add(records.KindRTSStep, aid, -4, 10, 0, coachTablet, records.RTSStep{Incident: inc, Step: 1, Symptoms: "Mild headache in the morning, gone by noon.", SupervisedBy: "Dr. Ilse Marrow"})
		g.add(records.KindRTSStep, aid, -3, 10, 30, coachTablet, records.RTSStep{Incident: inc, Step: 2, Symptoms: "None on the bike.", SupervisedBy: "Physio Ren Okafor"})
		g.add(records.KindRTSStep, aid, -1, 10, 30, coachTablet, records.RTSStep{Incident: inc, Step: 3, Symptoms: "None; shadow boxing and skipping.", SupervisedBy: "Physio Ren Okafor"})
	case "sami":
		// Check weights at 30, 14 and 7 days before the weigh-in (tomorrow):
		// the 14-day one 0.3 kg over its cap of limit + 5 %.
		g.add(records.KindWeighIn, aid, -29, 9, 0, coachTablet, records.WeighIn{Type: "check", MassKg: 71.4})
		g.add(records.KindWeighIn, aid, -13, 9, 0, coachTablet, records.WeighIn{Type: "check", MassKg: 70.3, Note: "Commission scale, gym-side."})
		g.add(records.KindWeighIn, aid, -6, 9, 0, coachTablet, records.WeighIn{Type: "check", MassKg: 68.5})
	case "kofi":
		g.add(records.KindDecision, aid, -1, 12, 35, coachTablet, records.Decision{Rule: "spar_spacing", Note: "Third hard day; kept it, but no sparring tomorrow unless jumps are back.", By: "S&C coach"})
	case "tomas":
		// An earlier knockdown, cleared by the doctor the next day.
		inc := g.add(records.KindIncident, aid, -30, 16, 30, coachTablet, records.Incident{Type: "knockdown", Note: "Slipped and caught a jab; stood up at once."})
		g.add(records.KindClearance, aid, -29, 10, 0, coachTablet, records.Clearance{Incident: inc, By: "Camp doctor", Note: "Examined; no signs of concussion."})
	}
}

// demoTests are each fighter's invented test results: a 30-15 IFT at the
// start of camp and again four weeks in (final stages), six 30 m sprints,
// a strength test and drop jumps from 40 cm; Kofi's maximal heart rate was
// measured, the others' is predicted from their age.
var demoTests = map[string]struct {
	stages        [2]int
	sprints       []float64
	hrMax         int
	exercise      string
	sets          []records.StrengthSet
	flight, touch [2][]float64
}{
	"tomas": {stages: [2]int{22, 23}, sprints: []float64{4.31, 4.35, 4.38, 4.44, 4.47, 4.52},
		exercise: "back squat", sets: []records.StrengthSet{{LoadKg: 60, Reps: 5, MPV: ptr(0.98)}, {LoadKg: 80, Reps: 4, MPV: ptr(0.77)}, {LoadKg: 100, Reps: 3, RIR: ptr(4), MPV: ptr(0.55)}},
		flight: [2][]float64{{512, 520, 505}, {521, 530, 518}}, touch: [2][]float64{{215, 208, 222}, {205, 199, 210}}},
	"ines": {stages: [2]int{18, 20}, sprints: []float64{4.92, 4.95, 5.03, 5.08, 5.11, 5.19},
		exercise: "trap-bar deadlift", sets: []records.StrengthSet{{LoadKg: 70, Reps: 5, RIR: ptr(2)}, {LoadKg: 80, Reps: 5, RIR: ptr(1)}, {LoadKg: 85, Reps: 4, RIR: ptr(0)}},
		flight: [2][]float64{{448, 455, 441}, {452, 460, 449}}, touch: [2][]float64{{238, 231, 245}, {230, 226, 236}}},
	"kofi": {stages: [2]int{24, 25}, sprints: []float64{4.12, 4.15, 4.19, 4.26, 4.30, 4.37}, hrMax: 196,
		exercise: "back squat", sets: []records.StrengthSet{{LoadKg: 70, Reps: 5, MPV: ptr(1.01)}, {LoadKg: 90, Reps: 4, MPV: ptr(0.80)}, {LoadKg: 110, Reps: 3, RIR: ptr(4), MPV: ptr(0.57)}},
		flight: [2][]float64{{530, 538, 526}, {524, 531, 520}}, touch: [2][]float64{{198, 204, 201}, {210, 214, 207}}},
	"mateo": {stages: [2]int{23, 23}, sprints: []float64{4.20, 4.22, 4.29, 4.33, 4.41, 4.45},
		exercise: "bench press", sets: []records.StrengthSet{{LoadKg: 50, Reps: 5, MPV: ptr(0.92)}, {LoadKg: 65, Reps: 4, MPV: ptr(0.71)}, {LoadKg: 80, Reps: 3, RIR: ptr(4), MPV: ptr(0.49)}},
		flight: [2][]float64{{540, 546, 535}, {544, 550, 541}}, touch: [2][]float64{{220, 214, 226}, {212, 209, 218}}},
}

// tests adds one fighter's tests: the first week of camp and four weeks
// later, on the laptop in the gym.
func (g *gen) tests(f *fighter) {
	t, ok := demoTests[f.key]
	if !ok {
		return
	}
	first, second := f.campStart+1, f.campStart+29
	for i, d := range []int{first, second} {
		g.add(records.KindFitnessTest, f.aid, d, 16, 0, coachTablet, records.FitnessTest{Protocol: records.ProtocolIFT, Stage: t.stages[i]})
		g.add(records.KindJump, f.aid, d, 11, 0, coachTablet, records.Jump{Test: records.JumpDrop, Method: "mat", DropCm: 40, FlightMs: t.flight[i], ContactMs: t.touch[i]})
	}
	g.add(records.KindFitnessTest, f.aid, first+1, 10, 0, coachTablet, records.FitnessTest{Protocol: records.ProtocolSprint, SprintS: t.sprints, DistanceM: 30})
	g.add(records.KindStrength, f.aid, first+2, 11, 0, coachTablet, records.Strength{Exercise: t.exercise, Sets: t.sets})
	if t.hrMax > 0 {
		g.add(records.KindFitnessTest, f.aid, first, 16, 30, coachTablet, records.FitnessTest{Protocol: records.ProtocolHRMax, HRMaxBpm: t.hrMax})
	}
	// Short intervals prescribed from each IFT (15 s at 90 % of V_IFT,
	// 2 × 12), logged as done a few days later; today's is prescribed and
	// not yet done.
	for i, d := range []int{first + 3, second + 3, 0} {
		vift := 8 + 0.5*float64(t.stages[min(i, 1)]-1)
		iv := records.Intervals{Protocol: "short_15_15", Modality: "run", WorkS: 15, RestS: 15, Reps: 12, Sets: 2, SetRestS: 180,
			PctVIFT: ptr(90.0), VIFTKmh: vift}
		if d < 0 {
			target := fitness.RepDistanceM(vift, 90, 15)
			iv.DoneReps, iv.DoneRepM = ptr(24-i), ptr(math.Round(target*(0.97-0.02*float64(i))))
			iv.HRPeak, iv.RPE = ptr(178+3*i), ptr(8.0)
		}
		g.add(records.KindIntervals, f.aid, d, 17, 0, coachTablet, iv)
	}
}
