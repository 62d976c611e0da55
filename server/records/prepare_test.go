package records

import (
	"bytes"
	"encoding/json"
	"errors"
	"math"
	"strings"
	"testing"
	"time"

	devsync "cornerbook/sync"
)

// The invented camp of these tests: athlete "ath-1", recorded on a tablet.
const testAt = "2026-03-02T07:05:00+01:00"

func mk(kind, athlete, day, body string) devsync.Record {
	return devsync.Record{
		ID: "01HZX3V6Q8R2M4T7Y9B1C3D5E7", Kind: kind, Athlete: athlete, Day: day,
		At: testAt, Device: "tablet-1", Stamp: devsync.HLC{L: 1772431500000}, Body: json.RawMessage(body),
	}
}

func edit(r devsync.Record, f func(*devsync.Record)) devsync.Record { f(&r); return r }

const goodBout = `{"name":"vs. invented opponent","camp_start":"2026-02-02","weigh_in":"2026-03-27T10:00:00+01:00",
 "weigh_in_zone":"Europe/Madrid","weigh_in_type":"day_before","bout_day":"2026-03-28","weight_class":"pro_lightweight",
 "start_mass_kg":68.4,"reference_load_au":2500,
 "path":[{"day":"2026-02-02","mass_kg":68.4},{"day":"2026-03-20","mass_kg":64.3},{"day":"2026-03-27","mass_kg":61.2}],
 "weeks":[{"week":1,"level":"medium","spar_cap_rounds":0},{"week":2,"level":"medium_heavy"},{"week":3,"level":"heavy","spar_cap_rounds":24},
  {"week":4,"level":"low"},{"week":5,"level":"heavy"},{"week":6,"level":"heavy"},{"week":7,"level":"medium"},{"week":8,"level":"taper"}]}`

// bout builds a bout body from goodBout with some fields replaced (nil deletes).
func bout(t *testing.T, set map[string]any) string {
	t.Helper()
	var m map[string]any
	if err := json.Unmarshal([]byte(goodBout), &m); err != nil {
		t.Fatal(err)
	}
	for k, v := range set {
		if v == nil {
			delete(m, k)
		} else {
			m[k] = v
		}
	}
	b, err := json.Marshal(m)
	if err != nil {
		t.Fatal(err)
	}
	return string(b)
}

func goodRecords(t *testing.T) map[string]devsync.Record {
	return map[string]devsync.Record{
		"athlete":            edit(mk(KindAthlete, "", "", `{"name":"Ana Invented","units":"lb","birth_year":2001,"sex":"f","active":true}`), func(r *devsync.Record) { r.Athlete = r.ID }),
		"athlete no athlete": mk(KindAthlete, "", "", `{"name":"Bo Madeup"}`),
		"settings camp":      mk(KindSettings, "", "", `{"time_zone":"Europe/Madrid","checkin_hour":9.5,"gym_name":"Invented Boxing Club","thresholds":{"spar_density":{"cap_rounds":24}}}`),
		"settings athlete":   mk(KindSettings, "ath-1", "", `{"thresholds":{"jump_drop":{"watch_pct":6,"alert_pct":12,"window_days":21},"hydration":{"watch_usg":1.025}},"checkin_hour":8}`),
		"settings empty":     mk(KindSettings, "", "", `{}`),
		"bout":               mk(KindBout, "ath-1", "", goodBout),
		"bout custom":        mk(KindBout, "ath-1", "", bout(t, map[string]any{"weight_class": "custom", "limit_kg": 62.5})),
		"bout with week content": mk(KindBout, "ath-1", "", bout(t, map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low",
			"strength": map[string]any{"ids": []any{"max_strength", "plyometric"}, "label": "heavy triples, box jumps"}, "conditioning": map[string]any{"ids": []any{"aerobic"}},
			"spar_rounds": 12, "hard_rounds": 4, "note": "travel to the hill camp",
			"travel": map[string]any{"depart_at": "2026-02-09T09:00:00Z", "arrive_at": "2026-02-09T21:00:00+07:00", "from_zone": "Europe/London", "to_zone": "Asia/Bangkok"}},
			map[string]any{"week": 3, "level": "heavy", "conditioning": map[string]any{"label": "hill sprints"}}}})),
		"bout no class":          mk(KindBout, "ath-1", "", bout(t, map[string]any{"weight_class": nil, "limit_kg": 62.5, "path": nil, "weeks": nil})),
		"bout heavyweight":       mk(KindBout, "ath-1", "", bout(t, map[string]any{"weight_class": "pro_heavyweight", "start_mass_kg": 104})),
		"bout same day":          mk(KindBout, "ath-1", "", bout(t, map[string]any{"weigh_in": "2026-03-28T08:00:00+01:00", "weigh_in_type": "same_day", "weight_class": "ol2024_m_63.5"})),
		"bout class exact kg":    mk(KindBout, "ath-1", "", bout(t, map[string]any{"limit_kg": 61.235})),
		"bout class 0.01 kg":     mk(KindBout, "ath-1", "", bout(t, map[string]any{"limit_kg": 61.23})),
		"checkin full":           mk(KindCheckin, "ath-1", "2026-03-02", `{"mass_kg":64.8,"sleep_h":7.5,"sleep":4,"fatigue":3,"soreness":3,"stress":4,"mood":5,"rhr_bpm":52,"usg":1.018,"note":"slept well\nfelt fine"}`),
		"checkin mass only":      mk(KindCheckin, "ath-1", "2026-03-02", `{"mass_kg":25}`),
		"checkin edges":          mk(KindCheckin, "ath-1", "2026-03-02", `{"mass_kg":250,"sleep_h":0,"sleep":1,"fatigue":5,"rhr_bpm":150,"usg":1.04}`),
		"jump heights":           mk(KindJump, "ath-1", "2026-03-02", `{"test":"cmj","heights_cm":[40,41,39.5],"method":"mat","session":"grid-1"}`),
		"jump flight":            mk(KindJump, "ath-1", "2026-03-02", `{"test":"cmj","flight_ms":[500,520,480],"method":"mat"}`),
		"jump flight edges":      mk(KindJump, "ath-1", "2026-03-02", `{"flight_ms":[200,1000,600,600,600,600]}`),
		"jump height edges":      mk(KindJump, "ath-1", "2026-03-02", `{"heights_cm":[4.9,122.6]}`),
		"round":                  mk(KindRound, "ath-1", "2026-03-02", `{"activity":"spar","seconds":180,"intensity":3,"partner":"Cy Fictive"}`),
		"round drill":            mk(KindRound, "ath-1", "2026-03-02", `{"activity":"drill","seconds":10,"intensity":1}`),
		"intervals template":     mk(KindIntervals, "ath-1", "2026-03-02", `{"protocol":"rounds_3x3","modality":"bag","work_s":180,"rest_s":60,"reps":3,"sets":1,"done_reps":3,"hr_peak":186,"hr_mean":164,"rpe":8}`),
		"intervals own protocol": mk(KindIntervals, "ath-1", "2026-03-02", `{"protocol":"hill sprints","modality":"run","work_s":12,"rest_s":90,"reps":10}`),
		"intervals custom":       mk(KindIntervals, "ath-1", "2026-03-02", `{"protocol":"custom","modality":"assault bike","work_s":20,"rest_s":0,"reps":8,"sets":2,"set_rest_s":120,"minutes":25}`),
		"session":                mk(KindSession, "ath-1", "2026-03-02", `{"type":"strength","focus":"max_strength","minutes":60,"rpe":7,"note":"squat 5x3"}`),
		"session half point":     mk(KindSession, "ath-1", "2026-03-02", `{"type":"boxing","minutes":1,"rpe":6.5}`),
		"session rest rating":    mk(KindSession, "ath-1", "2026-03-02", `{"type":"other","minutes":300,"rpe":0}`),
		"incident":               mk(KindIncident, "ath-1", "2026-03-02", `{"type":"head_knock","note":"clash of heads, round 2"}`),
		"clearance":              mk(KindClearance, "ath-1", "2026-03-02", `{"incident":"01HZX3V6Q8R2M4T7Y9B1C3D5E8","by":"Dr. A. Example"}`),
		"decision":               mk(KindDecision, "ath-1", "2026-03-02", `{"rule":"jump_drop","note":"no hard sparring today","by":"S&C coach"}`),
		"decision whole day":     mk(KindDecision, "ath-1", "2026-03-02", `{"note":"technical session only today","by":"S&C coach"}`),
		"note":                   mk(KindNote, "ath-1", "2026-03-02", `{"text":"left ankle taped <check>","by":"physio"}`),
		"note at UTC":            edit(mk(KindNote, "ath-1", "2026-03-02", `{"text":"ok"}`), func(r *devsync.Record) { r.At = "2026-03-02T06:05:00.123Z" }),
		"deleted garbage body":   edit(mk(KindCheckin, "ath-1", "2026-03-02", `{"mass_kg":"not a number","weird":1}`), func(r *devsync.Record) { r.Deleted = true }),
		"bout heavy olympic":     mk(KindBout, "ath-1", "", bout(t, map[string]any{"weight_class": "ol2024_m_92plus", "start_mass_kg": 101})),
		"bout women world 2025":  mk(KindBout, "ath-1", "", bout(t, map[string]any{"weight_class": "wb2025_f_57", "start_mass_kg": 60})),
	}
}

