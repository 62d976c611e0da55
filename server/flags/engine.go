package flags

import (
	"encoding/json"
	"math"
	"sort"
	"strconv"
	"strings"
	"time"

	"cornerbook/server/flags/day"
	"cornerbook/server/medical"
	devsync "cornerbook/sync"
)

// recentDays is how many days ending the evaluated day are indexed in full
// (check-ins, jumps, rounds): the longest window any rule reads (the
// 28-day baselines plus the day, and the mass trend's 42 days).
const recentDays = 42

// LookbackDays bounds the load series and the search for a quality's
// last session (residual_gap): the series starts at the athlete's first
// record or this many days before the evaluated day, whichever is later,
// and sessions before that are not read. The chronic average keeps a
// weight of (1 − 2/29)^120 < 0.0002 of a load that old (λ = 2/(N+1), N =
// 28; Williams et al. 2017), and residual effects last at most 30 ± 5 days
// (Issurin 2008). So the flags are the same whether a caller passes the
// whole history or, as the hub does, a window of at least this many days;
// and a mistyped year cannot make the engine allocate centuries of days.
// Incidents, clearances, return-to-sport steps and decisions are read
// however old they are.
const LookbackDays = 120

type checkin struct {
	id   string
	at   string
	body CheckinBody
}

type jump struct {
	id      string
	at      string
	method  string
	heights []float64 // valid attempts, cm
}

type round struct {
	id   string
	at   string
	body RoundBody
}

type session struct {
	id     string
	day    day.Number
	loadAU float64
	focus  string
}

type incident struct {
	id   string
	at   string
	day  day.Number
	kind string
	// loc: consciousness was lost; clinicianDay: the clinician's date.
	loc          bool
	clinicianDay string
}

// sparRound is a sparring round anywhere in the history given (stand-downs
// can outlast the indexed window).
type sparRound struct {
	id  string
	at  string
	day day.Number
}

// decision is a decision record as the engine reads it.
type decision struct {
	id   string
	at   string
	day  day.Number
	body decisionBody
	rec  *devsync.Record
}

type recent struct {
	checkins []checkin
	jumps    []jump
	rounds   []round
}

type engine struct {
	in    *Input
	today day.Number
	first day.Number // earliest day among the athlete's records (≤ today)
	// active: the athlete has a record on or before today of a kind that
	// marks activity (not athlete, settings, bout or note).
	active bool

	recent [recentDays]recent // recent[i] is day today−i
	loads  []float64          // daily session load from first to today
	// sessions in the last recentDays days, oldest first (for inputs).
	sessions   []session
	lastFocus  map[string]session // latest session per focus
	incidents  []incident
	clearances map[string]string // incident id → clearance record id (on or before today)
	clearedBy  map[string]string
	// rtsSteps are each incident's return-to-sport steps up to today.
	rtsSteps map[string][]medical.LoggedStep
	// birthYear is the athlete's, 0 when not recorded.
	birthYear int
	decisions []decision  // every decision up to today (today's acknowledge flags; spar_on_hold ones answer rounds)
	sparLog   []sparRound // every sparring round up to today

	bout     *plan
	bouts    []*plan // every bout given, by camp start
	out      []Flag
	units    string    // the athlete's display units, "kg" or "lb"
	weighIns []weighIn // weigh-in records up to today
}

