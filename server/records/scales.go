package records

// Anchor is one labelled point of the CR-10 session-RPE scale.
type Anchor struct {
	Rating int    `json:"rating"`
	Label  string `json:"label"`
}

// CR10 holds the verbal anchors of the modified CR-10 scale used for
// session RPE (Foster et al. 2001). Ratings 6, 8 and 9 carry no label; the
// picker shows them as numbers between their neighbours. Half points are
// accepted by validation.
var CR10 = []Anchor{
	{0, "Rest"},
	{1, "Very, very easy"},
	{2, "Easy"},
	{3, "Moderate"},
	{4, "Somewhat hard"},
	{5, "Hard"},
	{7, "Very hard"},
	{10, "Maximal"},
}

// CR10Label is the anchor of a rating, or "" for an unlabelled rating.
func CR10Label(rating float64) string {
	for _, a := range CR10 {
		if float64(a.Rating) == rating {
			return a.Label
		}
	}
	return ""
}

// Protocol is an interval template the conditioning form can start from.
// Every field can be changed after picking it.
type Protocol struct {
	ID       string  `json:"id"`
	Label    string  `json:"label"`
	Modality string  `json:"modality"`
	WorkS    float64 `json:"work_s"`
	RestS    float64 `json:"rest_s"`
	Reps     int     `json:"reps"`
	Sets     int     `json:"sets"`
	SetRestS float64 `json:"set_rest_s"`
	Note     string  `json:"note,omitempty"`
	// A template prescribed from a test carries either a share of V_IFT
	// (each fighter's distance per repetition comes from their latest
	// 30-15 IFT) or a band of HRmax (each fighter's target heart rates).
	PctVIFT float64 `json:"pct_vift,omitempty"`
	HRLoPct float64 `json:"hr_lo_pct,omitempty"`
	HRHiPct float64 `json:"hr_hi_pct,omitempty"`
}

// Minutes is the template's planned length (IntervalsSeconds / 60).
func (p Protocol) Minutes() float64 {
	return IntervalsSeconds(p.WorkS, p.RestS, p.Reps, p.Sets, p.SetRestS) / 60
}

// ProtocolCustom is the protocol of an interval session built by hand.
const ProtocolCustom = "custom"

// Protocols are the interval templates. Round lengths follow the rules
// of the sport (3-minute rounds with 1 minute between them; 2-minute
// rounds in many women's professional bouts); the others are common
// conditioning formats (common practice, no single source).
var Protocols = []Protocol{
	{ID: "rounds_3x3", Label: "Rounds 3 × 3 min / 1 min", Modality: "bag", WorkS: 180, RestS: 60, Reps: 3, Sets: 1,
		Note: "amateur bout length"},
	{ID: "rounds_6x3", Label: "Rounds 6 × 3 min / 1 min", Modality: "bag", WorkS: 180, RestS: 60, Reps: 6, Sets: 1},
	{ID: "rounds_12x3", Label: "Rounds 12 × 3 min / 1 min", Modality: "bag", WorkS: 180, RestS: 60, Reps: 12, Sets: 1,
		Note: "championship distance"},
	{ID: "rounds_10x2", Label: "Rounds 10 × 2 min / 1 min", Modality: "bag", WorkS: 120, RestS: 60, Reps: 10, Sets: 1,
		Note: "2-minute rounds"},
	{ID: "shuttle_30_15", Label: "Shuttle 30 s on / 15 s off", Modality: "shuttle", WorkS: 30, RestS: 15, Reps: 8, Sets: 2, SetRestS: 180},
	// Short supramaximal runs at 90 % of V_IFT and longer ones at 80 %
	// (Buchheit 2008's use of V_IFT; the shares as a coaching source gives
	// them, REFERENCES §9 — from memory for Buchheit's own table).
	{ID: "short_15_15", Label: "Short intervals 15 s / 15 s", Modality: "run", WorkS: 15, RestS: 15, Reps: 12, Sets: 3, SetRestS: 180,
		PctVIFT: 90},
	{ID: "long_3min_80", Label: "Long runs 4 × 3 min / 2 min", Modality: "run", WorkS: 180, RestS: 120, Reps: 4, Sets: 1,
		PctVIFT: 80},
	{ID: "on20_off10_x8", Label: "20 s on / 10 s off × 8", Modality: "bike", WorkS: 20, RestS: 10, Reps: 8, Sets: 1},
	// 4 × 4 min at 90–95 % of HRmax (Helgerud et al. 2007; band from memory).
	{ID: "long_4x4", Label: "Long intervals 4 × 4 min / 3 min", Modality: "run", WorkS: 240, RestS: 180, Reps: 4, Sets: 1,
		Note: "active recovery between efforts", HRLoPct: 90, HRHiPct: 95},
	{ID: "bag_30_30", Label: "Bag sprints 30 s / 30 s", Modality: "bag", WorkS: 30, RestS: 30, Reps: 10, Sets: 2, SetRestS: 120},
}

// ProtocolByID finds an interval template by id.
func ProtocolByID(id string) (Protocol, bool) {
	for _, p := range Protocols {
		if p.ID == id {
			return p, true
		}
	}
	return Protocol{}, false
}

// Option is a value a screen offers, with its words.
type Option struct {
	ID    string `json:"id"`
	Label string `json:"label"`
}

// ModalityOptions are the suggested interval modalities, with their words.
// Validation accepts any short text, because camps use what they have.
var ModalityOptions = []Option{
	{"run", "Run"}, {"shuttle", "Shuttle"}, {"bike", "Bike"}, {"row", "Rower"}, {"ski", "Ski ergometer"},
	{"bag", "Bag"}, {"pads", "Pads"}, {"shadow", "Shadow boxing"}, {"rope", "Skipping rope"}, {"swim", "Swim"},
	{"circuit", "Circuit"}, {"other", "Other"},
}

// Modalities are the ids of ModalityOptions.
var Modalities = func() []string {
	out := make([]string, len(ModalityOptions))
	for i, o := range ModalityOptions {
		out[i] = o.ID
	}
	return out
}()
