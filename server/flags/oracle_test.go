package flags

import (
	"encoding/json"
	"fmt"
	"math"
	"math/rand"
	"sort"
	"testing"
	"time"

	devsync "cornerbook/sync"
)

// An independent check of the settled readings (PRODUCT.md) on invented
// camps: each reading is computed here again, straight from the records
// and without the engine's helpers, for every athlete-day of camps with
// several check-ins and jump tests a day, two bouts, head incidents,
// clearances, rounds around them and decisions.

type oracleCamp struct {
	c       *camp
	bouts   []devsync.Record
	s1, b1  int // first camp start, first bout day (offsets)
	w1, w2  int // weigh-in days
	s2, b2  int
	firstAt int // first activity record
	from    int
	to      int
}

func clock(r *rand.Rand) string {
	return fmt.Sprintf("T%02d:%02d:00+01:00", 6+r.Intn(14), r.Intn(60))
}

func inventCamp(seed int64) *oracleCamp {
	r := rand.New(rand.NewSource(seed))
	o := &oracleCamp{c: &camp{}, s1: 0, w1: 55, b1: 56, s2: 80, w2: 130, b2: 131, from: -20, to: 150}
	mk := func(id string, s, w, b int) devsync.Record {
		return boutRecord(id, map[string]any{"camp_start": d(s), "weigh_in": d(w) + "T17:00:00+01:00", "weigh_in_type": "day_before",
			"bout_day": d(b), "limit_kg": 66.7, "start_mass_kg": 72})
	}
	o.bouts = []devsync.Record{mk("bout-a", o.s1, o.w1, o.b1), mk("bout-b", o.s2, o.w2, o.b2)}
	c := o.c
	o.firstAt = -12 + r.Intn(6)
	mass := 73.0
	for i := o.firstAt; i <= o.to; i++ {
		if i == o.firstAt {
			c.session(d(i), 45, 4, "")
		}
		// Check-ins: none, one or several, at random times and with
		// random fields.
		for k, n := 0, r.Intn(4); k < n; k++ {
			body := map[string]any{}
			if r.Intn(3) > 0 {
				mass -= 0.02 + r.Float64()*0.3
				if mass < 60 {
					mass += 10
				}
				body["mass_kg"] = math.Round(mass*10) / 10
			}
			for _, it := range []string{"fatigue", "sleep", "soreness", "stress", "mood"} {
				if r.Intn(4) > 0 {
					body[it] = 1 + r.Intn(5)
				}
			}
			if r.Intn(3) == 0 {
				body["usg"] = 1.005 + float64(r.Intn(30))/1000
			}
			c.add(kindCheckin, d(i), body)
			c.last().At = d(i) + clock(r)
		}
		// Jump tests: sometimes two a day, a typo now and then.
		if r.Intn(3) == 0 {
			for k, n := 0, 1+r.Intn(2); k < n; k++ {
				h := []float64{38 + r.Float64()*6, 38 + r.Float64()*6, 38 + r.Float64()*6}
				if r.Intn(8) == 0 {
					h[0] = 1.5
				}
				c.jump(d(i), h...)
				c.last().At = d(i) + clock(r)
			}
		}
		if r.Intn(2) == 0 {
			c.session(d(i), float64(30+r.Intn(90)), float64(3+r.Intn(6)), "")
		}
		if r.Intn(4) == 0 {
			for k, n := 0, 1+r.Intn(4); k < n; k++ {
				c.add(kindRound, d(i), map[string]any{"activity": "spar", "seconds": 180, "intensity": 1 + r.Intn(3)})
				c.last().At = d(i) + clock(r)
			}
		}
	}
	// Incidents: a head knock cleared three weeks later, a stoppage
	// cleared early (its minimum still runs), a knockdown never cleared.
	hk := c.add(kindIncident, d(20), map[string]any{"type": "head_knock"})
	c.last().At = d(20) + "T15:30:00+01:00"
	c.add(kindClearance, d(41), map[string]any{"incident": hk, "by": "Dr. A. Example"})
	st := c.add(kindIncident, d(90), map[string]any{"type": "stoppage"})
	c.last().At = d(90) + "T12:00:00+01:00"
	c.add(kindClearance, d(95), map[string]any{"incident": st, "by": "Dr. A. Example"})
	c.add(kindIncident, d(140), map[string]any{"type": "knockdown"})
	c.last().At = d(140) + "T18:00:00+01:00"
	c.add(kindDecision, d(30), map[string]any{"rule": RuleSparOnHold, "note": "spoke to the boxing coach"})
	c.last().At = d(30) + "T13:00:00+01:00"
	c.add(kindNote, d(o.firstAt-5), map[string]any{"text": "signed up"})
	return o
}

