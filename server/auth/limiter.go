package auth

import (
	"sync"
	"time"
)

// Limiter counts failures per key in a rolling window. An attempt is
// allowed while the failures in the last window, plus attempts still being
// checked, stay under the limit; so twenty wrong passphrases sent at once
// cannot slip past a limit of ten while the first ten are being hashed.
type Limiter struct {
	max    int
	window time.Duration

	mu    sync.Mutex
	keys  map[string]*limitKey
	calls int
}

type limitKey struct {
	fails    []time.Time // oldest first, at most max entries
	inflight int
}

// maxKeys bounds the memory a flood of addresses can take. Past it, keys
// with no failures in the window are dropped, then arbitrary ones.
const maxKeys = 4096

// NewLimiter allows max failures per key in any window.
func NewLimiter(max int, window time.Duration) *Limiter {
	return &Limiter{max: max, window: window, keys: map[string]*limitKey{}}
}

// Attempt is one allowed attempt; report its outcome exactly once.
type Attempt struct {
	l   *Limiter
	key string
	at  time.Time
}

// Begin asks to make an attempt for key at now. It fails with a
// *ThrottledError when the key has used its budget; the caller must then
// not perform the check at all.
func (l *Limiter) Begin(key string, now time.Time) (*Attempt, error) {
	l.mu.Lock()
	defer l.mu.Unlock()
	l.calls++
	if l.calls%256 == 0 || len(l.keys) >= maxKeys {
		l.sweep(now)
	}
	k := l.keys[key]
	if k == nil {
		k = &limitKey{}
		l.keys[key] = k
	}
	k.prune(now, l.window)
	if len(k.fails)+k.inflight >= l.max {
		// Allowed again once enough failures have left the window (or, if
		// attempts in flight fill the budget, as soon as they finish).
		wait := time.Second
		if idx := len(k.fails) + k.inflight - l.max; idx < len(k.fails) {
			wait = k.fails[idx].Add(l.window).Sub(now)
		}
		if wait <= 0 {
			wait = time.Second
		}
		return nil, &ThrottledError{RetryAfter: wait}
	}
	k.inflight++
	return &Attempt{l: l, key: key, at: now}, nil
}

// Failed records the attempt as a failure.
func (a *Attempt) Failed() { a.done(true) }

// Succeeded records the attempt as not a failure.
func (a *Attempt) Succeeded() { a.done(false) }

func (a *Attempt) done(failed bool) {
	if a == nil || a.l == nil {
		return
	}
	l := a.l
	a.l = nil
	l.mu.Lock()
	defer l.mu.Unlock()
	k := l.keys[a.key]
	if k == nil { // swept meanwhile
		k = &limitKey{}
		l.keys[a.key] = k
	}
	if k.inflight > 0 {
		k.inflight--
	}
	if failed {
		k.fails = append(k.fails, a.at)
		if len(k.fails) > l.max {
			k.fails = k.fails[len(k.fails)-l.max:]
		}
	}
}

// Failures counts key's failures within the window ending at now.
func (l *Limiter) Failures(key string, now time.Time) int {
	l.mu.Lock()
	defer l.mu.Unlock()
	k := l.keys[key]
	if k == nil {
		return 0
	}
	k.prune(now, l.window)
	return len(k.fails)
}

func (k *limitKey) prune(now time.Time, window time.Duration) {
	i := 0
	for i < len(k.fails) && !k.fails[i].After(now.Add(-window)) {
		i++
	}
	k.fails = k.fails[i:]
}

func (l *Limiter) sweep(now time.Time) {
	for key, k := range l.keys {
		k.prune(now, l.window)
		if len(k.fails) == 0 && k.inflight == 0 {
			delete(l.keys, key)
		}
	}
	for key, k := range l.keys {
		if len(l.keys) < maxKeys {
			break
		}
		if k.inflight == 0 {
			delete(l.keys, key)
		}
	}
}
