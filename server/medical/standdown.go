// Package medical computes the medical side of a camp from rule sets kept
// as data: the stand-down after a head incident under every set that
// applies (the Association of Ringside Physicians' minimums, Neidecker et
// al. 2019, and the boxing sets of REFERENCES.md §11.2 and §14.6), and the
// graded return to sport of Patricios et al. 2023.
//
// The package is pure: no I/O and no clock. It never clears anyone: a
// stand-down ends at the latest of its dates and, whatever the dates, only
// with a written clearance by a doctor. It diagnoses nothing.
package medical

import (
	"fmt"
	"sort"
	"strings"

	"cornerbook/server/flags/day"
)

// Incident types (the incident record's `type`).
const (
	HeadKnock   = "head_knock"
	Knockdown   = "knockdown"
	Stoppage    = "stoppage"
	Knockout    = "knockout"
	KnockoutLOC = "knockout_loc"
	Injury      = "injury"
)

// Incident is one incident as the stand-down needs it.
type Incident struct {
	ID   string
	Type string
	Day  string // YYYY-MM-DD
	// LOC: consciousness was lost (the record's loss_of_consciousness, or
	// the type knockout_loc).
	LOC bool
	// ClinicianDay is the first day a clinician allows sparring again, if
	// one gave a date; the stand-down runs at least that long.
	ClinicianDay string
}

// Severity is how an incident counts under the rule sets.
type Severity int

const (
	None      Severity = iota // no head stand-down (an injury)
	Suspected                 // head knock or knockdown: suspected concussion, until cleared
	TKO                       // a stoppage from head blows
	KO                        // a knockout without loss of consciousness
	KOLOC                     // loss of consciousness
)

// SeverityOf is how an incident counts. Loss of consciousness from any head
// incident counts as a knockout with loss of consciousness: the minimums are
// set by what happened to the fighter, not by how it was scored (a choice of
// this product, common practice, no source).
func SeverityOf(inc Incident) Severity {
	switch inc.Type {
	case HeadKnock, Knockdown, Stoppage, Knockout, KnockoutLOC:
		if inc.LOC || inc.Type == KnockoutLOC {
			return KOLOC
		}
	}
	switch inc.Type {
	case HeadKnock, Knockdown:
		return Suspected
	case Stoppage:
		return TKO
	case Knockout:
		return KO
	}
	return None
}

// Minimum is one rule of a set: the least time off after an incident of
// the given severities, in days or calendar months.
type Minimum struct {
	Severities []Severity
	Days       int
	Months     int
	// Repeat, when > 1, makes the rule apply only when this is at least the
	// Repeat-th counted incident within WithinMonths (this one included).
	Repeat       int
	WithinMonths int
	Words        string // the rule in a coach's words
}

// Set is one body's stand-down rules.
type Set struct {
	ID      string    `json:"id"`
	Name    string    `json:"name"`
	Source  string    `json:"source"`
	Sure    string    `json:"sure"` // "verified" or "secondary" (REFERENCES tags [V], [V2])
	Caution string    `json:"caution"`
	Rules   []Minimum `json:"-"`
	// Counts are the severities counted towards Repeat rules.
	Counts []Severity `json:"-"`
}

// CautionSets goes with every set: rules change, a commission may add its own.
const CautionSets = "Check the sanctioning body's current rules; a commission or the fighter's doctor may set a longer stand-down."

// CautionClearance is shown with every stand-down, whatever its dates
// (REFERENCES §11.2 tool rule).
const CautionClearance = "No sparring or contact until cleared in writing by a doctor."

// ARP is the set every incident is judged by (Neidecker et al. 2019).
const ARP = "arp"