func (o *oracleCamp) kinds(kind string, dayStr string) []devsync.Record {
	var out []devsync.Record
	for _, r := range o.c.recs {
		if r.Kind == kind && r.Day == dayStr && !r.Deleted {
			out = append(out, r)
		}
	}
	sort.SliceStable(out, func(i, j int) bool { return o.at(out[i]).Before(o.at(out[j])) })
	return out
}

func (o *oracleCamp) at(r devsync.Record) time.Time {
	t, err := time.Parse(time.RFC3339, r.At)
	if err != nil {
		panic(err)
	}
	return t
}

func (o *oracleCamp) body(r devsync.Record) map[string]any {
	var m map[string]any
	if err := json.Unmarshal(r.Body, &m); err != nil {
		panic(err)
	}
	return m
}

// morning is the day's mass: the earliest check-in with one.
func (o *oracleCamp) morning(i int) (float64, bool) {
	for _, r := range o.kinds(kindCheckin, d(i)) {
		if v, ok := o.body(r)["mass_kg"].(float64); ok {
			return v, true
		}
	}
	return 0, false
}

// inCampSpan: from the first record through a bout day, or from a camp
// start through its bout day.
func (o *oracleCamp) inCampSpan(i int) bool {
	if i < o.firstAt {
		return false
	}
	switch {
	case i <= o.b1:
		return true
	case i < o.s2:
		return false
	case i <= o.b2:
		return true
	}
	return false
}

func TestSettledReadingsHoldOnInventedCamps(t *testing.T) {
	for seed := int64(1); seed <= 4; seed++ {
		o := inventCamp(seed)
		for i := o.from; i <= o.to; i++ {
			in := o.c.input(d(i))
			in.Bout, in.Bouts = nil, o.bouts
			if i > o.b1 {
				in.Bout = &o.bouts[1]
			} else {
				in.Bout = &o.bouts[0]
			}
			in.Now = nowAfterHour
			fs := Compute(in)
			where := fmt.Sprintf("seed %d, %s", seed, d(i))
			o.checkDay(t, where, i, fs)
		}
	}
}

