// Package day does calendar arithmetic on the camp's local day strings
// (YYYY-MM-DD). A record's day is chosen on the device in the camp's time
// zone; windows such as "the 28 days before" count calendar days on these
// strings and never convert through UTC, so a fighter who flew across time
// zones keeps one coherent sequence of days.
//
// A day is handled as a Number: days since 1970-01-01 in the proleptic
// Gregorian calendar. Conversion is pure integer arithmetic with no
// allocation (the civil-from-days algorithm, Hinnant 2013 "chrono-compatible
// low-level date algorithms"; checked here against the standard library).
package day

import (
	"fmt"
	"time"

	devsync "cornerbook/sync"
)

// Number is a calendar day counted from 1970-01-01 (day 0).
type Number int

// Parse reads a YYYY-MM-DD string. It refuses anything else, including
// impossible dates such as 2026-02-30.
func Parse(s string) (Number, error) {
	n, ok := parse(s)
	if !ok {
		return 0, fmt.Errorf("day %q: want a calendar date as YYYY-MM-DD", s)
	}
	return n, nil
}

// MustParse is Parse for constants in tests and tables; it panics on error.
func MustParse(s string) Number {
	n, err := Parse(s)
	if err != nil {
		panic(err)
	}
	return n
}

// Valid reports whether s is a YYYY-MM-DD calendar date.
func Valid(s string) bool {
	_, ok := parse(s)
	return ok
}

func parse(s string) (Number, bool) {
	y, m, d, ok := devsync.CivilDay(s)
	if !ok {
		return 0, false
	}
	return fromCivil(y, m, d), true
}

// fromCivil is days_from_civil (Hinnant 2013).
func fromCivil(y, m, d int) Number {
	if m <= 2 {
		y--
	}
	era := y / 400
	if y < 0 && y%400 != 0 {
		era = (y - 399) / 400
	}
	yoe := y - era*400
	mp := (m + 9) % 12
	doy := (153*mp+2)/5 + d - 1
	doe := yoe*365 + yoe/4 - yoe/100 + doy
	return Number(era*146097 + doe - 719468)
}

// Civil returns the year, month and day of n (civil_from_days, Hinnant 2013).
func (n Number) Civil() (y, m, d int) {
	z := int(n) + 719468
	era := z / 146097
	if z < 0 && z%146097 != 0 {
		era = (z - 146096) / 146097
	}
	doe := z - era*146097
	yoe := (doe - doe/1460 + doe/36524 - doe/146096) / 365
	y = yoe + era*400
	doy := doe - (365*yoe + yoe/4 - yoe/100)
	mp := (5*doy + 2) / 153
	d = doy - (153*mp+2)/5 + 1
	m = mp + 3
	if m > 12 {
		m -= 12
	}
	if m <= 2 {
		y++
	}
	return y, m, d
}

// Words names n as a coach reads it in a sentence: "Thu 3 Dec" (the
// weekday and the date, as the fight-week screens write them; a camp's
// days need no year).
func (n Number) Words() string {
	y, m, d := n.Civil()
	return time.Date(y, time.Month(m), d, 12, 0, 0, 0, time.UTC).Format("Mon 2 Jan")
}

// Words names the YYYY-MM-DD day s as Number.Words does; anything else is
// given back as it is.
func Words(s string) string {
	if n, err := Parse(s); err == nil {
		return n.Words()
	}
	return s
}

// String formats n as YYYY-MM-DD.
func (n Number) String() string {
	y, m, d := n.Civil()
	var b [10]byte
	put := func(i, v, w int) {
		for j := w - 1; j >= 0; j-- {
			b[i+j] = byte('0' + v%10)
			v /= 10
		}
	}
	put(0, y, 4)
	b[4] = '-'
	put(5, m, 2)
	b[7] = '-'
	put(8, d, 2)
	return string(b[:])
}

// Add returns the day string n days after s (before, if n < 0).
func Add(s string, n int) (string, error) {
	d, err := Parse(s)
	if err != nil {
		return "", err
	}
	return (d + Number(n)).String(), nil
}

// Diff returns a − b in calendar days.
func Diff(a, b string) (int, error) {
	x, err := Parse(a)
	if err != nil {
		return 0, err
	}
	y, err := Parse(b)
	if err != nil {
		return 0, err
	}
	return int(x - y), nil
}

// Of returns the calendar day of t in its own location (the wall clock
// date of t), for instants such as a weigh-in given with the venue's zone.
func Of(t time.Time) Number {
	y, m, d := t.Date()
	return fromCivil(y, int(m), d)
}
