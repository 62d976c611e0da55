package sync

import "fmt"

// HLC is a hybrid logical clock timestamp (Kulkarni et al. 2014): L is the
// largest physical time seen, in Unix milliseconds; C breaks ties while L
// does not move. They travel as two JSON numbers because 48+16 bits do not
// fit a JavaScript Number.
type HLC struct {
	L int64  `json:"l"`
	C uint32 `json:"c"`
}

// Compare returns -1, 0 or +1.
func (a HLC) Compare(b HLC) int {
	switch {
	case a.L < b.L:
		return -1
	case a.L > b.L:
		return 1
	case a.C < b.C:
		return -1
	case a.C > b.C:
		return 1
	}
	return 0
}

func (a HLC) String() string { return fmt.Sprintf("%d.%d", a.L, a.C) }

// Clock is a hybrid logical clock. The zero value is ready to use. It is
// not safe for concurrent use; callers hold their own lock.
type Clock struct {
	last HLC
}

// Restore sets the clock to a persisted state so it never goes backwards
// across restarts.
func (k *Clock) Restore(h HLC) {
	if h.Compare(k.last) > 0 {
		k.last = h
	}
}

// Last is the latest timestamp issued or received.
func (k *Clock) Last() HLC { return k.last }

// Now stamps a local or send event at physical time pt (Unix ms).
func (k *Clock) Now(pt int64) HLC {
	if pt > k.last.L {
		k.last = HLC{L: pt}
	} else {
		k.last.C++
	}
	return k.last
}

// Update applies the receive rule for a remote timestamp m at physical time pt.
func (k *Clock) Update(m HLC, pt int64) HLC {
	old := k.last
	l := max(old.L, m.L, pt)
	var c uint32
	switch {
	case l == old.L && l == m.L:
		c = max(old.C, m.C) + 1
	case l == old.L:
		c = old.C + 1
	case l == m.L:
		c = m.C + 1
	}
	k.last = HLC{L: l, C: c}
	return k.last
}
