package server

import (
	"encoding/json"
	"errors"
	"fmt"
	"maps"
	"net/http"
	"slices"
	"sort"
	"strings"
	"sync"
	"time"

	"cornerbook/server/flags"
	"cornerbook/server/records"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// History windows the flag rules need: the longest rolling window is the
// 28-day baseline plus the 28-day chronic load, and residual gaps look
// back flags.LookbackDays (120), as does the load series; incidents, clearances and
// return-to-sport steps are read in full because a stand-down can outlast
// any window.
const flagWindowDays = FlagWindowDays

// FlagWindowDays is exported for benchmarks that read the same records.
const FlagWindowDays = 120

// The window holds every day the rules look back over (a shorter one
// would not build: an array of negative length).
var _ [FlagWindowDays - flags.LookbackDays]struct{}

// flagService computes the day's flags from the store and keeps them
// current: a push invalidates only the athletes it touched, and the
// current day of those athletes is recomputed and announced.
type flagService struct {
	s *Server

	mu sync.Mutex // guards cache, gen and recs
	// cache holds computed athlete-days, the least recently used dropped
	// beyond flagCacheSize. Only days whose window holds some of the
	// athlete's records are cached: any other day (year 0001, 9999) is a
	// cheap "not enough data yet" answer, computed on each request.
	cache *flagLRU
	// gen counts the changes to each athlete's records (genAll to every
	// athlete's): a computation caches its answer only if no change
	// arrived while it read, so a request racing a push never leaves the
	// pre-push answer behind.
	gen    map[string]uint64
	genAll uint64
	// recs holds each athlete's records of the rule kinds, decoded, from
	// a window start on: a push patches them in place, so recomputing an
	// athlete after one new record costs the rules, not a re-read.
	recs map[string]*athleteRecs
	// athletes is the sorted athlete list; nil until read or after a change.
	athletes []devsync.Record
	archived []devsync.Record // athletes the coach archived: only a running stand-down of theirs is shown
	// refreshing marks athletes whose recomputation is waiting to run.
	refreshing map[string]bool
	// work counts the background goroutines (run, refresh); Server.Close
	// waits for them.
	work sync.WaitGroup
}

// athleteRecs is one athlete's decoded records: windowed kinds from
// `from` on, and every incident and clearance.
type athleteRecs struct {
	from   string
	byKind map[string][]devsync.Record // each ordered by day, then id
}

// windowedKinds are read over the rules' window; standDownKinds in full.
var (
	windowedKinds  = []string{records.KindCheckin, records.KindJump, records.KindRound, records.KindSession, records.KindIntervals, records.KindDecision, records.KindWeighIn}
	standDownKinds = []string{records.KindIncident, records.KindClearance, records.KindRTSStep}
)

// flagCacheSize bounds the cached athlete-days: a camp of 50 athletes
// keeps its last 80 days warm; each entry is a few KiB.
const flagCacheSize = 4096

func newFlagService(s *Server) *flagService {
	return &flagService{s: s, cache: newFlagLRU(flagCacheSize), gen: map[string]uint64{}, recs: map[string]*athleteRecs{}}
}

// generation is the change count of an athlete's records. f.mu must be held.
func (f *flagService) generation(id string) uint64 { return f.genAll + f.gen[id] }

// history returns an athlete's records for the rules on day: windowed
// kinds in [from, day], incidents and clearances up to day. Recent days
// are served from the decoded cache; older ones read the store.
func (f *flagService) history(id, from, day string) ([]devsync.Record, error) {
	f.mu.Lock()
	c := f.recs[id]
	g := f.generation(id)
	f.mu.Unlock()
	if c == nil || c.from > from {
		start := from
		if recent, err := addDays(f.Today(), -flagWindowDays); err == nil && recent < start {
			start = recent
		}
		loaded := &athleteRecs{from: start, byKind: map[string][]devsync.Record{}}
		for _, kind := range windowedKinds {
			if err := f.s.store.Range(id, kind, start, "9999-12-31", func(r devsync.Record) error {
				loaded.byKind[kind] = append(loaded.byKind[kind], r)
				return nil
			}); err != nil {
				return nil, err
			}
		}
		for _, kind := range standDownKinds {
			if err := f.s.store.Range(id, kind, "0000-01-01", "9999-12-31", func(r devsync.Record) error {
				loaded.byKind[kind] = append(loaded.byKind[kind], r)
				return nil
			}); err != nil {
				return nil, err
			}
		}
		c = loaded
		f.mu.Lock()
		// A push that arrived while the store was read is not in what
		// was read: keep it out of the cache (the answer is still the
		// one of the moment the read began).
		if cur := f.recs[id]; (cur == nil || cur.from > c.from) && f.generation(id) == g {
			f.recs[id] = c
		} else if cur != nil && cur.from <= from {
			c = cur
		}
		f.mu.Unlock()
	}
	f.mu.Lock()
	defer f.mu.Unlock()
	var out []devsync.Record
	for _, kind := range windowedKinds {
		for _, r := range c.byKind[kind] {
			if r.Day >= from && r.Day <= day {
				out = append(out, r)
			}
		}
	}
	for _, kind := range standDownKinds {
		for _, r := range c.byKind[kind] {
			if r.Day <= day {
				out = append(out, r)
			}
		}
	}
	return out, nil
}

// patch applies written versions to the decoded cache. f.mu must be held.
func (f *flagService) patch(r devsync.Record) {
	c := f.recs[r.Athlete]
	if c == nil {
		return
	}
	list, ok := c.byKind[r.Kind]
	if !ok && !slices.Contains(windowedKinds, r.Kind) && !slices.Contains(standDownKinds, r.Kind) {
		return
	}
	list = slices.DeleteFunc(list, func(x devsync.Record) bool { return x.ID == r.ID })
	if !r.Deleted && (r.Day >= c.from || slices.Contains(standDownKinds, r.Kind)) {
		i, _ := slices.BinarySearchFunc(list, r, func(a, b devsync.Record) int {
			if a.Day != b.Day {
				return strings.Compare(a.Day, b.Day)
			}
			return strings.Compare(a.ID, b.ID)
		})
		list = slices.Insert(list, i, r)
	}
	c.byKind[r.Kind] = list
}

func cacheKey(athlete, day string) string { return athlete + "|" + day }

// zone is the camp's time zone: the camp-wide setting, else the hub's.
func (f *flagService) zone() (*time.Location, error) {
	st, err := f.campSettings()
	if err != nil {
		return nil, err
	}
	if st.TimeZone != "" {
		loc, err := time.LoadLocation(st.TimeZone)
		if err != nil {
			return nil, fmt.Errorf("the camp's time zone %q: %w", st.TimeZone, err)
		}
		return loc, nil
	}
	return f.s.cfg.Location, nil
}

// location is zone for callers that must have a day (the status, the
// default day of a request): a failed read is logged and the hub's own
// zone used; the flags themselves use zone and fail instead.
func (f *flagService) location() *time.Location {
	loc, err := f.zone()
	if err != nil {
		f.s.logf("camp time zone: %v", err)
		return f.s.cfg.Location
	}
	return loc
}

// latestSettings decodes the newest settings record of athlete ("" for
// the camp's); none stored is the zero Settings.
func (f *flagService) latestSettings(athlete string) (records.Settings, error) {
	var out records.Settings
	var latest devsync.Record
	err := f.s.store.Range(athlete, records.KindSettings, "0000-01-01", "9999-12-31", func(r devsync.Record) error {
		if latest.ID == "" || r.Stamp.Compare(latest.Stamp) > 0 {
			latest = r
		}
		return nil
	})
	if err != nil {
		return out, fmt.Errorf("read the settings: %w", err)
	}
	if latest.ID != "" {
		if err := json.Unmarshal(latest.Body, &out); err != nil {
			return out, fmt.Errorf("the settings record %s is unreadable: %w", latest.ID, err)
		}
	}
	return out, nil
}

func (f *flagService) campSettings() (records.Settings, error) { return f.latestSettings("") }

// Today is the camp's current local day.
func (f *flagService) Today() string { return f.s.now().In(f.location()).Format("2006-01-02") }

// Athletes lists the camp's live athlete records, by name. The list is
// kept until an athlete record changes.
func (f *flagService) Athletes() ([]devsync.Record, error) {
	live, _, err := f.roster()
	return live, err
}

// roster lists the live athletes and the archived ones, each by name.
func (f *flagService) roster() (live, gone []devsync.Record, err error) {
	f.mu.Lock()
	live, gone = f.athletes, f.archived
	f.mu.Unlock()
	if live != nil {
		return live, gone, nil
	}
	live, gone = []devsync.Record{}, []devsync.Record{}
	err = f.s.store.Kind(records.KindAthlete, func(r devsync.Record) error {
		if archived(r) {
			gone = append(gone, r) // out of the day board and the sheet; entries kept
		} else {
			live = append(live, r)
		}
		return nil
	})
	if err != nil {
		return nil, nil, err
	}
	byName := func(rs []devsync.Record) {
		sort.Slice(rs, func(i, j int) bool { return athleteName(rs[i]) < athleteName(rs[j]) })
	}
	byName(live)
	byName(gone)
	f.mu.Lock()
	f.athletes, f.archived = live, gone
	f.mu.Unlock()
	return live, gone, nil
}

// archived reports whether an athlete record was archived by the coach
// (active: false).
func archived(r devsync.Record) bool {
	var a records.Athlete
	return json.Unmarshal(r.Body, &a) == nil && a.Active != nil && !*a.Active
}

func athleteName(r devsync.Record) string {
	var a records.Athlete
	json.Unmarshal(r.Body, &a)
	return a.Name
}

// Day returns the flags of one day for one athlete, or all athletes when
// athlete is "". Results are cached until a push touches the athlete.
func (f *flagService) Day(day, athlete string) ([]flags.Flag, error) {
	if athlete != "" {
		fl, err := f.forAthlete(athlete, day)
		if err != nil {
			return nil, err
		}
		out := append([]flags.Flag(nil), fl...)
		sortFlags(out)
		return out, nil
	}
	live, gone, err := f.roster()
	if err != nil {
		return nil, err
	}
	var out []flags.Flag
	for _, a := range live {
		fl, err := f.forAthlete(a.ID, day)
		if err != nil {
			return nil, err
		}
		out = append(out, fl...)
	}
	// An archived athlete leaves the board, but a stand-down still in
	// force does not: restrictions outrank tidiness.
	for _, a := range gone {
		fl, err := f.forAthlete(a.ID, day)
		if err != nil {
			return nil, err
		}
		for _, x := range fl {
			if x.Rule == flags.RuleSparOnHold && x.Status == flags.StatusFlag {
				out = append(out, x)
			}
		}
	}
	sortFlags(out)
	return out, nil
}

func (f *flagService) forAthlete(id, day string) ([]flags.Flag, error) {
	k := cacheKey(id, day)
	f.mu.Lock()
	e, ok := f.cache.get(k)
	g := f.generation(id)
	f.mu.Unlock()
	// Today's flags also depend on the clock (the check-in hour): they are
	// reused for at most todayTTL.
	if ok && (day != f.Today() || f.s.now().Sub(e.at) < todayTTL) {
		return e.flags, nil
	}
	in, err := f.input(id, day)
	if err != nil {
		return nil, err
	}
	if testHookFlagsRead != nil {
		testHookFlagsRead(id, day)
	}
	fl := flags.Compute(in)
	if !inWindow(in.Records, day) {
		return fl, nil // outside the athlete's records: not worth a cache entry
	}
	f.mu.Lock()
	if f.generation(id) == g {
		f.cache.put(k, id, fl, f.s.now())
	}
	f.mu.Unlock()
	return fl, nil
}

// inWindow reports whether any of the records lies in the rules' window
// of day (a stand-down read in full may lie before it): a day with none
// is outside the athlete's records, and its flags say "not enough data".
func inWindow(recs []devsync.Record, day string) bool {
	from, err := addDays(day, -flagWindowDays)
	if err != nil {
		return false
	}
	for i := range recs {
		if recs[i].Day >= from {
			return true
		}
	}
	return false
}

// testHookFlagsRead, when set by a test, runs after a computation has read
// its inputs and before it caches its answer.
var testHookFlagsRead func(athlete, day string)

// todayTTL is how long today's flags are reused before the clock is
// consulted again.
const todayTTL = time.Minute

// refreshToday recomputes today's flags of every athlete whose flags are
// cached and pokes dashboards if any changed (the check-in hour passing
// changes flags without any new record).
func (f *flagService) refreshToday() {
	today := f.Today()
	ath, err := f.Athletes()
	if err != nil {
		return
	}
	changed := false
	for _, a := range ath {
		k := cacheKey(a.ID, today)
		f.mu.Lock()
		e, had := f.cache.get(k)
		f.cache.remove(k)
		f.mu.Unlock()
		old := e.flags
		now, err := f.forAthlete(a.ID, today)
		if err == nil && had && !sameFlags(old, now) {
			changed = true
		}
	}
	if changed {
		f.s.hub.FlagsChanged()
	}
}

// run refreshes today's flags every todayTTL until stop is closed.
func (f *flagService) run(stop <-chan struct{}) {
	t := time.NewTicker(todayTTL)
	defer t.Stop()
	for {
		select {
		case <-stop:
			return
		case <-t.C:
			f.refreshToday()
		}
	}
}

// input gathers one athlete's records for the rules.
func (f *flagService) input(id, day string) (flags.Input, error) {
	ath, err := f.s.store.Get(id)
	if err != nil && !errors.Is(err, storage.ErrNotFound) {
		return flags.Input{}, fmt.Errorf("read athlete %s: %w", id, err)
	}
	if err != nil || ath.Deleted || ath.Kind != records.KindAthlete {
		return flags.Input{}, userError(CodeNotFound, "athlete", fmt.Sprintf("no athlete with id %q", id))
	}
	from, err := addDays(day, -flagWindowDays)
	if err != nil {
		return flags.Input{}, err
	}
	loc, err := f.zone()
	if err != nil {
		return flags.Input{}, err
	}
	in := flags.Input{Day: day, Now: f.s.now(), Location: loc, Athlete: ath}
	recs, err := f.history(id, from, day)
	if err != nil {
		return in, err
	}
	in.Records = recs
	// The bout: the one whose bout day is the nearest on or after the day;
	// else the latest before it.
	var best *devsync.Record
	var bestDay string
	err = f.s.store.Range(id, records.KindBout, "0000-01-01", "9999-12-31", func(r devsync.Record) error {
		var b records.Bout
		if err := json.Unmarshal(r.Body, &b); err != nil {
			return fmt.Errorf("the bout record %s is unreadable: %w", r.ID, err)
		}
		r2 := r
		in.Bouts = append(in.Bouts, r2)
		switch {
		case best == nil:
			best, bestDay = &r2, b.BoutDay
		case b.BoutDay >= day && (bestDay < day || b.BoutDay < bestDay):
			best, bestDay = &r2, b.BoutDay
		case b.BoutDay < day && bestDay < day && b.BoutDay > bestDay:
			best, bestDay = &r2, b.BoutDay
		}
		return nil
	})
	if err != nil {
		return in, err
	}
	in.Bout = best
	in.FirstDay, in.From = f.firstDay(id, day), from
	if in.Settings, err = f.settingsFor(id); err != nil {
		return in, err
	}
	return in, nil
}

// seriesInput is input for day to, with the records a chart from..to
// needs: every day of it is computed as the engine would on that day, from
// the LookbackDays before it.
func (f *flagService) seriesInput(id, from, to string) (flags.Input, error) {
	in, err := f.input(id, to)
	if err != nil {
		return in, err
	}
	return in, f.reach(&in, from, to)
}

// reach gives in the records a chart from..to needs, LookbackDays before
// from up to to, reading them only when in does not hold them already.
func (f *flagService) reach(in *flags.Input, from, to string) error {
	lo, err := addDays(from, -flags.LookbackDays)
	if err != nil {
		return err
	}
	if lo < in.From || to > in.Day {
		if in.Records, err = f.history(in.Athlete.ID, lo, to); err != nil {
			return err
		}
		in.From, in.Day = lo, to
	}
	return nil
}

// errFound stops a Range at its first record.
var errFound = errors.New("found")

// firstDay is the day of the athlete's first record on or before day of a
// kind that marks activity (every kind but athlete, settings, bout and
// note), "" if none: missing_checkin runs from it, however long ago.
func (f *flagService) firstDay(id, day string) string {
	first := ""
	for _, kind := range records.Kinds {
		switch kind {
		case records.KindAthlete, records.KindSettings, records.KindBout, records.KindNote:
			continue
		}
		f.s.store.Range(id, kind, "0000-01-01", day, func(r devsync.Record) error {
			if r.Day != "" && (first == "" || r.Day < first) {
				first = r.Day
			}
			return errFound
		})
	}
	return first
}

// settingsFor merges the defaults, the camp-wide settings and the
// athlete's own, later layers winning.
func (f *flagService) settingsFor(id string) (map[string]map[string]float64, error) {
	camp, err := f.campSettings()
	if err != nil {
		return nil, err
	}
	var own records.Settings
	if id != "" {
		if own, err = f.latestSettings(id); err != nil {
			return nil, err
		}
	}
	return records.Resolve(camp.Layer(), own.Layer()), nil
}

// Changed drops cached flags of the athletes the records touch and
// recomputes their current day; dashboards are poked when it changes.
func (f *flagService) Changed(recs []devsync.Record) {
	all := false
	touched := map[string]bool{}
	today := f.Today()
	otherDay := false
	for _, r := range recs {
		if r.Day != today {
			otherDay = true
		}
		if r.Athlete == "" {
			all = true
			continue
		}
		touched[r.Athlete] = true
	}
	prev := map[string][]flags.Flag{}
	f.mu.Lock()
	if all {
		f.genAll++
	}
	for a := range touched {
		f.gen[a]++
	}
	for _, r := range recs {
		f.patch(r)
		if r.Kind == records.KindAthlete {
			f.athletes, f.archived = nil, nil
		}
	}
	for a := range touched {
		if e, ok := f.cache.get(cacheKey(a, today)); ok {
			prev[a] = e.flags
		}
	}
	if all {
		f.cache.clear()
	} else {
		f.cache.removeAthletes(touched)
	}
	f.mu.Unlock()
	if all {
		f.s.hub.FlagsChanged()
		return
	}
	if otherDay {
		f.s.hub.FlagsChanged(slices.Collect(maps.Keys(touched))...)
		return
	}
	// Recompute today's flags of the touched athletes off the request
	// path, and poke dashboards only if they changed.
	for a := range touched {
		old, had := prev[a]
		f.refresh(a, today, old, had)
	}
}

// refreshDelay gathers a burst of pushes (a backlog arriving in pages)
// into one recomputation per athlete.
const refreshDelay = 100 * time.Millisecond

// refresh recomputes one athlete's flags for today after refreshDelay,
// unless a recomputation is already waiting, and pokes dashboards when the
// result differs from old (or when there was none to compare with).
func (f *flagService) refresh(athlete, today string, old []flags.Flag, had bool) {
	f.mu.Lock()
	if f.refreshing == nil {
		f.refreshing = map[string]bool{}
	}
	if f.refreshing[athlete] {
		f.mu.Unlock()
		return // the waiting recomputation reads the records as they are then
	}
	select {
	case <-f.s.stop:
		f.mu.Unlock()
		return // the hub is closing: nobody is left to poke
	default:
	}
	f.refreshing[athlete] = true
	f.work.Add(1)
	f.mu.Unlock()
	go func() {
		defer f.work.Done()
		t := time.NewTimer(refreshDelay)
		defer t.Stop()
		stopped := false
		select {
		case <-t.C:
		case <-f.s.stop:
			stopped = true
		}
		f.mu.Lock()
		delete(f.refreshing, athlete)
		f.mu.Unlock()
		if stopped {
			return
		}
		now, err := f.forAthlete(athlete, today)
		if err != nil || !had || !sameFlags(old, now) {
			f.s.hub.FlagsChanged(athlete)
		}
	}()
}

func sameFlags(a, b []flags.Flag) bool {
	ja, err1 := json.Marshal(a)
	jb, err2 := json.Marshal(b)
	return err1 == nil && err2 == nil && string(ja) == string(jb)
}

func (s *Server) handleFlags(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	q := r.URL.Query()
	day := q.Get("day")
	if day == "" {
		day = s.flags.Today()
	}
	if _, err := time.Parse("2006-01-02", day); err != nil {
		return userError(devsync.CodeBadRequest, "day", fmt.Sprintf("must be a calendar day YYYY-MM-DD; got %q", day))
	}
	athlete := q.Get("athlete")
	if who.Role == "athlete" {
		if athlete != "" && athlete != who.Athlete {
			return userError(devsync.CodeForbidden, "athlete", "this device may only see its own athlete's flags")
		}
		athlete = who.Athlete
	}
	fl, err := s.flags.Day(day, athlete)
	if err != nil {
		return err
	}
	if fl == nil {
		fl = []flags.Flag{}
	}
	// The athletes the answer may name, so a screen can show names before
	// its device has pulled the athlete records.
	live, gone, err := s.flags.roster()
	if err != nil {
		return err
	}
	named := map[string]bool{}
	for _, x := range fl {
		named[x.Athlete] = true
	}
	names := []athleteRef{}
	for _, a := range append(append([]devsync.Record{}, live...), gone...) {
		if (athlete == "" || a.ID == athlete) && (named[a.ID] || !archived(a)) {
			names = append(names, athleteRef{ID: a.ID, Name: athleteName(a)})
		}
	}
	writeJSON(w, http.StatusOK, map[string]any{"day": day, "flags": fl, "athletes": names})
	return nil
}

// athleteRef names an athlete in an answer about flags.
type athleteRef struct {
	ID   string `json:"id"`
	Name string `json:"name"`
}

func addDays(day string, n int) (string, error) {
	t, err := time.Parse("2006-01-02", day)
	if err != nil {
		return "", userError(devsync.CodeBadRequest, "day", fmt.Sprintf("must be a calendar day YYYY-MM-DD; got %q", day))
	}
	return t.AddDate(0, 0, n).Format("2006-01-02"), nil
}

// sortFlags orders a camp's flags as flags.Rank does: stand-downs in
// force first, then alert, watch, info and "not enough data yet", keeping
// each athlete's own order within a rank.
func sortFlags(fs []flags.Flag) {
	sort.SliceStable(fs, func(i, j int) bool { return flags.Rank(&fs[i]) < flags.Rank(&fs[j]) })
}

// Flags returns the flags of one day (all athletes when athlete is ""),
// most serious first.
func (s *Server) Flags(day, athlete string) ([]flags.Flag, error) {
	if _, err := time.Parse("2006-01-02", day); err != nil {
		return nil, userError(devsync.CodeBadRequest, "day", fmt.Sprintf("must be a calendar day YYYY-MM-DD; got %q", day))
	}
	return s.flags.Day(day, athlete)
}

// AthleteNames maps athlete ids to names.
func (s *Server) AthleteNames() map[string]string {
	out := map[string]string{}
	ath, _ := s.flags.Athletes()
	for _, a := range ath {
		out[a.ID] = athleteName(a)
	}
	return out
}

// DropFlagCache empties the flag cache (benchmarks of the cold path).
func (s *Server) DropFlagCache() {
	s.flags.mu.Lock()
	s.flags.cache.clear()
	s.flags.recs = map[string]*athleteRecs{}
	s.flags.athletes, s.flags.archived = nil, nil
	s.flags.mu.Unlock()
}

// RecordsChanged tells the flag service which records a push (or an
// import outside the HTTP path) wrote.
func (s *Server) RecordsChanged(recs []devsync.Record) { s.flags.Changed(recs) }