func newEngine(in *Input) (*engine, bool) {
	today, err := day.Parse(in.Day)
	if err != nil {
		return nil, false
	}
	e := &engine{in: in, today: today, first: today, units: "kg"}
	var ab struct {
		Units     string `json:"units"`
		BirthYear int    `json:"birth_year"`
	}
	if json.Unmarshal(in.Athlete.Body, &ab) == nil {
		if ab.Units == "lb" {
			e.units = "lb"
		}
		e.birthYear = ab.BirthYear
	}
	athlete := in.Athlete.ID
	// Pass 1: find the first day, so the load series can be sized once.
	for i := range in.Records {
		r := &in.Records[i]
		if r.Deleted || (athlete != "" && r.Athlete != athlete) {
			continue
		}
		d, ok := dayOf(r.Day)
		if ok && d <= today && countsAsActivity(r.Kind) {
			e.active = true
			if d < e.first {
				e.first = d
			}
		}
	}
	if d, ok := dayOf(in.FirstDay); ok && d <= today {
		e.active = true
		if from, ok := dayOf(in.From); ok && d < from {
			d = from // sessions before From are not in Records
		}
		if d < e.first {
			e.first = d
		}
	}
	if e.first < today-LookbackDays {
		e.first = today - LookbackDays
	}
	e.loads = make([]float64, int(today-e.first)+1)
	// Pass 2: index each record under its day, decoding only the bodies a
	// rule will read.
	var oldRounds []int
	for i := range in.Records {
		r := &in.Records[i]
		if r.Deleted || (athlete != "" && r.Athlete != athlete) {
			continue
		}
		d, ok := dayOf(r.Day)
		if !ok || d > today {
			continue
		}
		age := int(today - d)
		switch r.Kind {
		case kindCheckin:
			if age < recentDays {
				var b CheckinBody
				if json.Unmarshal(r.Body, &b) == nil {
					e.recent[age].checkins = append(e.recent[age].checkins, checkin{r.ID, r.At, b})
				}
			}
		case kindJump:
			if age < recentDays {
				var b JumpBody
				if json.Unmarshal(r.Body, &b) == nil && (b.Test == "" || b.Test == "cmj") {
					if h := ValidHeights(&b); len(h) > 0 {
						e.recent[age].jumps = append(e.recent[age].jumps, jump{r.ID, r.At, b.Method, h})
					}
				}
			}
		case kindRound:
			if age >= recentDays {
				// Older rounds matter only inside a stand-down: decoded
				// below once the incidents are known.
				oldRounds = append(oldRounds, i)
				continue
			}
			var b RoundBody
			if json.Unmarshal(r.Body, &b) == nil {
				e.recent[age].rounds = append(e.recent[age].rounds, round{r.ID, r.At, b})
				if b.Activity == "spar" {
					e.sparLog = append(e.sparLog, sparRound{r.ID, r.At, d})
				}
			}
		case kindSession:
			var b SessionBody
			if d < e.first || !decodeSession(r.Body, &b) {
				continue
			}
			s := session{id: r.ID, day: d, loadAU: b.Load(), focus: b.Focus}
			e.loads[d-e.first] += s.loadAU
			if age < recentDays {
				e.sessions = append(e.sessions, s)
			}
			if s.focus != "" {
				if e.lastFocus == nil {
					e.lastFocus = map[string]session{}
				}
				if old, ok := e.lastFocus[s.focus]; !ok || s.day > old.day {
					e.lastFocus[s.focus] = s
				}
			}
		case kindIncident:
			var b incidentBody
			if json.Unmarshal(r.Body, &b) == nil {
				e.incidents = append(e.incidents, incident{r.ID, r.At, d, b.Type, b.LOC != nil && *b.LOC, b.ClinicianDay})
			}
		case kindClearance:
			var b clearanceBody
			if json.Unmarshal(r.Body, &b) == nil && b.Incident != "" {
				if e.clearances == nil {
					e.clearances, e.clearedBy = map[string]string{}, map[string]string{}
				}
				e.clearances[b.Incident] = r.ID
				e.clearedBy[b.Incident] = b.By
			}
		case kindDecision:
			var b decisionBody
			if json.Unmarshal(r.Body, &b) == nil {
				e.decisions = append(e.decisions, decision{r.ID, r.At, d, b, r})
			}
		case kindWeighIn:
			e.addWeighIn(r, d)
		case kindRTSStep:
			var b rtsStepBody
			if json.Unmarshal(r.Body, &b) == nil && b.Incident != "" {
				if e.rtsSteps == nil {
					e.rtsSteps = map[string][]medical.LoggedStep{}
				}
				e.rtsSteps[b.Incident] = append(e.rtsSteps[b.Incident], medical.LoggedStep{ID: r.ID, Step: b.Step, At: r.At})
			}
		}
	}
	// Everything in one canonical order (day, time, id), so the flags do not
	// depend on the order the records were given in.
	sort.Slice(e.sessions, func(i, j int) bool {
		a, b := &e.sessions[i], &e.sessions[j]
		return a.day < b.day || a.day == b.day && a.id < b.id
	})
	sort.Slice(e.incidents, func(i, j int) bool {
		a, b := &e.incidents[i], &e.incidents[j]
		return a.day < b.day || a.day == b.day && earlier(a.at, a.id, b.at, b.id)
	})
	for k := range e.recent {
		r := &e.recent[k]
		if len(r.checkins) > 1 {
			sort.Slice(r.checkins, func(i, j int) bool {
				return earlier(r.checkins[i].at, r.checkins[i].id, r.checkins[j].at, r.checkins[j].id)
			})
		}
		if len(r.jumps) > 1 {
			sort.Slice(r.jumps, func(i, j int) bool { return earlier(r.jumps[i].at, r.jumps[i].id, r.jumps[j].at, r.jumps[j].id) })
		}
		if len(r.rounds) > 1 {
			sort.Slice(r.rounds, func(i, j int) bool { return earlier(r.rounds[i].at, r.rounds[i].id, r.rounds[j].at, r.rounds[j].id) })
		}
	}
	if len(e.incidents) > 0 {
		for _, i := range oldRounds {
			r := &in.Records[i]
			d, _ := dayOf(r.Day)
			var b RoundBody
			if d >= e.incidents[0].day && json.Unmarshal(r.Body, &b) == nil && b.Activity == "spar" {
				e.sparLog = append(e.sparLog, sparRound{r.ID, r.At, d})
			}
		}
	}
	sort.Slice(e.sparLog, func(i, j int) bool {
		a, b := &e.sparLog[i], &e.sparLog[j]
		return a.day < b.day || a.day == b.day && earlier(a.at, a.id, b.at, b.id)
	})
	if in.Bout != nil && !in.Bout.Deleted {
		e.bout = parsePlan(in.Bout)
	}
	e.collectBouts()
	return e, true
}

