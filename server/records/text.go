package records

import (
	"fmt"
	"strings"
	"unicode"
	"unicode/utf8"
)

// Text hygiene: every text field of every record kind goes through
// CheckText (names, notes, "by", partner…), so a name cannot break a
// screen or pass for another by invisible means.

// isBidiControl reports the explicit bidirectional embeddings, overrides
// and isolates (Unicode Standard Annex #9, Davis et al. 2023, §2): text
// after them can display reversed or out of order ("Trojan Source",
// Boucher & Anderson 2021). The implicit marks (U+200E, U+200F, U+061C)
// change no order of letters and stay allowed.
func isBidiControl(r rune) bool {
	return (r >= 0x202A && r <= 0x202E) || (r >= 0x2066 && r <= 0x2069)
}

// blankLetters are letters and symbols that draw nothing (Hangul fillers,
// the blank Braille pattern): a name of them is as empty as one of spaces.
// Recalled from memory of the Unicode character database.
var blankLetters = map[rune]bool{0x115F: true, 0x1160: true, 0x3164: true, 0xFFA0: true, 0x2800: true}

// visible reports whether r draws something: a letter, digit, mark,
// punctuation or symbol, not a space, format character or blank letter.
func visible(r rune) bool {
	if blankLetters[r] || unicode.IsSpace(r) || unicode.In(r, unicode.Cf, unicode.Mn, unicode.Me) {
		return false
	}
	return unicode.IsGraphic(r)
}

// CheckText is the one check of a text field: valid UTF-8, at most max
// characters, no control characters (line breaks and tabs allowed in
// multi-line text), no bidirectional overrides, and not only invisible
// characters (blank text, spaces only, is left to the field's own rule).
// It returns the refusal's words, or "". The app's checks.js says the
// same in the same words.
func CheckText(s string, max int, multiline bool) string {
	if !utf8.ValidString(s) {
		return "is not valid UTF-8 text"
	}
	if n := utf8.RuneCountInString(s); n > max {
		return fmt.Sprintf("must be at most %d characters; got %d", max, n)
	}
	for _, r := range s {
		switch {
		case isBidiControl(r):
			return fmt.Sprintf("contains a character that reverses or reorders the text on screen (U+%04X); type the text without it", r)
		case unicode.IsControl(r) && !(multiline && (r == '\n' || r == '\r' || r == '\t')):
			if multiline {
				return fmt.Sprintf("contains a control character (U+%04X); only text, line breaks and tabs are allowed", r)
			}
			return fmt.Sprintf("must be a single line of text; it contains a control character (U+%04X)", r)
		}
	}
	if strings.TrimSpace(s) != "" && !HasVisible(s) {
		return InvisibleWords
	}
	return ""
}

// InvisibleWords refuses text made only of characters that draw nothing.
const InvisibleWords = "shows nothing on screen: it is made only of invisible characters"

// HasVisible reports whether a name shows at least one character.
func HasVisible(s string) bool {
	for _, r := range s {
		if visible(r) {
			return true
		}
	}
	return false
}
