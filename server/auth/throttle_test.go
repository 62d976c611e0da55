package auth

import (
	devsync "cornerbook/sync"
	"fmt"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// TestPassphraseThrottledPerSource: one address guessing wrong uses its
// own budget only — the coach's right passphrase from another address is
// still checked and accepted; many addresses together meet a camp-wide
// ceiling; the laptop's own screen is never refused and its attempts do
// not count.
func TestPassphraseThrottledPerSource(t *testing.T) {
	f := open(t)
	require.NoError(t, f.s.SetPassphrase(goodPass))
	for i := range 10 {
		require.ErrorIs(t, f.s.CheckPassphraseFrom(fmt.Sprint("wrong ", i), "192.0.2.66"), ErrWrongPassphrase)
	}
	assert.ErrorIs(t, f.s.CheckPassphraseFrom(goodPass, "192.0.2.66"), ErrThrottled, "the guessing address is throttled")
	_, _, err := f.s.LoginFrom(goodPass, "192.0.2.10")
	assert.NoError(t, err, "the coach's phone at another address is not locked out")

	// Five more addresses, ten wrong guesses each: 60 in the minute.
	for a := 1; a <= 5; a++ {
		for i := range 10 {
			require.ErrorIs(t, f.s.CheckPassphraseFrom(fmt.Sprint("wrong ", i), fmt.Sprint("192.0.2.", 100+a)), ErrWrongPassphrase)
		}
	}
	n := f.hashN.Load()
	assert.ErrorIs(t, f.s.CheckPassphraseFrom(goodPass, "192.0.2.11"), ErrThrottled, "past the camp-wide ceiling")
	assert.Equal(t, n, f.hashN.Load(), "not checked past the ceiling")

	// The laptop: wrong tries are answered "wrong", never "too many";
	// the right one works.
	for i := range 30 {
		require.ErrorIs(t, f.s.CheckPassphraseFrom(fmt.Sprint("typo ", i), SourceLaptop), ErrWrongPassphrase)
	}
	_, _, err = f.s.LoginFrom(goodPass, SourceLaptop)
	assert.NoError(t, err)
}

// TestDeviceNamesCannotPassForTheLaptop: a joining device cannot name
// itself as the hub laptop (in any case, spacing or apostrophe), nor
// with a right-to-left override or only invisible characters; the join
// code is not used up by a refused name.
func TestDeviceNamesCannotPassForTheLaptop(t *testing.T) {
	f := open(t)
	j, err := f.s.NewJoin(RoleAthlete, "ath-0002", "", t0)
	require.NoError(t, err)
	for _, name := range []string{"coach laptop", "Coach  Laptop", "COACH’S LAPTOP", "the hub", "Hub-laptop", "laptop.",
		"Sam\u202E's phone", "\u200b\u200b", "\u3164"} {
		_, _, err := f.s.Redeem(j.Code, name, "10.42.0.12", t0)
		var fe *devsync.FieldError
		require.ErrorAs(t, err, &fe, "%q", name)
		assert.Equal(t, "name", fe.Field)
	}
	dev, _, err := f.s.Redeem(j.Code, "Sam's laptop bag phone", "10.42.0.12", t0)
	require.NoError(t, err)
	require.Error(t, f.s.Rename(dev.ID, "coach laptop"))
	require.NoError(t, f.s.Rename(dev.ID, "Sam's phone"))
}
