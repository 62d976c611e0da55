package pwa_test

import (
	"fmt"
	"sort"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
)

// An entry the screen has called "Saved on this phone" survives the
// browser being killed outright (strict IndexedDB durability).
func TestSavedSurvivesAHardKill(t *testing.T) {
	s := newAppServer(t)
	dir := t.TempDir()
	b, ctx, _ := start(t, dir)
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	seed(t, ctx, athlete(idAna, "Ana Pereira", "kg"))
	require.NoError(t, pwatest.LogSession(ctx, "Ana Pereira", 7, 90))
	require.NoError(t, b.Kill())

	_, ctx2, _ := start(t, dir)
	require.NoError(t, pwatest.Open(ctx2, s.URL("/today")))
	ss := records(t, ctx2, "session")
	require.Len(t, ss, 1)
	assert.EqualValues(t, 90, ss[0].Body["minutes"])
	rows := outbox(t, ctx2)
	require.Len(t, rows, 1)
	assert.Equal(t, ss[0].ID, rows[0].Record.ID, "its outbox row survived with it")
}

// Two tabs of the app writing at once never reuse a mutation number.
func TestTwoTabsWritingAtOnceKeepCountersUnique(t *testing.T) {
	s := newAppServer(t)
	b, ctx, _ := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	seed(t, ctx, athlete(idAna, "Ana Pereira", "kg"))
	tab, cancel := b.NewTab()
	defer cancel()
	require.NoError(t, pwatest.Open(tab, s.URL("/today")))

	const each = 25
	write := fmt.Sprintf(`import('/js/db.js').then((m) => Promise.all(Array.from({ length: %d }, (_, i) => m.save({ kind: 'round', athlete: '%s', day: '2026-12-01', body: { activity: 'bag', seconds: 180, intensity: 1 + (i %% 3) } })))).then(() => true)`, each, idAna)
	errs := make(chan error, 2)
	go func() { errs <- pwatest.Eval(ctx, write, nil) }()
	go func() { errs <- pwatest.Eval(tab, write, nil) }()
	require.NoError(t, <-errs)
	require.NoError(t, <-errs)

	rows := outbox(t, ctx)
	require.Len(t, rows, 2*each)
	var ns []int
	ids := map[string]bool{}
	for _, r := range rows {
		ns = append(ns, r.N)
		ids[r.Record.ID] = true
	}
	sort.Ints(ns)
	for i, n := range ns {
		assert.Equal(t, i+1, n, "counters 1…%d, each once", 2*each)
	}
	assert.Len(t, ids, 2*each)
	var counter int
	require.NoError(t, pwatest.Meta(ctx, "counter", &counter))
	assert.Equal(t, 2*each, counter)
}
