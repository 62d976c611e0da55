package sync_test

import (
	"math/rand/v2"
	"testing"

	devsync "cornerbook/sync"
)

// The properties below are those proved for hybrid logical clocks by
// Kulkarni, Demirbas, Madappa, Avva and Leone, "Logical Physical Clocks
// and Consistent Snapshots in Globally Distributed Databases" (OPODIS
// 2014): timestamps are monotonic, e happened-before f implies
// hlc(e) < hlc(f), and l − pt stays within the clock skew ε.

// event is one stamped event of the simulation, with its vector clock for
// the happened-before relation (Lamport 1978; Mattern 1989).
type event struct {
	node  int
	stamp devsync.HLC
	pt    int64
	vc    []int
}

func happenedBefore(a, b []int) bool {
	less := false
	for i := range a {
		if a[i] > b[i] {
			return false
		}
		if a[i] < b[i] {
			less = true
		}
	}
	return less
}

type message struct {
	stamp devsync.HLC
	vc    []int
}

// simulate runs n nodes for steps events with physical clocks offset by
// fixed skews within ±eps/2 (so any two differ by at most eps). If jumps
// is set, a node's physical clock is sometimes set back by hand.
func simulate(rnd *rand.Rand, n, steps int, eps int64, jumps bool) []event {
	clocks := make([]devsync.Clock, n)
	skew := make([]int64, n)
	lastPT := make([]int64, n)
	vcs := make([][]int, n)
	for i := range skew {
		skew[i] = rnd.Int64N(eps+1) - eps/2
		vcs[i] = make([]int, n)
	}
	var inflight []message
	var out []event
	now := int64(1_772_433_000_000)
	for range steps {
		now += rnd.Int64N(5) // several events may share a millisecond
		i := rnd.IntN(n)
		pt := now + skew[i]
		if jumps && rnd.IntN(20) == 0 {
			skew[i] -= rnd.Int64N(10 * eps)
			pt = now + skew[i]
		}
		if !jumps {
			pt = max(pt, lastPT[i]) // a physical clock that never goes back
		}
		lastPT[i] = pt
		vcs[i][i]++
		var st devsync.HLC
		if len(inflight) > 0 && rnd.IntN(3) == 0 {
			k := rnd.IntN(len(inflight)) // messages arrive in any order
			m := inflight[k]
			inflight = append(inflight[:k], inflight[k+1:]...)
			for j := range vcs[i] {
				vcs[i][j] = max(vcs[i][j], m.vc[j])
			}
			st = clocks[i].Update(m.stamp, pt)
		} else {
			st = clocks[i].Now(pt) // a local or send event
			if rnd.IntN(2) == 0 {
				inflight = append(inflight, message{stamp: st, vc: append([]int(nil), vcs[i]...)})
			}
		}
		out = append(out, event{node: i, stamp: st, pt: pt, vc: append([]int(nil), vcs[i]...)})
	}
	return out
}

func TestHLCMonotonicEvenWhenClockJumpsBack(t *testing.T) {
	rnd := rand.New(rand.NewPCG(1, 2))
	for c := 0; c < 500; c++ {
		evs := simulate(rnd, 1+rnd.IntN(4), 200, 1000, true)
		last := map[int]devsync.HLC{}
		for _, e := range evs {
			if prev, ok := last[e.node]; ok && e.stamp.Compare(prev) <= 0 {
				t.Fatalf("case %d: node %d stamped %v after %v", c, e.node, e.stamp, prev)
			}
			last[e.node] = e.stamp
		}
	}
}

func TestHLCHappenedBeforeImpliesSmallerStamp(t *testing.T) {
	rnd := rand.New(rand.NewPCG(3, 4))
	pairs := 0
	for c := 0; c < 300; c++ {
		evs := simulate(rnd, 2+rnd.IntN(3), 80, 500, c%2 == 0)
		for a := range evs {
			for b := range evs {
				if happenedBefore(evs[a].vc, evs[b].vc) {
					pairs++
					if evs[a].stamp.Compare(evs[b].stamp) >= 0 {
						t.Fatalf("case %d: event %d happened before %d but stamps %v ≥ %v", c, a, b, evs[a].stamp, evs[b].stamp)
					}
				}
			}
		}
	}
	if pairs < 10_000 {
		t.Fatalf("only %d causal pairs checked: the simulation exchanges too few messages", pairs)
	}
}

func TestHLCStaysWithinSkew(t *testing.T) {
	rnd := rand.New(rand.NewPCG(5, 6))
	for c := 0; c < 500; c++ {
		eps := 1 + rnd.Int64N(5000)
		for _, e := range simulate(rnd, 2+rnd.IntN(4), 200, eps, false) {
			if d := e.stamp.L - e.pt; d > eps || d < 0 {
				t.Fatalf("case %d: l − pt = %d ms with skew bound ε = %d ms", c, d, eps)
			}
		}
	}
}

func TestHLCRules(t *testing.T) {
	var k devsync.Clock
	if got := k.Now(100); got != (devsync.HLC{L: 100}) {
		t.Fatalf("first stamp %v", got)
	}
	if got := k.Now(90); got != (devsync.HLC{L: 100, C: 1}) {
		t.Fatalf("physical clock behind: %v, want the counter to move", got)
	}
	if got := k.Update(devsync.HLC{L: 100, C: 7}, 95); got != (devsync.HLC{L: 100, C: 8}) {
		t.Fatalf("receive with equal l: %v, want c = max(c, c_m) + 1", got)
	}
	if got := k.Update(devsync.HLC{L: 150, C: 3}, 120); got != (devsync.HLC{L: 150, C: 4}) {
		t.Fatalf("receive from ahead: %v, want l_m and c_m + 1", got)
	}
	if got := k.Update(devsync.HLC{L: 10, C: 3}, 200); got != (devsync.HLC{L: 200}) {
		t.Fatalf("physical time ahead of both: %v", got)
	}
	if got := k.Update(devsync.HLC{L: 10}, 100); got != (devsync.HLC{L: 200, C: 1}) {
		t.Fatalf("old message: %v", got)
	}
	k.Restore(devsync.HLC{L: 50}) // never backwards
	if k.Last() != (devsync.HLC{L: 200, C: 1}) {
		t.Fatalf("Restore moved the clock back to %v", k.Last())
	}
	k.Restore(devsync.HLC{L: 300, C: 2})
	if got := k.Now(250); got != (devsync.HLC{L: 300, C: 3}) {
		t.Fatalf("after a restore of a persisted stamp: %v", got)
	}
}
