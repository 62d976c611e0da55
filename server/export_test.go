package server

// Test access to the flag service's internals (compiled into tests only).

// SetFlagsReadHook runs hook after each flag computation has read its
// inputs, before it caches; the returned func removes it.
func SetFlagsReadHook(hook func(athlete, day string)) func() {
	testHookFlagsRead = hook
	return func() { testHookFlagsRead = nil }
}

// FlagCacheLen is how many athlete-days the flag cache holds.
func (s *Server) FlagCacheLen() int {
	s.flags.mu.Lock()
	defer s.flags.mu.Unlock()
	return s.flags.cache.len()
}