// collectBouts gathers every bout given (Bout, Bouts and bout records),
// once each, sorted by camp start.
func (e *engine) collectBouts() {
	seen := map[string]bool{}
	addBout := func(r *devsync.Record) {
		if r == nil || r.Deleted || r.Kind != kindBout || seen[r.ID] || (e.in.Athlete.ID != "" && r.Athlete != "" && r.Athlete != e.in.Athlete.ID) {
			return
		}
		seen[r.ID] = true
		if p := parsePlan(r); p != nil {
			e.bouts = append(e.bouts, p)
		}
	}
	if e.in.Bout != nil {
		r := *e.in.Bout
		if r.Kind == "" {
			r.Kind = kindBout
		}
		addBout(&r)
	}
	for i := range e.in.Bouts {
		addBout(&e.in.Bouts[i])
	}
	for i := range e.in.Records {
		addBout(&e.in.Records[i])
	}
	sort.SliceStable(e.bouts, func(i, j int) bool { return e.bouts[i].campStart < e.bouts[j].campStart })
}

// betweenCamps reports whether d falls after a bout day and before the
// next bout's camp start (or after the last bout with none planned): the
// athlete is not in camp.
func (e *engine) betweenCamps(d day.Number) bool {
	after := false
	for _, p := range e.bouts {
		if p.hasBoutDay && p.boutDay < d {
			after = true
		}
	}
	if !after {
		return false
	}
	for _, p := range e.bouts {
		if p.hasCamp && p.campStart <= d && (!p.hasBoutDay || p.boutDay >= d) {
			return false // in a camp again
		}
	}
	return true
}

func dayOf(s string) (day.Number, bool) {
	if s == "" {
		return 0, false
	}
	d, err := day.Parse(s)
	return d, err == nil
}

// Load is the session load in AU: the stored derived value, else
// RPE × minutes (Foster et al. 2001).
func (b *SessionBody) Load() float64 {
	if b.LoadAU > 0 {
		return b.LoadAU
	}
	if b.RPE > 0 && b.Minutes > 0 {
		return b.RPE * b.Minutes
	}
	return 0
}

// at returns the indexed data of day d (nil outside the recent window).
func (e *engine) at(d day.Number) *recent {
	age := int(e.today - d)
	if age < 0 || age >= recentDays {
		return nil
	}
	return &e.recent[age]
}

// historyDays is how many calendar days of records the athlete has,
// today included.
func (e *engine) historyDays() int { return int(e.today-e.first) + 1 }

// dailyLoads returns the daily loads of the n days ending today (days
// before the first record count as 0).
func (e *engine) dailyLoads(n int) []float64 {
	out := make([]float64, n)
	for i := 0; i < n; i++ {
		idx := len(e.loads) - n + i
		if idx >= 0 {
			out[i] = e.loads[idx]
		}
	}
	return out
}

// sessionIDs lists the sessions from day from through today.
func (e *engine) sessionIDs(from day.Number) []string {
	var ids []string
	for _, s := range e.sessions {
		if s.day >= from && s.loadAU > 0 {
			ids = append(ids, s.id)
		}
	}
	return ids
}

