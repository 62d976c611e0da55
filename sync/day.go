package sync

// CivilDay splits a day written YYYY-MM-DD (a record's "day") into its
// year, month and day; ok is false unless it is a real date of the
// proleptic Gregorian calendar — what time.Parse accepts for
// time.DateOnly, without its cost (it runs several times per pushed
// record).
func CivilDay(s string) (y, m, d int, ok bool) {
	if len(s) != 10 || s[4] != '-' || s[7] != '-' {
		return 0, 0, 0, false
	}
	num := func(b string) int {
		v := 0
		for i := 0; i < len(b); i++ {
			if b[i] < '0' || b[i] > '9' {
				return -1
			}
			v = v*10 + int(b[i]-'0')
		}
		return v
	}
	y, m, d = num(s[0:4]), num(s[5:7]), num(s[8:10])
	if y < 0 || m < 1 || m > 12 || d < 1 || d > daysIn(y, m) {
		return 0, 0, 0, false
	}
	return y, m, d, true
}

// daysIn is the length of month m of year y (leap years every 4 years,
// except centuries not divisible by 400).
func daysIn(y, m int) int {
	switch m {
	case 2:
		if y%4 == 0 && (y%100 != 0 || y%400 == 0) {
			return 29
		}
		return 28
	case 4, 6, 9, 11:
		return 30
	}
	return 31
}
