package server_test

import (
	"encoding/json"
	"io"
	"net/http"
	"path/filepath"
	"testing"
	"time"

	"cornerbook/pwa/pwatest"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// Camp set-up lists the athletes: a name that already exists is added only
// after a warning; an athlete can be renamed, archived (out of the pickers
// and the day board, entries kept) and brought back.
func TestE2ECampRosterRenameArchiveAndDuplicateWarning(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.Route(ctx, "/camp"))
	in := func(form, testid string) string {
		return `document.querySelector('[data-testid="` + form + `"] [data-testid="` + testid + `"]')`
	}
	add := func(name string) {
		require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="camp-athlete-name"]')`, 10*time.Second))
		require.NoError(t, pwatest.Type(ctx, "camp-athlete-name", name))
		require.NoError(t, pwatest.Click(ctx, "camp-athlete-save"))
	}
	count := func() int {
		var n int
		require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (m) => (await m.byKind('athlete')).length)`, &n))
		return n
	}
	add("Kofi Brandt")
	require.NoError(t, pwatest.Poll(ctx, in("camp-add-athlete", "saved"), 5*time.Second))
	add("kofi brandt ")
	require.NoError(t, pwatest.Poll(ctx, in("camp-add-athlete", "save-error")+`.textContent.includes('Kofi Brandt is already on the list')`, 5*time.Second))
	assert.Equal(t, 1, count(), "nothing added before the coach confirms")
	require.NoError(t, pwatest.Click(ctx, "camp-athlete-save"))
	require.NoError(t, pwatest.Poll(ctx, `(await import('/js/db.js').then((m) => m.byKind('athlete'))).length === 2`, 5*time.Second))

	var ids []string
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (m) => (await m.byKind('athlete')).sort((a, b) => (a.id < b.id ? -1 : 1)).map((r) => r.id))`, &ids))
	first, second := ids[0], ids[1]
	// Archive the duplicate: out of the picker, its record kept on the hub.
	require.NoError(t, pwatest.Click(ctx, "camp-archive-"+second))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="camp-roster-`+second+`"]').dataset.archived === 'true'`, 5*time.Second))
	// Rename the other.
	require.NoError(t, pwatest.Click(ctx, "camp-rename-"+first))
	require.NoError(t, pwatest.Type(ctx, "camp-rename-input-"+first, "Kofi A. Brandt"))
	require.NoError(t, pwatest.Click(ctx, "camp-rename-save-"+first))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="camp-roster-`+first+`"]').dataset.name === 'Kofi A. Brandt'`, 5*time.Second))
	require.NoError(t, pwatest.WaitSynced(ctx))

	require.NoError(t, pwatest.Route(ctx, "/"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid="athlete-option"]').length === 1`, 5*time.Second))
	names, err := pwatest.Text(ctx, "athlete-picker")
	require.NoError(t, err)
	assert.Contains(t, names, "Kofi A. Brandt")
	hubAthletes := h.all()["athlete"]
	require.Len(t, hubAthletes, 2, "the archived athlete's record is kept")
	for _, a := range hubAthletes {
		var b struct {
			Name   string `json:"name"`
			Active *bool  `json:"active"`
		}
		require.NoError(t, json.Unmarshal(a.Body, &b))
		if a.ID == second {
			require.NotNil(t, b.Active)
			assert.False(t, *b.Active)
		}
	}
	// The day board lists only the camp's athletes in camp.
	res, err := httpGetJSON(h.url("/api/flags"))
	require.NoError(t, err)
	assert.NotContains(t, res, second, "an archived athlete is off the day board")

	// Brought back: in the picker again.
	require.NoError(t, pwatest.Route(ctx, "/camp"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="camp-archive-`+second+`"]')`, 10*time.Second))
	require.NoError(t, pwatest.Click(ctx, "camp-archive-"+second))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="camp-roster-`+second+`"]').dataset.archived === 'false'`, 5*time.Second))
	require.NoError(t, pwatest.Route(ctx, "/"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid="athlete-option"]').length === 2`, 5*time.Second))
}

// httpGetJSON reads an answer of the hub as text.
func httpGetJSON(url string) (string, error) {
	res, err := http.Get(url)
	if err != nil {
		return "", err
	}
	defer res.Body.Close()
	b, err := io.ReadAll(res.Body)
	return string(b), err
}
