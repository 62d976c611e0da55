package records

import "testing"

// TestTextAcceptsRealNames: names of every script stay welcome — accents
// written as combining marks, Arabic with its implicit right-to-left mark,
// Devanagari's vowel signs, an emoji sequence joined by ZWJ, Persian's
// zero-width non-joiner inside a word.
func TestTextAcceptsRealNames(t *testing.T) {
	for _, n := range []string{
		"Ana Invented",
		"Jose\u0301 Inventado",
		"\u0633\u0627\u0631\u0627 \u200F",
		"\u0905\u0928\u093F\u0932",
		"Coach \U0001F469\u200D\U0001F52C",
		"\u0645\u06CC\u200C\u0631\u0648\u0645",
	} {
		if err := name("body.name", n, "the athlete's name"); err != nil {
			t.Errorf("%q refused: %v", n, err)
		}
	}
}