func TestPrepareAcceptsGoodRecords(t *testing.T) {
	now := time.Date(2026, 3, 2, 12, 0, 0, 0, time.UTC)
	for name, r := range goodRecords(t) {
		t.Run(name, func(t *testing.T) {
			r1 := r
			if err := PrepareAt(now)(&r1); err != nil {
				t.Fatalf("rejected a good record: %v", err)
			}
			// Idempotent: preparing the prepared record changes nothing.
			r2 := r1
			if err := Prepare(&r2); err != nil {
				t.Fatalf("rejected its own output: %v\n%s", err, r1.Body)
			}
			if !bytes.Equal(r1.Body, r2.Body) {
				t.Fatalf("not idempotent:\n%s\n%s", r1.Body, r2.Body)
			}
			// Only the body may change.
			r1.Body, r.Body = nil, nil
			if !equalRecords(r1, r) {
				t.Fatalf("common fields changed: %+v vs %+v", r1, r)
			}
		})
	}
}

func equalRecords(a, b devsync.Record) bool {
	return a.ID == b.ID && a.Kind == b.Kind && a.Athlete == b.Athlete && a.Day == b.Day && a.At == b.At &&
		a.Device == b.Device && a.Stamp == b.Stamp && a.Gen == b.Gen && a.Deleted == b.Deleted
}

type badCase struct {
	name     string
	rec      devsync.Record
	field    string
	mentions []string // words the reason must contain: the limit, its unit
}

func long(n int) string { return strings.Repeat("é", n) } // multi-byte: limits count characters