func (o *oracleCamp) checkDay(t *testing.T, where string, i int, fs []Flag) {
	t.Helper()
	titles := map[string]bool{}
	for _, f := range fs {
		if titles[f.Title] || f.Title == "" {
			t.Errorf("%s: title %q empty or repeated", where, f.Title)
		}
		titles[f.Title] = true
		if f.Value != nil && (math.IsNaN(*f.Value) || math.IsInf(*f.Value, 0)) {
			t.Errorf("%s: %s value %v", where, f.Rule, *f.Value)
		}
	}
	checkins := o.kinds(kindCheckin, d(i))

	// missing_checkin: inside the span and no check-in at any time.
	want := o.inCampSpan(i) && len(checkins) == 0
	if got := len(rule(fs, RuleMissingCheckin)) == 1; got != want {
		t.Errorf("%s: missing_checkin %v, want %v", where, got, want)
	}

	// hydration: the day's highest usg (Hew-Butler et al. 2018: ≥ 1.020
	// watch; Casa et al. 2000: > 1.030 alert).
	usg := 0.0
	for _, r := range checkins {
		if v, ok := o.body(r)["usg"].(float64); ok && v > usg {
			usg = v
		}
	}
	hyd := rule(fs, RuleHydration)
	switch {
	case usg >= 1.020:
		if len(hyd) != 1 || *hyd[0].Value != usg {
			t.Errorf("%s: hydration %s, want usg %.3f", where, describe(hyd), usg)
		}
	case len(hyd) != 0:
		t.Errorf("%s: hydration flag for usg %.3f", where, usg)
	}

	// Wellness: each item from the earliest check-in having it.
	items := map[string]float64{}
	for _, r := range checkins {
		for _, it := range []string{"fatigue", "sleep", "soreness", "stress", "mood"} {
			if v, ok := o.body(r)[it].(float64); ok {
				if _, seen := items[it]; !seen {
					items[it] = v
				}
			}
		}
	}
	worst := false
	for _, v := range items {
		worst = worst || v <= 1
	}
	total := 0.0
	for _, v := range items {
		total += v
	}
	for _, f := range rule(fs, RuleWellnessDrop) {
		if f.Title == "Wellness item at its worst" {
			if !worst {
				t.Errorf("%s: item-at-worst without a day item at 1: %s", where, f.Reason)
			}
			worst = false
			continue
		}
		if len(items) != 5 || *f.Value != total {
			t.Errorf("%s: wellness total %v, want %v from %d items", where, *f.Value, total, len(items))
		}
	}
	if worst {
		t.Errorf("%s: a day item at 1 raised nothing", where)
	}

	// Jumps: the earliest test by at, its valid attempts (4.9–122.6 cm).
	if js := rule(fs, RuleJumpDrop); len(js) == 1 {
		var mean float64
		n := 0
		for _, r := range o.kinds(kindJump, d(i)) {
			for _, h := range o.body(r)["heights_cm"].([]any) {
				if v := h.(float64); v >= 4.9 && v <= 122.6 {
					mean += v
					n++
				}
			}
			if n > 0 {
				break // the first test with a valid attempt is the day's
			}
		}
		if n == 0 || math.Abs(*js[0].Value-mean/float64(n)) > 1e-9 {
			t.Errorf("%s: CMJ %v, want %v", where, *js[0].Value, mean/float64(n))
		}
	}

	// mass_loss_fast: silent from 7 days before a weigh-in's day through
	// its bout day and between camps; otherwise the 14-day least-squares
	// slope of morning masses as % of the 42-day EWMA (λ = 0.25, seeded
	// with the first mass) per week (Garthe et al. 2011 thresholds 1.0 and
	// 1.5 %/week).
	silent := (i >= o.w1-7 && i <= o.b1) || (i >= o.w2-7 && i <= o.b2) || (i > o.b1 && i < o.s2) || i > o.b2
	var xs, ys []float64
	for k := i - 13; k <= i; k++ {
		if m, ok := o.morning(k); ok {
			xs, ys = append(xs, float64(k)), append(ys, m)
		}
	}
	trend, seeded := 0.0, false
	for k := i - 41; k <= i; k++ {
		if m, ok := o.morning(k); ok {
			if !seeded {
				trend, seeded = m, true
			} else {
				trend += 0.25 * (m - trend)
			}
		}
	}
	var flagged []Flag
	for _, f := range rule(fs, RuleMassLossFast) {
		if f.Status == StatusFlag {
			flagged = append(flagged, f)
		}
	}
	if silent || len(ys) < 7 {
		if len(flagged) != 0 {
			t.Errorf("%s: mass_loss_fast while silent or forming: %s", where, describe(flagged))
		}
	} else {
		mx, my := 0.0, 0.0
		for k := range xs {
			mx, my = mx+xs[k], my+ys[k]
		}
		mx, my = mx/float64(len(xs)), my/float64(len(xs))
		num, den := 0.0, 0.0
		for k := range xs {
			num += (xs[k] - mx) * (ys[k] - my)
			den += (xs[k] - mx) * (xs[k] - mx)
		}
		loss := -num / den * 7 / trend * 100
		level := ""
		if loss > 1.5 {
			level = LevelAlert
		} else if loss > 1.0 {
			level = LevelWatch
		}
		switch {
		case level == "" && len(flagged) != 0:
			t.Errorf("%s: mass_loss_fast %s, want none (loss %.3f)", where, describe(flagged), loss)
		case level != "" && (len(flagged) != 1 || flagged[0].Level != level || math.Abs(*flagged[0].Value-loss) > 1e-9):
			t.Errorf("%s: mass_loss_fast %s, want %s at %.4f", where, describe(flagged), level, loss)
		}
	}

	// Stand-downs: head knock d(20) cleared d(41); stoppage d(90) cleared
	// d(95), minimum 30 days (Neidecker et al. 2019) to d(120); knockdown
	// d(140) never cleared.
	var wantRes []string
	if i >= 20 && i < 41 {
		wantRes = append(wantRes, "head_knock")
	}
	if i >= 90 && i < 120 {
		wantRes = append(wantRes, "stoppage")
	}
	if i >= 140 {
		wantRes = append(wantRes, "knockdown")
	}
	var gotRes []string
	for k, f := range fs {
		if f.Restriction != nil {
			gotRes = append(gotRes, f.Restriction.IncidentType)
			if f.Level != LevelInfo || k >= len(wantRes) {
				t.Errorf("%s: restriction %s not info or not first", where, f.Title)
			}
		}
	}
	if fmt.Sprint(gotRes) != fmt.Sprint(wantRes) {
		t.Errorf("%s: restrictions %v, want %v", where, gotRes, wantRes)
	}
	// Sparring during a running stand-down: rounds after the incident's
	// at, not answered by the spar_on_hold decision of d(30) 13:00 (which
	// answers rounds before it).
	type span struct {
		from, to int
		at       string
	}
	var running []span
	for _, s := range []span{{20, 40, "T15:30:00+01:00"}, {90, 119, "T12:00:00+01:00"}, {140, 1000, "T18:00:00+01:00"}} {
		if i >= s.from && i <= s.to {
			running = append(running, s)
		}
	}
	count := 0
	for k := o.from; k <= i; k++ {
		for _, r := range o.kinds(kindRound, d(k)) {
			in := false
			for _, s := range running {
				start, _ := time.Parse(time.RFC3339, d(s.from)+s.at)
				in = in || k > s.from || (k == s.from && o.at(r).After(start))
			}
			decided, _ := time.Parse(time.RFC3339, d(30)+"T13:00:00+01:00")
			answered := i > 30 && !o.at(r).After(decided)
			if in && !answered {
				count++
			}
		}
	}
	var alerts []Flag
	for _, f := range rule(fs, RuleSparOnHold) {
		if f.Level == LevelAlert {
			alerts = append(alerts, f)
		}
	}
	switch {
	case count == 0 && len(alerts) != 0:
		t.Errorf("%s: sparring alert with no round in a stand-down: %s", where, describe(alerts))
	case count > 0 && (len(alerts) != 1 || int(*alerts[0].Value) != count):
		t.Errorf("%s: sparring alert %s, want %d rounds", where, describe(alerts), count)
	}

}

// The flags do not depend on the order the records come in (a store reads
// them by kind and day, an export by sequence, a test by creation).
func TestComputeIgnoresRecordOrder(t *testing.T) {
	o := inventCamp(7)
	shuffled := append([]devsync.Record(nil), o.c.recs...)
	rand.New(rand.NewSource(7)).Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
	for i := o.from; i <= o.to; i += 3 {
		in := o.c.input(d(i))
		in.Bouts, in.Now = o.bouts, nowAfterHour
		a, _ := json.Marshal(Compute(in))
		in.Records = shuffled
		b, _ := json.Marshal(Compute(in))
		if string(a) != string(b) {
			t.Fatalf("%s: flags depend on the records' order:\n%s\n%s", d(i), a, b)
		}
	}
}
