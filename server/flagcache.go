package server

import (
	"container/list"
	"time"

	"cornerbook/server/flags"
)

// flagLRU is the flag service's cache of computed athlete-days, bounded
// in entries, the least recently used dropped first. Not safe for
// concurrent use: the flag service's mutex guards it.
type flagLRU struct {
	max   int
	order *list.List // front: most recently used; values *flagEntry
	byKey map[string]*list.Element
}

type flagEntry struct {
	key, athlete string
	flags        []flags.Flag
	at           time.Time // when it was computed
}

func newFlagLRU(max int) *flagLRU {
	return &flagLRU{max: max, order: list.New(), byKey: map[string]*list.Element{}}
}

func (c *flagLRU) get(key string) (flagEntry, bool) {
	el, ok := c.byKey[key]
	if !ok {
		return flagEntry{}, false
	}
	c.order.MoveToFront(el)
	return *el.Value.(*flagEntry), true
}

func (c *flagLRU) put(key, athlete string, fl []flags.Flag, at time.Time) {
	if el, ok := c.byKey[key]; ok {
		*el.Value.(*flagEntry) = flagEntry{key, athlete, fl, at}
		c.order.MoveToFront(el)
		return
	}
	c.byKey[key] = c.order.PushFront(&flagEntry{key, athlete, fl, at})
	for c.order.Len() > c.max {
		last := c.order.Back()
		c.order.Remove(last)
		delete(c.byKey, last.Value.(*flagEntry).key)
	}
}

func (c *flagLRU) remove(key string) {
	if el, ok := c.byKey[key]; ok {
		c.order.Remove(el)
		delete(c.byKey, key)
	}
}

// removeAthletes drops every entry of the athletes.
func (c *flagLRU) removeAthletes(athletes map[string]bool) {
	for el := c.order.Front(); el != nil; {
		next := el.Next()
		if e := el.Value.(*flagEntry); athletes[e.athlete] {
			c.order.Remove(el)
			delete(c.byKey, e.key)
		}
		el = next
	}
}

func (c *flagLRU) clear() {
	c.order.Init()
	clear(c.byKey)
}

func (c *flagLRU) len() int { return c.order.Len() }