func badCases(t *testing.T) []badCase {
	ci := func(body string) devsync.Record { return mk(KindCheckin, "ath-1", "2026-03-02", body) }
	jump := func(body string) devsync.Record { return mk(KindJump, "ath-1", "2026-03-02", body) }
	round := func(body string) devsync.Record { return mk(KindRound, "ath-1", "2026-03-02", body) }
	iv := func(body string) devsync.Record { return mk(KindIntervals, "ath-1", "2026-03-02", body) }
	ses := func(body string) devsync.Record { return mk(KindSession, "ath-1", "2026-03-02", body) }
	ath := func(body string) devsync.Record { return mk(KindAthlete, "", "", body) }
	set := func(body string) devsync.Record { return mk(KindSettings, "", "", body) }
	setA := func(body string) devsync.Record { return mk(KindSettings, "ath-1", "", body) }
	bt := func(m map[string]any) devsync.Record { return mk(KindBout, "ath-1", "", bout(t, m)) }
	okCI := ci(`{"mass_kg":64}`)
	return []badCase{
		// Common fields.
		{"id missing", edit(okCI, func(r *devsync.Record) { r.ID = "" }), "id", []string{"required"}},
		{"id with space", edit(okCI, func(r *devsync.Record) { r.ID = "a b" }), "id", []string{"letters"}},
		{"id with slash", edit(okCI, func(r *devsync.Record) { r.ID = "../x" }), "id", []string{"letters"}},
		{"id too long", edit(okCI, func(r *devsync.Record) { r.ID = strings.Repeat("a", 65) }), "id", []string{"64"}},
		{"kind missing", edit(okCI, func(r *devsync.Record) { r.Kind = "" }), "kind", []string{"athlete", "checkin", "note"}},
		{"kind unknown", edit(okCI, func(r *devsync.Record) { r.Kind = "weigh" }), "kind", []string{"athlete, settings, bout"}},
		{"athlete missing", edit(okCI, func(r *devsync.Record) { r.Athlete = "" }), "athlete", []string{"required"}},
		{"athlete bad id", edit(okCI, func(r *devsync.Record) { r.Athlete = "ath 1" }), "athlete", []string{"letters"}},
		{"note needs athlete", mk(KindNote, "", "2026-03-02", `{"text":"x"}`), "athlete", []string{"required"}},
		{"athlete record other id", edit(ath(`{"name":"A"}`), func(r *devsync.Record) { r.Athlete = "someone-else" }), "athlete", []string{"equal to its id"}},
		{"day missing", edit(okCI, func(r *devsync.Record) { r.Day = "" }), "day", []string{"YYYY-MM-DD"}},
		{"day 30 February", edit(okCI, func(r *devsync.Record) { r.Day = "2026-02-30" }), "day", []string{"not a day of the calendar"}},
		{"day in year 0", edit(okCI, func(r *devsync.Record) { r.Day = "0000-01-01" }), "day", []string{"before 2000"}},
		{"day unpadded", edit(okCI, func(r *devsync.Record) { r.Day = "2026-3-2" }), "day", []string{"YYYY-MM-DD"}},
		{"day on a bout, bad", edit(bt(nil), func(r *devsync.Record) { r.Day = "2026-13-01" }), "day", []string{"YYYY-MM-DD"}},
		{"at missing", edit(okCI, func(r *devsync.Record) { r.At = "" }), "at", []string{"RFC 3339"}},
		{"at without offset", edit(okCI, func(r *devsync.Record) { r.At = "2026-03-02T07:05:00" }), "at", []string{"RFC 3339", "offset"}},
		{"at with space", edit(okCI, func(r *devsync.Record) { r.At = "2026-03-02 07:05:00+01:00" }), "at", []string{"RFC 3339"}},
		{"device missing", edit(okCI, func(r *devsync.Record) { r.Device = "" }), "device", []string{"required"}},
		{"device control char", edit(okCI, func(r *devsync.Record) { r.Device = "tab\x00" }), "device", []string{"control character"}},
		{"tombstone still needs an id", edit(okCI, func(r *devsync.Record) { r.Deleted = true; r.ID = "" }), "id", []string{"required"}},

		// Body shape.
		{"body not an object", ci(`[1,2]`), "body", []string{"JSON object", "checkin"}},
		{"body unknown field", ci(`{"mass_kg":64,"weight":64}`), "body.weight", []string{"mass_kg", "not a field"}},
		{"body field case", ci(`{"Mass_kg":64}`), "body.Mass_kg", []string{"mass_kg"}},
		{"body wrong type", ci(`{"mass_kg":"64"}`), "body.mass_kg", []string{"a number"}},
		{"body not UTF-8", ci("{\"note\":\"caf\xe9\"}"), "body", []string{"UTF-8"}},
		{"body empty", ci(``), "body", []string{"at least one"}},
		{"body null", ci(`null`), "body", []string{"at least one"}},
		{"body only blank note", ci(`{"note":" ","mass_kg":null}`), "body", []string{"at least one"}},

		// athlete.
		{"athlete name missing", ath(`{"units":"kg"}`), "body.name", []string{"required", "80"}},
		{"athlete name blank", ath(`{"name":"   "}`), "body.name", []string{"80"}},
		{"athlete name too long", ath(`{"name":"` + long(81) + `"}`), "body.name", []string{"80 characters"}},
		{"athlete name two lines", ath(`{"name":"Ana\nInvented"}`), "body.name", []string{"single line"}},
		{"athlete name right-to-left override", ath(`{"name":"Ana \u202Eodevni"}`), "body.name", []string{"reverses or reorders", "U+202E"}},
		{"athlete name bidi isolate", ath(`{"name":"\u2067Ana"}`), "body.name", []string{"U+2067"}},
		{"athlete name zero-width spaces", ath(`{"name":"\u200b\u200b\u200b"}`), "body.name", []string{"invisible"}},
		{"athlete name Hangul fillers", ath(`{"name":"\u3164\u3164"}`), "body.name", []string{"invisible"}},
		{"note text override", mk(KindNote, "ath-1", "2026-03-02", `{"text":"fine \u202Dtoday"}`), "body.text", []string{"reverses or reorders"}},
		{"check-in note override", ci(`{"note":"\u202Bsore"}`), "body.note", []string{"U+202B"}},
		{"athlete units", ath(`{"name":"A","units":"st"}`), "body.units", []string{NotAChoiceWords}},
		{"athlete born 1930", ath(`{"name":"A","birth_year":1930}`), "body.birth_year", []string{"1940", "2016"}},
		{"athlete born 2020", ath(`{"name":"A","birth_year":2020}`), "body.birth_year", []string{"2016", "10"}},
		{"athlete birth year 0", ath(`{"name":"A","birth_year":0}`), "body.birth_year", []string{"1940"}},
		{"athlete sex", ath(`{"name":"A","sex":"x"}`), "body.sex", []string{"f, m"}},
		{"athlete active type", ath(`{"name":"A","active":"yes"}`), "body.active", []string{"true or false"}},

		// settings.
		{"settings unknown rule", set(`{"thresholds":{"jump":{"watch_pct":5}}}`), "body.thresholds.jump", []string{"is not a flag rule"}},
		{"settings unknown param", setA(`{"thresholds":{"jump_drop":{"drop":5}}}`), "body.thresholds.jump_drop.drop", []string{"is not a setting of this flag rule"}},
		{"settings param type", setA(`{"thresholds":{"jump_drop":{"watch_pct":"5"}}}`), "body.thresholds.jump_drop.watch_pct", []string{"a number"}},
		{"settings checkin threshold hour", set(`{"thresholds":{"missing_checkin":{"hour":25}}}`), "body.thresholds.missing_checkin.hour", []string{"0 and 23.5 h"}},
		{"settings usg out of range", setA(`{"thresholds":{"hydration":{"watch_usg":1.2}}}`), "body.thresholds.hydration.watch_usg", []string{"1.04", "1.2"}},
		{"settings pct out of range", setA(`{"thresholds":{"mass_loss_fast":{"watch_pct_week":8}}}`), "body.thresholds.mass_loss_fast.watch_pct_week", []string{"5 %/week"}},
		// Neidecker et al. 2019: knockout stand-down at least 60 days; a setting may not shorten it.
		{"settings shorten stand-down", setA(`{"thresholds":{"spar_on_hold":{"knockout_days":30}}}`), "body.thresholds.spar_on_hold.knockout_days", []string{"60", "days"}},
		{"settings fractional count", set(`{"thresholds":{"spar_density":{"cap_rounds":12.5}}}`), "body.thresholds.spar_density.cap_rounds", []string{"whole number", "rounds"}},
		{"settings zone unknown", set(`{"time_zone":"Mars/Olympus"}`), "body.time_zone", []string{"IANA"}},
		{"settings zone Local", set(`{"time_zone":"Local"}`), "body.time_zone", []string{"IANA"}},
		{"settings zone per athlete", setA(`{"time_zone":"Europe/Madrid"}`), "body.time_zone", []string{"camp-wide"}},
		{"settings gym per athlete", setA(`{"gym_name":"X"}`), "body.gym_name", []string{"camp-wide"}},
		{"settings checkin hour 24", set(`{"checkin_hour":24}`), "body.checkin_hour", []string{"23.5", "h"}},
		{"settings checkin hour negative", set(`{"checkin_hour":-1}`), "body.checkin_hour", []string{"0 and 23.5"}},

		// bout.
		{"bout camp start missing", bt(map[string]any{"camp_start": nil}), "body.camp_start", []string{"required", "YYYY-MM-DD"}},
		{"bout camp start bad", bt(map[string]any{"camp_start": "02/02/2026"}), "body.camp_start", []string{"YYYY-MM-DD"}},
		{"bout day missing", bt(map[string]any{"bout_day": nil}), "body.bout_day", []string{"required"}},
		{"bout before camp", bt(map[string]any{"camp_start": "2026-04-01"}), "body.bout_day", []string{"before the camp", "Wed 1 Apr 2026"}},
		{"bout years away", bt(map[string]any{"bout_day": "2027-03-28", "weigh_in": "2027-03-27T10:00:00+01:00", "path": nil, "weeks": nil}), "body.bout_day", []string{"365 days"}},
		{"bout weigh-in missing", bt(map[string]any{"weigh_in": nil}), "body.weigh_in", []string{"required", "RFC 3339"}},
		{"bout weigh-in no offset", bt(map[string]any{"weigh_in": "2026-03-27T10:00"}), "body.weigh_in", []string{"RFC 3339"}},
		{"bout weigh-in after bout", bt(map[string]any{"weigh_in": "2026-03-29T10:00:00+01:00"}), "body.weigh_in", []string{"after the bout day", "Sat 28 Mar 2026"}},
		{"bout weigh-in before camp", bt(map[string]any{"weigh_in": "2026-01-29T10:00:00+01:00"}), "body.weigh_in", []string{"before the camp"}},
		// 23:30 UTC on the 27th is already the 28th in Tokyo: the venue's zone decides the day.
		{"bout weigh-in zone shifts day", bt(map[string]any{"weigh_in": "2026-03-27T23:30:00Z", "weigh_in_zone": "Asia/Tokyo"}), "body.weigh_in_type", []string{`"Day before"`, "Sat 28 Mar 2026"}},
		{"bout weigh-in zone bad", bt(map[string]any{"weigh_in_zone": "Madrid"}), "body.weigh_in_zone", []string{"IANA"}},
		{"bout weigh-in type missing", bt(map[string]any{"weigh_in_type": nil}), "body.weigh_in_type", []string{ChooseOneWords}},
		{"bout weigh-in type unknown", bt(map[string]any{"weigh_in_type": "morning"}), "body.weigh_in_type", []string{NotAChoiceWords}},
		{"bout same day mismatch", bt(map[string]any{"weigh_in_type": "same_day"}), "body.weigh_in_type", []string{`"Same day"`, `choose "Day before"`, "Fri 27 Mar 2026"}},
		{"bout day before on bout day", bt(map[string]any{"weigh_in": "2026-03-28T08:00:00+01:00"}), "body.weigh_in_type", []string{"1 to 3 days"}},
		{"bout day before a week early", bt(map[string]any{"weigh_in": "2026-03-21T08:00:00+01:00"}), "body.weigh_in_type", []string{"1 to 3 days"}},
		{"bout class unknown", bt(map[string]any{"weight_class": "pro_superheavy"}), "body.weight_class", []string{"custom"}},
		{"bout limit against class", bt(map[string]any{"limit_kg": 61.5}), "body.limit_kg", []string{"135 lb", "61.235 kg", "custom"}},
		{"bout limit on heavyweight", bt(map[string]any{"weight_class": "pro_heavyweight", "limit_kg": 100}), "body.limit_kg", []string{"no upper limit"}},
		{"bout custom limit low", bt(map[string]any{"weight_class": "custom", "limit_kg": 30}), "body.limit_kg", []string{"40 and 150 kg", "30"}},
		{"bout custom limit high", bt(map[string]any{"weight_class": nil, "limit_kg": 160}), "body.limit_kg", []string{"150 kg"}},
		{"bout custom limit missing", bt(map[string]any{"weight_class": "custom"}), "body.limit_kg", []string{"required", "40 to 150 kg"}},
		{"bout start mass missing", bt(map[string]any{"start_mass_kg": nil}), "body.start_mass_kg", []string{"required", "25 to 250 kg"}},
		{"bout start mass high", bt(map[string]any{"start_mass_kg": 300}), "body.start_mass_kg", []string{"25 and 250 kg", "300"}},
		{"bout reference load negative", bt(map[string]any{"reference_load_au": -5}), "body.reference_load_au", []string{"AU"}},
		{"bout path unsorted", bt(map[string]any{"path": []any{map[string]any{"day": "2026-03-01", "mass_kg": 66}, map[string]any{"day": "2026-02-20", "mass_kg": 67}}}), "body.path[1].day", []string{"in order", "Sun 1 Mar 2026"}},
		{"bout path repeated day", bt(map[string]any{"path": []any{map[string]any{"day": "2026-03-01", "mass_kg": 66}, map[string]any{"day": "2026-03-01", "mass_kg": 65}}}), "body.path[1].day", []string{"in order"}},
		{"bout path mass", bt(map[string]any{"path": []any{map[string]any{"day": "2026-03-01", "mass_kg": 660}}}), "body.path[0].mass_kg", []string{"25 and 250 kg", "660"}},
		{"bout path outside camp", bt(map[string]any{"path": []any{map[string]any{"day": "2026-04-01", "mass_kg": 60}}}), "body.path[0].day", []string{"outside the camp"}},
		{"bout path day missing", bt(map[string]any{"path": []any{map[string]any{"mass_kg": 60}}}), "body.path[0].day", []string{"required"}},
		{"bout path unknown field", bt(map[string]any{"path": []any{map[string]any{"day": "2026-03-01", "kg": 60}}}), "body.path[0].kg", []string{"day, mass_kg"}},
		{"bout weeks skip", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 3, "level": "low"}}}), "body.weeks[1].week", []string{"must be 2"}},
		{"bout weeks start at 0", bt(map[string]any{"weeks": []any{map[string]any{"week": 0, "level": "low"}}}), "body.weeks[0].week", []string{"must be 1"}},
		{"bout week level", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "extreme"}}}), "body.weeks[0].level", []string{NotAChoiceWords}},
		{"bout week cap", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low", "spar_cap_rounds": 250}}}), "body.weeks[0].spar_cap_rounds", []string{"0 and 200 sparring rounds"}},
		{"bout week cap fraction", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low", "spar_cap_rounds": 2.5}}}), "body.weeks[0].spar_cap_rounds", []string{"whole number"}},
		{"bout week strength id unknown", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "strength": map[string]any{"ids": []any{"power"}}}}}), "body.weeks[2].strength.ids[0]", []string{NotAChoiceWords}},
		{"bout week strength id of conditioning", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "strength": map[string]any{"ids": []any{"aerobic"}}}}}), "body.weeks[2].strength.ids[0]", []string{NotAChoiceWords}},
		{"bout week conditioning id twice", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "conditioning": map[string]any{"ids": []any{"aerobic", "aerobic"}}}}}), "body.weeks[2].conditioning.ids[1]", []string{"listed twice"}},
		{"bout week none with others", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "conditioning": map[string]any{"ids": []any{"none", "aerobic"}}}}}), "body.weeks[2].conditioning.ids", []string{"none"}},
		{"bout week label long", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "strength": map[string]any{"label": strings.Repeat("x", 61)}}}}), "body.weeks[2].strength.label", []string{"at most 60"}},
		{"bout week emphasis field", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "strength": map[string]any{"id": "speed"}}}}), "body.weeks[2].strength.id", []string{"not a field"}},
		{"bout week hard over rounds", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "spar_rounds": 10, "hard_rounds": 12}}}), "body.weeks[2].hard_rounds", []string{"more than the 10 sparring rounds"}},
		{"bout week spar rounds", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "spar_rounds": 201}}}), "body.weeks[2].spar_rounds", []string{"0 and 200"}},
		{"bout week note long", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "note": strings.Repeat("x", 501)}}}), "body.weeks[2].note", []string{"at most 500"}},
		{"bout travel zone", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "travel": map[string]any{"depart_at": "2026-02-18T09:00:00Z", "arrive_at": "2026-02-18T21:00:00+07:00", "from_zone": "Europe/London", "to_zone": "Asia/Atlantis"}}}}), "body.weeks[2].travel.to_zone", []string{"IANA"}},
		{"bout travel from zone missing", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "travel": map[string]any{"depart_at": "2026-02-18T09:00:00Z", "arrive_at": "2026-02-18T21:00:00+07:00", "to_zone": "Asia/Bangkok"}}}}), "body.weeks[2].travel.from_zone", []string{"required"}},
		{"bout travel arrive before depart", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "travel": map[string]any{"depart_at": "2026-02-18T09:00:00Z", "arrive_at": "2026-02-18T08:00:00Z", "from_zone": "Europe/London", "to_zone": "Asia/Bangkok"}}}}), "body.weeks[2].travel.arrive_at", []string{"not after the departure"}},
		{"bout travel depart no offset", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "travel": map[string]any{"depart_at": "2026-02-18 09:00", "arrive_at": "2026-02-18T21:00:00+07:00", "from_zone": "Europe/London", "to_zone": "Asia/Bangkok"}}}}), "body.weeks[2].travel.depart_at", []string{"RFC 3339"}},
		{"bout travel outside week", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "travel": map[string]any{"depart_at": "2026-02-23T09:00:00Z", "arrive_at": "2026-02-23T21:00:00+07:00", "from_zone": "Europe/London", "to_zone": "Asia/Bangkok"}}}}), "body.weeks[2].travel.depart_at", []string{"outside this week (2026-02-16 to 2026-02-22)"}},
		{"bout travel too long", bt(map[string]any{"weeks": []any{map[string]any{"week": 1, "level": "low"}, map[string]any{"week": 2, "level": "low"}, map[string]any{"week": 3, "level": "heavy", "travel": map[string]any{"depart_at": "2026-02-18T09:00:00Z", "arrive_at": "2026-02-22T21:00:00+07:00", "from_zone": "Europe/London", "to_zone": "Asia/Bangkok"}}}}), "body.weeks[2].travel.arrive_at", []string{"at most 72 h"}},
		{"bout week after bout", bt(map[string]any{"bout_day": "2026-02-10", "weigh_in": "2026-02-09T10:00:00+01:00", "path": nil}), "body.weeks[2].week", []string{"after the bout"}},

		// checkin.
		{"checkin mass 812", ci(`{"mass_kg":812}`), "body.mass_kg", []string{"must be between 25 and 250 kg; got 812"}},
		{"checkin mass 20", ci(`{"mass_kg":20}`), "body.mass_kg", []string{"25 and 250 kg"}},
		{"checkin sleep hours", ci(`{"sleep_h":17}`), "body.sleep_h", []string{"0 and 16 h"}},
		{"checkin sleep hours negative", ci(`{"sleep_h":-1}`), "body.sleep_h", []string{"16 h"}},
		// McLean et al. 2010: items 1–5, 5 = best.
		{"checkin sleep 0", ci(`{"sleep":0}`), "body.sleep", []string{"1 to 5", "5 = best"}},
		{"checkin fatigue 6", ci(`{"fatigue":6}`), "body.fatigue", []string{"1 to 5"}},
		{"checkin soreness half", ci(`{"soreness":2.5}`), "body.soreness", []string{"whole number"}},
		{"checkin stress 7", ci(`{"stress":7}`), "body.stress", []string{"1 to 5"}},
		{"checkin mood -1", ci(`{"mood":-1}`), "body.mood", []string{"1 to 5"}},
		{"checkin rhr low", ci(`{"rhr_bpm":20}`), "body.rhr_bpm", []string{"25 and 150 bpm"}},
		{"checkin rhr high", ci(`{"rhr_bpm":180}`), "body.rhr_bpm", []string{"150 bpm"}},
		// REFERENCES.md §6.4: USG 1.000–1.040.
		{"checkin usg strip notation", ci(`{"usg":1020}`), "body.usg", []string{"1.000 and 1.040", "1020"}},
		{"checkin usg below water", ci(`{"usg":0.998}`), "body.usg", []string{"1.000 and 1.040"}},
		{"checkin note too long", ci(`{"note":"` + long(2001) + `"}`), "body.note", []string{"2000 characters"}},
		{"checkin note control", ci(`{"note":"a\u0007b"}`), "body.note", []string{"control character"}},

		// jump.
		{"jump no attempts", jump(`{"test":"cmj"}`), "body.heights_cm", []string{"1 to 6 attempts", "cm", "ms"}},
		{"jump empty lists", jump(`{"heights_cm":[],"flight_ms":[]}`), "body.heights_cm", []string{"1 to 6"}},
		{"jump seven heights", jump(`{"heights_cm":[30,30,30,30,30,30,30]}`), "body.heights_cm", []string{"1 to 6 attempts", "7"}},
		// One valid range at entry and in the rules (REFERENCES.md §1.2):
		// 200–1000 ms of flight, or typed heights 4.9–122.6 cm (g·t²/8 at
		// those flight times by the flight-time formula, REFERENCES §1.1).
		{"jump height zero", jump(`{"heights_cm":[30,31,0]}`), "body.heights_cm[2]", []string{"4.9 and 122.6 cm", "got 0"}},
		{"jump height typo 1.5 cm", jump(`{"heights_cm":[1.5,35,36]}`), "body.heights_cm[0]", []string{"4.9 and 122.6 cm", "got 1.5"}},
		{"jump height just below", jump(`{"heights_cm":[4.8]}`), "body.heights_cm[0]", []string{"4.9 and 122.6 cm"}},
		{"jump height just above", jump(`{"heights_cm":[122.7]}`), "body.heights_cm[0]", []string{"4.9 and 122.6 cm"}},
		{"jump height in mm", jump(`{"heights_cm":[305]}`), "body.heights_cm[0]", []string{"122.6 cm"}},
		// REFERENCES.md §1.2: flight time 0.20–1.00 s.
		{"jump flight short", jump(`{"flight_ms":[150]}`), "body.flight_ms[0]", []string{"200 and 1000 ms", "150"}},
		{"jump flight in s", jump(`{"flight_ms":[500,0.52,480]}`), "body.flight_ms[1]", []string{"200 and 1000 ms"}},
		{"jump flight long", jump(`{"flight_ms":[500,1100]}`), "body.flight_ms[1]", []string{"1000 ms", "122.6 cm"}},
		{"jump flight seven", jump(`{"flight_ms":[500,500,500,500,500,500,500]}`), "body.flight_ms", []string{"1 to 6"}},
		{"jump flight type", jump(`{"flight_ms":["500"]}`), "body.flight_ms[0]", []string{"a number"}},
		{"jump test", jump(`{"test":"sj","heights_cm":[30]}`), "body.test", []string{NotAChoiceWords}},
		{"jump method", jump(`{"heights_cm":[30],"method":"app"}`), "body.method", []string{NotAChoiceWords}},
		{"jump unknown field", jump(`{"height_cm":[30]}`), "body.height_cm", []string{"heights_cm"}},

		// round.
		{"round activity missing", round(`{"seconds":180,"intensity":2}`), "body.activity", []string{ChooseOneWords}},
		{"round activity unknown", round(`{"activity":"box","seconds":180,"intensity":2}`), "body.activity", []string{NotAChoiceWords}},
		{"round seconds missing", round(`{"activity":"spar","intensity":2}`), "body.seconds", []string{"required", "10 to 600 s"}},
		{"round seconds short", round(`{"activity":"spar","seconds":5,"intensity":2}`), "body.seconds", []string{"10 and 600 s"}},
		{"round seconds as minutes", round(`{"activity":"spar","seconds":3,"intensity":2}`), "body.seconds", []string{"10 and 600 s", "got 3"}},
		{"round seconds long", round(`{"activity":"bag","seconds":900,"intensity":2}`), "body.seconds", []string{"600 s"}},
		{"round seconds fraction", round(`{"activity":"spar","seconds":180.5,"intensity":2}`), "body.seconds", []string{"whole number"}},
		{"round intensity missing", round(`{"activity":"spar","seconds":180}`), "body.intensity", []string{"1 easy, 2 moderate or 3 hard"}},
		{"round intensity 4", round(`{"activity":"spar","seconds":180,"intensity":4}`), "body.intensity", []string{"3 (hard)", "got 4"}},
		{"round intensity 0", round(`{"activity":"spar","seconds":180,"intensity":0}`), "body.intensity", []string{"1 (easy)"}},
		{"round partner long", round(`{"activity":"spar","seconds":180,"intensity":2,"partner":"` + long(81) + `"}`), "body.partner", []string{"80"}},

		// intervals.
		{"intervals modality", iv(`{"work_s":30,"rest_s":15,"reps":8,"sets":2}`), "body.modality", []string{"required", "bike"}},
		{"intervals modality long", iv(`{"modality":"` + long(41) + `","work_s":30,"rest_s":15,"reps":8}`), "body.modality", []string{"40"}},
		{"intervals protocol long", iv(`{"protocol":"` + long(41) + `","modality":"run","work_s":30,"rest_s":15,"reps":8}`), "body.protocol", []string{"40 characters"}},
		{"intervals work zero", iv(`{"modality":"run","work_s":0,"rest_s":15,"reps":8}`), "body.work_s", []string{"more than 0", "3600 s"}},
		{"intervals work hour+", iv(`{"modality":"run","work_s":4000,"rest_s":15,"reps":1}`), "body.work_s", []string{"3600 s"}},
		{"intervals rest negative", iv(`{"modality":"run","work_s":30,"rest_s":-15,"reps":8}`), "body.rest_s", []string{"0 and 3600 s"}},
		{"intervals set rest", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":8,"sets":2,"set_rest_s":5000}`), "body.set_rest_s", []string{"3600 s"}},
		{"intervals reps missing", iv(`{"modality":"run","work_s":30,"rest_s":15}`), "body.reps", []string{"required", "200"}},
		{"intervals reps 0", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":0}`), "body.reps", []string{"1 and 200"}},
		{"intervals reps 201", iv(`{"modality":"run","work_s":1,"rest_s":0,"reps":201}`), "body.reps", []string{"200"}},
		{"intervals sets 21", iv(`{"modality":"run","work_s":1,"rest_s":0,"reps":1,"sets":21}`), "body.sets", []string{"1 and 20 sets"}},
		{"intervals sets 0", iv(`{"modality":"run","work_s":1,"rest_s":0,"reps":1,"sets":0}`), "body.sets", []string{"1 and 20"}},
		{"intervals done reps", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":8,"sets":2,"done_reps":17}`), "body.done_reps", []string{"0 and 16"}},
		{"intervals hr peak", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":8,"hr_peak":250}`), "body.hr_peak", []string{"40 and 230 bpm"}},
		{"intervals hr mean", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":8,"hr_mean":30}`), "body.hr_mean", []string{"40 and 230 bpm"}},
		{"intervals 60 done of 6 planned", iv(`{"modality":"bag","work_s":180,"rest_s":60,"reps":6,"done_reps":60}`), "body.done_reps", []string{"0 and 6", "60"}},
		{"intervals mean above peak", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":8,"hr_peak":170,"hr_mean":175}`), "body.hr_mean", []string{"175", "170"}},
		{"intervals rpe 11", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":8,"rpe":11}`), "body.rpe", []string{"0 and 10"}},
		{"intervals rpe quarter", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":8,"rpe":6.25}`), "body.rpe", []string{"half points"}},
		{"intervals minutes", iv(`{"modality":"run","work_s":30,"rest_s":15,"reps":8,"minutes":400}`), "body.minutes", []string{"1 and 300 min"}},
		{"intervals derived too long", iv(`{"modality":"run","work_s":60,"rest_s":60,"reps":200,"sets":20}`), "body.minutes", []string{"300 min", "8000"}},

		// session.
		{"session type", ses(`{"type":"yoga","minutes":60,"rpe":3}`), "body.type", []string{NotAChoiceWords}},
		{"session type missing", ses(`{"minutes":60,"rpe":3}`), "body.type", []string{"required"}},
		{"session focus", ses(`{"type":"strength","focus":"power","minutes":60,"rpe":3}`), "body.focus", []string{NotAChoiceWords}},
		// REFERENCES.md §3.1: duration 1–300 min, RPE 0–10.
		{"session minutes missing", ses(`{"type":"boxing","rpe":5}`), "body.minutes", []string{"required", "1 to 300 min"}},
		{"session minutes 0", ses(`{"type":"boxing","minutes":0,"rpe":5}`), "body.minutes", []string{"1 and 300 min"}},
		{"session minutes 301", ses(`{"type":"boxing","minutes":301,"rpe":5}`), "body.minutes", []string{"300 min", "301"}},
		{"session rpe missing", ses(`{"type":"boxing","minutes":60}`), "body.rpe", []string{"required", "0 to 10"}},
		{"session rpe 10.5", ses(`{"type":"boxing","minutes":60,"rpe":10.5}`), "body.rpe", []string{"0 and 10", "CR-10"}},
		{"session rpe negative", ses(`{"type":"boxing","minutes":60,"rpe":-1}`), "body.rpe", []string{"0 and 10"}},
		{"session rpe 7.3", ses(`{"type":"boxing","minutes":60,"rpe":7.3}`), "body.rpe", []string{"half points", "7.3"}},

		// incident, clearance, decision, note.
		{"incident type", mk(KindIncident, "ath-1", "2026-03-02", `{"type":"cut"}`), "body.type", []string{NotAChoiceWords}},
		{"incident type missing", mk(KindIncident, "ath-1", "2026-03-02", `{"note":"x"}`), "body.type", []string{"required"}},
		{"clearance incident missing", mk(KindClearance, "ath-1", "2026-03-02", `{"by":"Dr. A. Example"}`), "body.incident", []string{"incident"}},
		{"clearance incident bad id", mk(KindClearance, "ath-1", "2026-03-02", `{"incident":"the knock","by":"Dr. A. Example"}`), "body.incident", []string{"letters"}},
		{"clearance by missing", mk(KindClearance, "ath-1", "2026-03-02", `{"incident":"inc-1"}`), "body.by", []string{"required", "80"}},
		{"decision rule", mk(KindDecision, "ath-1", "2026-03-02", `{"rule":"mass","note":"x"}`), "body.rule", []string{NotAChoiceWords}},
		{"decision note missing", mk(KindDecision, "ath-1", "2026-03-02", `{"rule":"hydration"}`), "body.note", []string{"required", "2000"}},
		{"decision note blank", mk(KindDecision, "ath-1", "2026-03-02", `{"rule":"hydration","note":"  "}`), "body.note", []string{"required"}},
		{"decision note long", mk(KindDecision, "ath-1", "2026-03-02", `{"rule":"hydration","note":"`+long(2001)+`"}`), "body.note", []string{"2000 characters"}},
		{"note text missing", mk(KindNote, "ath-1", "2026-03-02", `{"by":"physio"}`), "body.text", []string{"required", "2000"}},
		{"note text long", mk(KindNote, "ath-1", "2026-03-02", `{"text":"`+long(2001)+`"}`), "body.text", []string{"2000 characters", "2001"}},
		{"note by long", mk(KindNote, "ath-1", "2026-03-02", `{"text":"x","by":"`+long(81)+`"}`), "body.by", []string{"80"}},
	}
}

func TestPrepareRejects(t *testing.T) {
	for _, tt := range badCases(t) {
		t.Run(tt.name, func(t *testing.T) {
			r := tt.rec
			before := append(json.RawMessage(nil), r.Body...)
			err := Prepare(&r)
			var fe *devsync.FieldError
			if !errors.As(err, &fe) {
				t.Fatalf("want a *devsync.FieldError on %s, got %v", tt.field, err)
			}
			if fe.Field != tt.field {
				t.Errorf("Field = %q, want %q (reason: %s)", fe.Field, tt.field, fe.Reason)
			}
			if fe.Reason == "" {
				t.Error("empty Reason")
			}
			for _, m := range tt.mentions {
				if !strings.Contains(fe.Reason, m) {
					t.Errorf("Reason %q does not mention %q", fe.Reason, m)
				}
			}
			// A rejected record is left exactly as it came.
			if !bytes.Equal(r.Body, before) {
				t.Errorf("body changed on rejection:\n%s\n%s", before, r.Body)
			}
		})
	}
}

func TestPrepareAtClock(t *testing.T) {
	now := time.Date(2026, 3, 2, 12, 0, 0, 0, time.UTC)
	ci := func(day string) devsync.Record { return mk(KindCheckin, "ath-1", day, `{"mass_kg":64}`) }
	for _, day := range []string{"2026-03-03", "2026-03-02", "2025-11-30"} {
		r := ci(day)
		if err := PrepareAt(now)(&r); err != nil {
			t.Errorf("day %s with the hub on 2026-03-02: %v", day, err)
		}
	}
	r := ci("2026-03-04")
	err := PrepareAt(now)(&r)
	var fe *devsync.FieldError
	if !errors.As(err, &fe) || fe.Field != "day" || !strings.Contains(fe.Reason, "2026-03-02") || !strings.Contains(fe.Reason, "1 day") {
		t.Errorf("two days ahead: got %v", err)
	}
	// A delete of that record is never refused for its date.
	r = ci("2026-03-04")
	r.Deleted = true
	if err := PrepareAt(now)(&r); err != nil {
		t.Errorf("deleting a record dated in the future: %v", err)
	}
	// Prepare itself has no clock: the same record passes.
	r = ci("2026-03-04")
	if err := Prepare(&r); err != nil {
		t.Errorf("Prepare must not use a clock: %v", err)
	}
	// The hub's date is taken in the location of the time passed in: at
	// 23:30 UTC on 2 March it is already 3 March in Bangkok, so 4 March is
	// "tomorrow" there.
	bkk, err := time.LoadLocation("Asia/Bangkok")
	if err != nil {
		t.Fatal(err)
	}
	late := time.Date(2026, 3, 2, 23, 30, 0, 0, time.UTC)
	r = ci("2026-03-04")
	if err := PrepareAt(late.In(bkk))(&r); err != nil {
		t.Errorf("camp clock in Bangkok: %v", err)
	}
	r = ci("2026-03-04")
	if err := PrepareAt(late)(&r); err == nil {
		t.Error("camp clock in UTC: 4 March is two days ahead, want rejection")
	}
	// Birth year: at most the hub's year − 10.
	a := mk(KindAthlete, "", "", `{"name":"Young Invented","birth_year":2017}`)
	a.At = "2030-01-01T00:00:00Z" // a device clock far ahead does not widen the range
	err = PrepareAt(now)(&a)
	if !errors.As(err, &fe) || fe.Field != "body.birth_year" || !strings.Contains(fe.Reason, "2016") {
		t.Errorf("birth year 2017 in 2026: got %v", err)
	}
	a.Body = json.RawMessage(`{"name":"Young Invented","birth_year":2016}`)
	if err := PrepareAt(now)(&a); err != nil {
		t.Errorf("birth year 2016 in 2026: %v", err)
	}
}

func prepared(t *testing.T, r devsync.Record) devsync.Record {
	t.Helper()
	if err := Prepare(&r); err != nil {
		t.Fatalf("Prepare: %v", err)
	}
	return r
}

func TestDerivedJump(t *testing.T) {
	// h = g·t²/8, g = 9.81 (REFERENCES.md §1.1): 0.500 s → 30.65625 cm,
	// 0.520 s → 33.1578 cm, 0.480 s → 28.2528 cm.
	r := prepared(t, mk(KindJump, "ath-1", "2026-03-02", `{"flight_ms":[500,520,480],"best_cm":99,"mean_cm":99}`))
	var j Jump
	if err := json.Unmarshal(r.Body, &j); err != nil {
		t.Fatal(err)
	}
	want := []float64{30.65625, 33.1578, 28.2528}
	if len(j.HeightsCm) != 3 {
		t.Fatalf("heights %v", j.HeightsCm)
	}
	for i, w := range want {
		if math.Abs(j.HeightsCm[i]-w) > 1e-4 {
			t.Errorf("heights_cm[%d] = %v, want %v", i, j.HeightsCm[i], w)
		}
	}
	// Best of the attempts, and their mean (Claudino et al. 2017: the mean is the flag input).
	if math.Abs(j.BestCm-33.1578) > 1e-4 || math.Abs(j.MeanCm-(30.65625+33.1578+28.2528)/3) > 1e-4 {
		t.Errorf("best %v mean %v, want 33.1578 and 30.68895", j.BestCm, j.MeanCm)
	}
	if j.Test != "cmj" {
		t.Errorf("test defaults to cmj, got %q", j.Test)
	}
	// REFERENCES.md §1.3: 0.600 s → 44.1450 cm; sent heights are replaced by the derived ones.
	r = prepared(t, mk(KindJump, "ath-1", "2026-03-02", `{"flight_ms":[600],"heights_cm":[10]}`))
	j = Jump{}
	_ = json.Unmarshal(r.Body, &j)
	if len(j.HeightsCm) != 1 || math.Abs(j.HeightsCm[0]-44.1450) > 0.05 || j.BestCm != j.HeightsCm[0] || j.MeanCm != j.HeightsCm[0] {
		t.Errorf("600 ms: got %+v, want 44.1450 cm", j)
	}
	// Heights typed in: best and mean of them (REFERENCES.md §1.5 style arithmetic).
	r = prepared(t, mk(KindJump, "ath-1", "2026-03-02", `{"heights_cm":[40,41,39.5]}`))
	j = Jump{}
	_ = json.Unmarshal(r.Body, &j)
	if j.BestCm != 41 || math.Abs(j.MeanCm-40.1667) > 1e-4 || len(j.FlightMs) != 0 {
		t.Errorf("heights: got %+v, want best 41, mean 40.1667", j)
	}
}

func TestDerivedSessionLoad(t *testing.T) {
	// Foster et al. 2001: 60 min × RPE 7 = 420 AU; a sent load is replaced.
	r := prepared(t, mk(KindSession, "ath-1", "2026-03-02", `{"type":"boxing","minutes":60,"rpe":7,"load_au":999}`))
	var s Session
	_ = json.Unmarshal(r.Body, &s)
	if s.LoadAU != 420 {
		t.Errorf("load_au = %v, want 420", s.LoadAU)
	}
	// REFERENCES.md §3.3: 45 min × RPE 5 = 225 AU.
	r = prepared(t, mk(KindSession, "ath-1", "2026-03-02", `{"type":"boxing","minutes":45,"rpe":5}`))
	s = Session{}
	_ = json.Unmarshal(r.Body, &s)
	if s.LoadAU != 225 {
		t.Errorf("load_au = %v, want 225", s.LoadAU)
	}
}

func TestDerivedIntervalMinutes(t *testing.T) {
	// sets × reps × (work + rest) + (sets − 1) × set rest: 2 × 8 × 45 s + 180 s = 900 s = 15 min.
	r := prepared(t, mk(KindIntervals, "ath-1", "2026-03-02", `{"modality":"shuttle","work_s":30,"rest_s":15,"reps":8,"sets":2,"set_rest_s":180,"rpe":8}`))
	var iv Intervals
	_ = json.Unmarshal(r.Body, &iv)
	if iv.Minutes != 15 || !iv.MinutesDerived {
		t.Fatalf("minutes %v derived %v, want 15 true", iv.Minutes, iv.MinutesDerived)
	}
	// Foster et al. 2001: load = RPE × minutes = 8 × 15 = 120 AU.
	if iv.LoadAU != 120 {
		t.Errorf("load_au = %v, want 120", iv.LoadAU)
	}
	// Editing the protocol of a prepared record recomputes derived minutes.
	var m map[string]any
	_ = json.Unmarshal(r.Body, &m)
	m["reps"] = 10
	b, _ := json.Marshal(m)
	r.Body = b
	r = prepared(t, r)
	iv = Intervals{}
	_ = json.Unmarshal(r.Body, &iv)
	if iv.Minutes != (2*10*45+180)/60.0 {
		t.Errorf("after edit: minutes %v, want %v", iv.Minutes, (2*10*45+180)/60.0)
	}
	// Minutes typed by the coach are kept; no sets means one set.
	r = prepared(t, mk(KindIntervals, "ath-1", "2026-03-02", `{"modality":"bike","work_s":20,"rest_s":10,"reps":8,"minutes":25}`))
	iv = Intervals{}
	_ = json.Unmarshal(r.Body, &iv)
	if iv.Minutes != 25 || iv.MinutesDerived || iv.Sets != 1 || iv.LoadAU != 0 {
		t.Errorf("typed minutes: got %+v", iv)
	}
}

func TestDerivedBoutLimit(t *testing.T) {
	// The class fixes the limit exactly: 135 lb = 61.23496995 kg (REFERENCES.md §7.2).
	r := prepared(t, mk(KindBout, "ath-1", "", bout(t, map[string]any{"limit_kg": 61.235})))
	var b Bout
	_ = json.Unmarshal(r.Body, &b)
	if math.Abs(b.LimitKg-61.23496995) > 1e-8 {
		t.Errorf("limit_kg = %.8f, want 61.23496995", b.LimitKg)
	}
	r = prepared(t, mk(KindBout, "ath-1", "", goodBout))
	b = Bout{}
	_ = json.Unmarshal(r.Body, &b)
	if math.Abs(b.LimitKg-61.23496995) > 1e-8 {
		t.Errorf("limit filled from class: %.8f, want 61.23496995", b.LimitKg)
	}
	r = prepared(t, mk(KindBout, "ath-1", "", bout(t, map[string]any{"weight_class": "pro_heavyweight", "start_mass_kg": 104})))
	b = Bout{}
	_ = json.Unmarshal(r.Body, &b)
	if b.LimitKg != 0 {
		t.Errorf("heavyweight: limit_kg %v, want 0 (no limit)", b.LimitKg)
	}
}

func TestCanonicalBody(t *testing.T) {
	a := prepared(t, mk(KindCheckin, "ath-1", "2026-03-02", `{ "note" : "a <b> & c", "mass_kg": 64.80, "sleep": 4 }`))
	b := prepared(t, mk(KindCheckin, "ath-1", "2026-03-02", `{"sleep":4,"mass_kg":64.8,"note":"a <b> & c"}`))
	if !bytes.Equal(a.Body, b.Body) {
		t.Errorf("same content, different bytes:\n%s\n%s", a.Body, b.Body)
	}
	if want := `{"mass_kg":64.8,"sleep":4,"note":"a <b> & c"}`; string(a.Body) != want {
		t.Errorf("canonical body %s, want %s", a.Body, want)
	}
	u := prepared(t, mk(KindAthlete, "", "", `{"name":"Ana Invented"}`))
	if string(u.Body) != `{"name":"Ana Invented","units":"kg"}` {
		t.Errorf("units default: %s", u.Body)
	}
}

func TestTombstoneBodyUntouched(t *testing.T) {
	body := `{"mass_kg":"x", "weird": true}`
	r := edit(mk(KindCheckin, "ath-1", "2026-03-02", body), func(r *devsync.Record) { r.Deleted = true })
	if err := Prepare(&r); err != nil {
		t.Fatalf("delete refused: %v", err)
	}
	if string(r.Body) != body {
		t.Errorf("tombstone body changed: %s", r.Body)
	}
}

func TestPrepareNil(t *testing.T) {
	var fe *devsync.FieldError
	if err := Prepare(nil); !errors.As(err, &fe) {
		t.Errorf("nil record: %v", err)
	}
}
