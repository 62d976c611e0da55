package records

import (
	"math"
	"testing"
)

func TestProClassLimits(t *testing.T) {
	// REFERENCES.md §7.2: division limits in lb and their exact kg values
	// (exact factor 0.45359237, NIST SP 811 B.8).
	tests := []struct {
		id     string
		lb, kg float64
	}{
		{"pro_minimumweight", 105, 47.62719885},
		{"pro_light_flyweight", 108, 48.98797596},
		{"pro_flyweight", 112, 50.80234544},
		{"pro_super_flyweight", 115, 52.16312255},
		{"pro_bantamweight", 118, 53.52389966},
		{"pro_super_bantamweight", 122, 55.33826914},
		{"pro_featherweight", 126, 57.15263862},
		{"pro_super_featherweight", 130, 58.96700810},
		{"pro_lightweight", 135, 61.23496995},
		{"pro_super_lightweight", 140, 63.50293180},
		{"pro_welterweight", 147, 66.67807839},
		{"pro_super_welterweight", 154, 69.85322498},
		{"pro_middleweight", 160, 72.57477920},
		{"pro_super_middleweight", 168, 76.20351816},
		{"pro_light_heavyweight", 175, 79.37866475},
		{"pro_cruiserweight", 200, 90.71847400},
		// Bridgerweight: from memory (REFERENCES.md §7.2 [M]).
		{"pro_bridgerweight", 224, 101.60469088},
	}
	for _, tt := range tests {
		c, ok := ClassByID(tt.id)
		if !ok {
			t.Errorf("%s missing from Classes", tt.id)
			continue
		}
		if c.Unit != "lb" || c.Limit != tt.lb || c.Body != "pro" {
			t.Errorf("%s: got %v %s (%s), want %v lb pro", tt.id, c.Limit, c.Unit, c.Body, tt.lb)
		}
		if math.Abs(c.LimitKg()-tt.kg) > 1e-8 {
			t.Errorf("%s: LimitKg = %.8f, want %.8f", tt.id, c.LimitKg(), tt.kg)
		}
	}
	if c, _ := ClassByID("pro_bridgerweight"); !c.Recalled {
		t.Error("bridgerweight must be marked as recalled from memory")
	}
	hw, ok := ClassByID("pro_heavyweight")
	if !ok || !hw.Unlimited() || hw.LimitKg() != 0 || hw.Over != 200 {
		t.Errorf("heavyweight: got %+v, want unlimited over 200 lb", hw)
	}
}

func TestAmateurClasses(t *testing.T) {
	limits := func(program, sex string) (kg []float64, open float64) {
		for _, c := range Classes {
			if c.Program != program || c.Sex != sex {
				continue
			}
			if c.Unit != "kg" || c.Body != "amateur" {
				t.Errorf("%s: unit %s body %s, want kg amateur", c.ID, c.Unit, c.Body)
			}
			if c.Unlimited() {
				open = c.Over
			} else {
				kg = append(kg, c.LimitKg())
			}
		}
		return kg, open
	}
	// olympics.com (IOC), Paris 2024 categories approved 2022; REFERENCES.md §7.3.
	// World Boxing elite World Championships 2025; REFERENCES.md §7.3 (W80 inferred).
	tests := []struct {
		program, sex string
		kg           []float64
		open         float64
	}{
		{"olympic_2024", "m", []float64{51, 57, 63.5, 71, 80, 92}, 92},
		{"olympic_2024", "f", []float64{50, 54, 57, 60, 66, 75}, 0},
		{"world_boxing_2025", "m", []float64{50, 55, 60, 65, 70, 75, 80, 85, 90}, 90},
		{"world_boxing_2025", "f", []float64{48, 51, 54, 57, 60, 65, 70, 75, 80}, 80},
	}
	for _, tt := range tests {
		kg, open := limits(tt.program, tt.sex)
		if len(kg) != len(tt.kg) || open != tt.open {
			t.Errorf("%s %s: got %v open %v, want %v open %v", tt.program, tt.sex, kg, open, tt.kg, tt.open)
			continue
		}
		for i := range kg {
			if kg[i] != tt.kg[i] {
				t.Errorf("%s %s: class %d is %v kg, want %v", tt.program, tt.sex, i, kg[i], tt.kg[i])
			}
		}
	}
}

func TestClassIDsUnique(t *testing.T) {
	seen := map[string]bool{ClassCustom: true}
	for _, c := range Classes {
		if seen[c.ID] {
			t.Errorf("duplicate or reserved class id %q", c.ID)
		}
		seen[c.ID] = true
		if c.Label == "" {
			t.Errorf("%s has no label", c.ID)
		}
		// Every limited class must be acceptable as a bout limit.
		if !c.Unlimited() && (c.LimitKg() < MinLimitKg || c.LimitKg() > MaxLimitKg) {
			t.Errorf("%s: limit %.3f kg outside the bout range %d–%d kg", c.ID, c.LimitKg(), MinLimitKg, MaxLimitKg)
		}
	}
}
