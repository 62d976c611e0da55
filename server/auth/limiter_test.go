package auth

import (
	"errors"
	"fmt"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestLimiterRollingWindow(t *testing.T) {
	l := NewLimiter(3, time.Minute)
	for i := range 3 {
		a, err := l.Begin("k", t0.Add(time.Duration(i)*10*time.Second))
		require.NoError(t, err)
		a.Failed()
	}
	assert.Equal(t, 3, l.Failures("k", t0.Add(20*time.Second)))
	_, err := l.Begin("k", t0.Add(30*time.Second))
	var te *ThrottledError
	require.True(t, errors.As(err, &te))
	assert.Equal(t, 30*time.Second, te.RetryAfter)

	// Other keys are independent.
	a, err := l.Begin("other", t0.Add(30*time.Second))
	require.NoError(t, err)
	a.Succeeded()

	// Exactly 60 s after the first failure it has left the window.
	a, err = l.Begin("k", t0.Add(60*time.Second))
	require.NoError(t, err)
	a.Succeeded() // successes are not counted
	a.Failed()    // reporting twice changes nothing
	assert.Equal(t, 2, l.Failures("k", t0.Add(60*time.Second)))
	assert.Equal(t, 0, l.Failures("k", t0.Add(3*time.Minute)))
}

func TestLimiterCountsAttemptsInFlight(t *testing.T) {
	l := NewLimiter(2, time.Minute)
	a1, err := l.Begin("k", t0)
	require.NoError(t, err)
	a2, err := l.Begin("k", t0)
	require.NoError(t, err)
	_, err = l.Begin("k", t0)
	require.ErrorIs(t, err, ErrThrottled, "two checks still running fill a budget of two")
	a1.Succeeded()
	a3, err := l.Begin("k", t0)
	require.NoError(t, err)
	a2.Failed()
	a3.Failed()
	_, err = l.Begin("k", t0.Add(time.Second))
	var te *ThrottledError
	require.True(t, errors.As(err, &te))
	assert.Equal(t, 59*time.Second, te.RetryAfter)
}

func TestLimiterMemoryIsBounded(t *testing.T) {
	l := NewLimiter(10, time.Minute)
	for i := range maxKeys + 500 {
		a, err := l.Begin(fmt.Sprintf("10.0.%d.%d", i/256, i%256), t0)
		require.NoError(t, err)
		a.Failed()
	}
	assert.LessOrEqual(t, len(l.keys), maxKeys)
	// Expired keys go at the next sweep.
	for range 256 {
		a, _ := l.Begin("late", t0.Add(2*time.Minute))
		if a != nil {
			a.Succeeded()
		}
	}
	assert.Less(t, len(l.keys), 10)
}