// Sets are the stand-down rule sets a coach can apply per bout or athlete.
var Sets = []Set{
	{
		ID: ARP, Name: "Ringside physicians' minimums",
		Source: "Neidecker J, Sethi NK, Taylor R, et al. Concussion management in combat sports: consensus statement " +
			"from the Association of Ringside Physicians. Br J Sports Med 2019;53(6):328–333.",
		Sure: "verified",
		Rules: []Minimum{
			{Severities: []Severity{TKO}, Days: 30, Words: "30 days without competition or sparring after a stoppage from head blows"},
			{Severities: []Severity{KO}, Days: 60, Words: "60 days after a knockout without loss of consciousness"},
			{Severities: []Severity{KOLOC}, Days: 90, Words: "90 days after a knockout with loss of consciousness"},
		},
	},
	{
		ID: "pro_board_28_45", Name: "National professional board: 28 or 45 days",
		Source: "A national professional board's rule: any stoppage at least 28 days; a knockout or heavy punishment at " +
			"least 45 days including sparring, then the board's own doctor's clearance.", // REFERENCES §14.6
		Sure: "secondary",
		Rules: []Minimum{
			{Severities: []Severity{TKO}, Days: 28, Words: "28 days after a stoppage"},
			{Severities: []Severity{KO, KOLOC}, Days: 45, Words: "45 days including sparring after a knockout, then the board's doctor's clearance"},
		},
	},
	{
		ID: "amateur_4w_3m_12m", Name: "Amateur: 4 weeks, 3 months, 12 months",
		Source: "Amateur rules derived from the former world body's (as adopted by Amateur Boxing Scotland's technical " +
			"rules, 2013): one knockout or stoppage for head blows 4 weeks; two within 3 months, 3 months; three " +
			"within 12 months, 1 year; medical certification before resuming.", // REFERENCES §11.2, §14.6
		Sure:   "verified",
		Counts: []Severity{TKO, KO, KOLOC},
		Rules: []Minimum{
			{Severities: []Severity{TKO, KO, KOLOC}, Days: 28, Words: "4 weeks after a knockout or stoppage for head blows"},
			{Severities: []Severity{TKO, KO, KOLOC}, Months: 3, Repeat: 2, WithinMonths: 3, Words: "3 months after a second within 3 months"},
			{Severities: []Severity{TKO, KO, KOLOC}, Months: 12, Repeat: 3, WithinMonths: 12, Words: "12 months after a third within 12 months"},
		},
	},
	{
		ID: "state_pro_30_60_6m", Name: "State professional regulation: 30 days, 60 days, 6 months",
		Source: "Wisconsin Admin. Code SPS 192.31, as an example of a US state's professional regulation: knockout 60 days, " +
			"technical knockout 30 days, two knockouts in 3 months 6 months, no competition or sparring.", // REFERENCES §11.2
		Sure:   "verified",
		Counts: []Severity{KO, KOLOC},
		Rules: []Minimum{
			{Severities: []Severity{TKO}, Days: 30, Words: "30 days after a technical knockout"},
			{Severities: []Severity{KO, KOLOC}, Days: 60, Words: "60 days after a knockout"},
			{Severities: []Severity{KO, KOLOC}, Months: 6, Repeat: 2, WithinMonths: 3, Words: "6 months after a second knockout within 3 months"},
		},
	},
}

func init() {
	for i := range Sets {
		Sets[i].Caution = CautionSets
	}
}

// SetByID returns the set with that id.
func SetByID(id string) (Set, bool) {
	for _, s := range Sets {
		if s.ID == id {
			return s, true
		}
	}
	return Set{}, false
}

// SetEnd is one set's answer for an incident.
type SetEnd struct {
	Set   string `json:"set"`
	Name  string `json:"name"`
	End   string `json:"end"` // first day the set's minimum no longer holds
	Words string `json:"words"`
}

// StandDown is an incident's stand-down under every set that applies.
type StandDown struct {
	Applies bool
	// Dated: EarliestEnd is set (a dated minimum or a clinician's date);
	// false for a suspected concussion without a date, which runs until a
	// written clearance whatever the date.
	Dated bool
	// EarliestEnd is the first day sparring may resume, if cleared in
	// writing: the latest of every set's end and the clinician's date.
	EarliestEnd string
	// Rule says in words which rule sets that end (the longest).
	Rule string
	// Ends lists every set's answer, the deciding one first.
	Ends []SetEnd
	// NeedsClearance is always true while a stand-down applies.
	NeedsClearance bool
}