// morningMass returns the day's morning mass: the earliest check-in of the
// day (by its time) that carries one.
func (e *engine) morningMass(d day.Number) (float64, string, bool) {
	r := e.at(d)
	if r == nil {
		return 0, "", false
	}
	for _, c := range r.checkins { // in time order (newEngine)
		if c.body.MassKg != nil && *c.body.MassKg > 0 {
			return *c.body.MassKg, c.id, true
		}
	}
	return 0, "", false
}

// massSeries lists morning masses from day from through today, oldest first.
func (e *engine) massSeries(from day.Number) (days []day.Number, kg []float64, ids []string) {
	if lo := e.today - recentDays + 1; from < lo {
		from = lo
	}
	for d := from; d <= e.today; d++ {
		if m, id, ok := e.morningMass(d); ok {
			days = append(days, d)
			kg = append(kg, m)
			ids = append(ids, id)
		}
	}
	return
}

func f64(v float64) *float64 {
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return nil
	}
	return &v
}

func (e *engine) add(f Flag) {
	f.Athlete = e.in.Athlete.ID
	f.Day = e.in.Day
	if f.Status == "" {
		f.Status = StatusFlag
	}
	if f.Inputs == nil {
		f.Inputs = []string{}
	}
	e.out = append(e.out, f)
}

func (e *engine) forming(rule, title, reason string, inputs []string) {
	e.add(Flag{Rule: rule, Level: LevelInfo, Status: StatusForming, Title: title, Reason: reason, Inputs: inputs})
}

// has reports whether a flag of rule at level was raised today.
func (e *engine) has(rule, level string) bool {
	for i := range e.out {
		if e.out[i].Rule == rule && e.out[i].Level == level && e.out[i].Status == StatusFlag {
			return true
		}
	}
	return false
}

// countsAsActivity reports whether a record of kind marks the athlete as
// active ("first record"): every kind but athlete, settings, bout and note.
func countsAsActivity(kind string) bool {
	return kind != kindAthlete && kind != kindSettings && kind != kindBout && kind != kindNote
}

// newer reports whether decision a supersedes b: the later version stamp,
// then the larger id.
func newer(a, b *decision) bool {
	if c := a.rec.Stamp.Compare(b.rec.Stamp); c != 0 {
		return c > 0
	}
	return a.id > b.id
}

func (d *decision) ref(scope string) *DecisionRef {
	return &DecisionRef{ID: d.id, Note: d.body.Note, By: d.body.By, At: d.at, Scope: scope}
}

// todaysDecisions returns today's latest decision per rule and the latest
// whole-day decision (a decision without a rule).
func (e *engine) todaysDecisions() (byRule map[string]*decision, whole *decision) {
	byRule = map[string]*decision{}
	for i := range e.decisions {
		dc := &e.decisions[i]
		if dc.day != e.today {
			continue
		}
		if dc.body.Rule == "" {
			if whole == nil || newer(dc, whole) {
				whole = dc
			}
			continue
		}
		if old := byRule[dc.body.Rule]; old == nil || newer(dc, old) {
			byRule[dc.body.Rule] = dc
		}
	}
	return byRule, whole
}

// attachDecisions marks flags acknowledged by a decision recorded the same
// day: one naming the flag's rule (scope "flag") or, failing that, one for
// the whole day (scope "day"); with several, the latest version wins.
// Flags that chose their decision themselves (sparring during a
// stand-down) keep it.
func (e *engine) attachDecisions() {
	byRule, whole := e.todaysDecisions()
	for i := range e.out {
		f := &e.out[i]
		if f.ownDecision {
			continue
		}
		if dc := byRule[f.Rule]; dc != nil {
			f.Decision = dc.ref(ScopeFlag)
		} else if whole != nil {
			f.Decision = whole.ref(ScopeDay)
		}
	}
}

// earlier orders two records of one day by their time, then by id: the
// engine's canonical order (an unreadable time counts as the earliest).
func earlier(aAt, aID, bAt, bID string) bool {
	ta, tb := atOf(aAt), atOf(bAt)
	if !ta.Equal(tb) {
		return ta.Before(tb)
	}
	return aID < bID
}

// atOf is a record's at as a time; the zero time (earliest) if it does
// not parse, as morningMass reads it.
func atOf(s string) time.Time {
	t, _ := time.Parse(time.RFC3339, s)
	return t
}

// num writes v with the given decimals.
func num(v float64, decimals int) string { return strconv.FormatFloat(v, 'f', decimals, 64) }

// levelWords names a planned load level as a coach says it.
func levelWords(level string) string {
	switch level {
	case "medium_heavy":
		return "medium-heavy"
	case "":
		return "unplanned"
	}
	return strings.ReplaceAll(level, "_", " ")
}
