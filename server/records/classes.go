package records

// Weight classes the bout form offers. Professional divisions are defined
// in pounds, amateur categories in kilograms; each keeps its own unit and
// converts to kg exactly, so a comparison against the limit is never made
// on a rounded copy. The tables are data: add a programme here when a
// federation publishes new categories.

// Class is one weight class.
type Class struct {
	ID    string `json:"id"`    // stable id stored in a bout's weight_class
	Label string `json:"label"` // display name, e.g. "Lightweight"
	// Aliases are other names of the same division (sanctioning bodies
	// differ), for search in the picker.
	Aliases []string `json:"aliases,omitempty"`
	Body    string   `json:"body"`          // "pro" or "amateur"
	Program string   `json:"program"`       // e.g. "pro", "olympic_2024", "world_boxing_2025"
	Sex     string   `json:"sex,omitempty"` // "m", "f", or empty where the table serves both
	Unit    string   `json:"unit"`          // "lb" or "kg": the unit the limit is defined in
	// Limit is the upper limit in Unit; 0 means no upper limit (heavyweight,
	// "+92 kg" and the like).
	Limit float64 `json:"limit"`
	// Over is, for an unlimited class, the limit of the class below it in
	// Unit (heavyweight is over 200 lb); 0 otherwise.
	Over float64 `json:"over,omitempty"`
	// Recalled marks a class whose limit or recognition is from memory and
	// not verified against the sanctioning body's own text.
	Recalled bool   `json:"recalled,omitempty"`
	Note     string `json:"note,omitempty"`
}

// Unlimited reports whether the class has no upper mass limit.
func (c Class) Unlimited() bool { return c.Limit == 0 }

// LimitKg is the upper limit in kg, exact for pound limits; 0 when the
// class is unlimited.
func (c Class) LimitKg() float64 {
	if c.Unit == "lb" {
		return LbToKg(c.Limit)
	}
	return c.Limit
}

// ClassCustom is the weight_class of a bout with a catchweight or any
// other limit not in the table.
const ClassCustom = "custom"

func pro(id, label string, lb float64, aliases ...string) Class {
	return Class{ID: "pro_" + id, Label: label, Aliases: aliases, Body: "pro", Program: "pro", Unit: "lb", Limit: lb}
}

func amateur(program, prefix, sex string, kg float64, over float64) Class {
	c := Class{Body: "amateur", Program: program, Sex: sex, Unit: "kg", Limit: kg, Over: over}
	who := "Men"
	if sex == "f" {
		who = "Women"
	}
	if kg == 0 {
		c.ID = prefix + "_" + sex + "_" + fmtNum(over) + "plus"
		c.Label = who + " +" + fmtNum(over) + " kg"
	} else {
		c.ID = prefix + "_" + sex + "_" + fmtNum(kg)
		c.Label = who + " " + fmtNum(kg) + " kg"
	}
	return c
}

// Classes is the weight-class table, professional divisions first (light
// to heavy), then each amateur programme by sex.
//
// Professional limits (lb): the 17 traditional divisions recognised by the
// major sanctioning bodies (REFERENCES.md §7.2). Bridgerweight (224 lb) is
// recalled from memory: introduced by one body in 2020 and not recognised
// by all. Heavyweight is unlimited: over 200 lb, or over 224 lb where
// bridgerweight is recognised. Women's professional divisions mostly share
// these limits.
//
// Amateur limits (kg): Paris 2024 Olympic categories (men 51–92, +92;
// women 50–75) and World Boxing elite World Championships 2025 (10 per
// sex; the women's 80 kg class is inferred from "10 categories" plus
// "80+"), REFERENCES.md §7.3.
var Classes = buildClasses()

func buildClasses() []Class {
	cs := []Class{
		pro("minimumweight", "Minimumweight", 105, "strawweight", "mini flyweight"),
		pro("light_flyweight", "Light flyweight", 108, "junior flyweight"),
		pro("flyweight", "Flyweight", 112),
		pro("super_flyweight", "Super flyweight", 115, "junior bantamweight"),
		pro("bantamweight", "Bantamweight", 118),
		pro("super_bantamweight", "Super bantamweight", 122, "junior featherweight"),
		pro("featherweight", "Featherweight", 126),
		pro("super_featherweight", "Super featherweight", 130, "junior lightweight"),
		pro("lightweight", "Lightweight", 135),
		pro("super_lightweight", "Super lightweight", 140, "junior welterweight"),
		pro("welterweight", "Welterweight", 147),
		pro("super_welterweight", "Super welterweight", 154, "junior middleweight"),
		pro("middleweight", "Middleweight", 160),
		pro("super_middleweight", "Super middleweight", 168),
		pro("light_heavyweight", "Light heavyweight", 175),
		pro("cruiserweight", "Cruiserweight", 200, "junior heavyweight"),
	}
	bridger := pro("bridgerweight", "Bridgerweight", 224)
	bridger.Recalled = true
	bridger.Note = "limit and recognition recalled from memory; not recognised by every sanctioning body"
	heavy := pro("heavyweight", "Heavyweight", 0)
	heavy.Over = 200
	heavy.Note = "no upper limit: over 200 lb, or over 224 lb where bridgerweight is recognised"
	cs = append(cs, bridger, heavy)

	add := func(program, prefix, sex string, limits []float64, over float64) {
		for _, kg := range limits {
			cs = append(cs, amateur(program, prefix, sex, kg, 0))
		}
		cs = append(cs, amateur(program, prefix, sex, 0, over))
	}
	add("olympic_2024", "ol2024", "m", []float64{51, 57, 63.5, 71, 80, 92}, 92)
	// The Paris 2024 women's programme has six categories and no open class.
	for _, kg := range []float64{50, 54, 57, 60, 66, 75} {
		cs = append(cs, amateur("olympic_2024", "ol2024", "f", kg, 0))
	}
	add("world_boxing_2025", "wb2025", "m", []float64{50, 55, 60, 65, 70, 75, 80, 85, 90}, 90)
	add("world_boxing_2025", "wb2025", "f", []float64{48, 51, 54, 57, 60, 65, 70, 75, 80}, 80)
	for i := range cs {
		if cs[i].Program == "world_boxing_2025" && cs[i].Sex == "f" && cs[i].Limit == 80 {
			cs[i].Note = "inferred from the programme's 10 categories and its 80+ class"
		}
	}
	return cs
}

// ClassByID finds a class by its id.
func ClassByID(id string) (Class, bool) {
	for _, c := range Classes {
		if c.ID == id {
			return c, true
		}
	}
	return Class{}, false
}
