package server

import (
	"fmt"
	"testing"
	"time"

	"cornerbook/server/flags"
)

// TestFlagLRU_DropsTheLeastRecentlyUsed: the cache holds at most its
// bound, dropping the entry used longest ago; removing an athlete drops
// only that athlete's days.
func TestFlagLRU_DropsTheLeastRecentlyUsed(t *testing.T) {
	c := newFlagLRU(3)
	at := time.Unix(0, 0)
	for i := 0; i < 3; i++ {
		c.put(fmt.Sprint("k", i), "a", []flags.Flag{{Rule: fmt.Sprint(i)}}, at)
	}
	c.get("k0") // k1 is now the least recently used
	c.put("k3", "b", nil, at)
	if c.len() != 3 {
		t.Fatalf("len %d, want 3", c.len())
	}
	if _, ok := c.get("k1"); ok {
		t.Fatal("k1 should have been dropped")
	}
	for _, k := range []string{"k0", "k2", "k3"} {
		if _, ok := c.get(k); !ok {
			t.Fatalf("%s was dropped", k)
		}
	}
	c.removeAthletes(map[string]bool{"a": true})
	if c.len() != 1 {
		t.Fatalf("after removing athlete a: len %d, want 1", c.len())
	}
	for i := 0; i < 10000; i++ {
		c.put(fmt.Sprint("d", i), "c", nil, at)
	}
	if c.len() != 3 || len(c.byKey) != 3 {
		t.Fatalf("bound not kept: %d entries, %d keys", c.len(), len(c.byKey))
	}
}