// Compute works out an incident's stand-down under the given sets (ARP is
// always among them) and the clinician's date; history is the fighter's
// other incidents, for the sets that count repeats.
func Compute(inc Incident, history []Incident, setIDs []string) StandDown {
	sev := SeverityOf(inc)
	if sev == None {
		return StandDown{}
	}
	sd := StandDown{Applies: true, NeedsClearance: true}
	d0, err := day.Parse(inc.Day)
	if err != nil {
		return sd
	}
	ids := []string{ARP}
	for _, id := range setIDs {
		if id != ARP && !contains(ids, id) {
			ids = append(ids, id)
		}
	}
	for _, id := range ids {
		set, ok := SetByID(id)
		if !ok {
			continue
		}
		if e, ok := setEnd(set, inc, sev, d0, history); ok {
			sd.Ends = append(sd.Ends, e)
		}
	}
	if c, err := day.Parse(inc.ClinicianDay); err == nil && c > d0 {
		sd.Ends = append(sd.Ends, SetEnd{Set: "clinician", Name: "Clinician's date", End: c.String(),
			Words: fmt.Sprintf("the clinician's date, %s", c)})
	}
	if len(sd.Ends) == 0 {
		sd.Rule = "Suspected concussion: until cleared in writing by a doctor."
		return sd
	}
	sort.SliceStable(sd.Ends, func(i, j int) bool { return sd.Ends[i].End > sd.Ends[j].End })
	sd.Dated = true
	sd.EarliestEnd = sd.Ends[0].End
	var also []string
	for _, e := range sd.Ends[1:] {
		also = append(also, fmt.Sprintf("%s: %s", e.Name, e.End))
	}
	sd.Rule = fmt.Sprintf("%s: %s, so no sparring before %s", sd.Ends[0].Name, sd.Ends[0].Words, sd.EarliestEnd)
	if len(also) > 0 {
		sd.Rule += " (also " + strings.Join(also, "; ") + ")"
	}
	sd.Rule += ", and only once cleared in writing by a doctor."
	return sd
}

// setEnd is one set's longest minimum for this incident.
func setEnd(set Set, inc Incident, sev Severity, d0 day.Number, history []Incident) (SetEnd, bool) {
	best, found := SetEnd{}, false
	for _, r := range set.Rules {
		if !hasSev(r.Severities, sev) {
			continue
		}
		if r.Repeat > 1 && countWithin(set, inc, d0, history, r.WithinMonths) < r.Repeat {
			continue
		}
		end := d0 + day.Number(r.Days)
		if r.Months > 0 {
			end = addMonths(d0, r.Months)
		}
		if !found || end.String() > best.End {
			best, found = SetEnd{Set: set.ID, Name: set.Name, End: end.String(), Words: r.Words}, true
		}
	}
	return best, found
}

// countWithin counts this incident and the earlier counted ones within the
// months before it.
func countWithin(set Set, inc Incident, d0 day.Number, history []Incident, months int) int {
	from := addMonths(d0, -months)
	n := 1
	for _, h := range history {
		if h.ID == inc.ID {
			continue
		}
		hd, err := day.Parse(h.Day)
		if err != nil || hd > d0 || hd <= from || (hd == d0 && h.ID > inc.ID) {
			continue
		}
		if hasSev(set.Counts, SeverityOf(h)) {
			n++
		}
	}
	return n
}

// addMonths adds calendar months (Go's time normalisation: 31 March plus
// one month is 1 May, as a calendar reads "a month after").
func addMonths(d day.Number, months int) day.Number {
	y, m, dd := d.Civil()
	m += months
	for m > 12 {
		m -= 12
		y++
	}
	for m < 1 {
		m += 12
		y--
	}
	if n, err := day.Parse(fmt.Sprintf("%04d-%02d-01", y, m)); err == nil {
		return n + day.Number(dd-1)
	}
	return d
}

func hasSev(list []Severity, s Severity) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}
