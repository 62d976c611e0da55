package server_test

import (
	"context"
	"encoding/json"
	"fmt"
	"net"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server/auth"
)

// noteOnDevice reads the app's copy of every note: text and audience by id.
func notesOnDevice(t *testing.T, ctx context.Context) map[string]map[string]any {
	t.Helper()
	var out map[string]map[string]any
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.byKind('note')).then((rs) => Object.fromEntries(rs.map((r) => [r.id, r.body])))`, &out))
	return out
}

// The note form says who reads a note, staff only unless the coach shares
// it; a staff-only note never reaches the athlete's phone, a shared one
// does. Made staff-only later, a shared note leaves the phone on its next
// sync, while the coach's copy stays as written.
func TestE2ENoteAudienceReachesOnlyWhoMayReadIt(t *testing.T) {
	h, accounts := startPairingHub(t)
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	ana := ids["Ana Pereira"]

	// The coach, at the laptop.
	_, coach, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(coach, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(coach))
	require.NoError(t, pwatest.Route(coach, "/note?athlete="+ana))
	require.NoError(t, pwatest.Poll(coach, `!!document.querySelector('[data-testid="note-audience"]')`, 10*time.Second))
	require.NoError(t, pwatest.Poll(coach, pwatest.Pressed("note-audience-staff"), 2*time.Second), "staff only until the coach shares it")
	words, err := pwatest.Text(coach, "note-audience-words")
	require.NoError(t, err)
	assert.Equal(t, "Only the coach and staff see this note; it never reaches Ana's phone.", words)

	require.NoError(t, pwatest.Type(coach, "note-text", "Watch the left knee."))
	require.NoError(t, pwatest.SaveAndWait(coach, "note-save"))
	require.NoError(t, pwatest.WaitText(coach, "saved", "(staff only)"))
	require.NoError(t, pwatest.Type(coach, "note-text", "Great pads today."))
	require.NoError(t, pwatest.ClickUntil(coach, "note-audience-athlete", pwatest.Pressed("note-audience-athlete"), 3))
	require.NoError(t, pwatest.WaitText(coach, "note-audience-words", "Ana sees this note on their own phone."))
	require.NoError(t, pwatest.SaveAndWait(coach, "note-save"))
	require.NoError(t, pwatest.WaitText(coach, "saved", "(shared with Ana)"))
	require.NoError(t, pwatest.WaitSynced(coach))

	var staffOnly, shared string
	for _, r := range h.all()["note"] {
		var b map[string]any
		require.NoError(t, json.Unmarshal(r.Body, &b))
		switch b["text"] {
		case "Watch the left knee.":
			assert.Equal(t, "staff", b["audience"])
			staffOnly = r.ID
		case "Great pads today.":
			assert.Equal(t, "athlete", b["audience"])
			shared = r.ID
		}
	}
	require.NotEmpty(t, staffOnly)
	require.NotEmpty(t, shared)

	// Ana's phone joins and syncs.
	join, err := accounts.NewJoin(auth.RoleAthlete, ana, "coach", time.Now())
	require.NoError(t, err)
	_, port, _ := net.SplitHostPort(h.addr)
	log := &e2eLog{}
	pb := pwatest.Start(t, pwatest.Options{Log: log, Flags: map[string]any{"host-resolver-rules": "MAP camp.test 127.0.0.1"}})
	phone, cancel := context.WithTimeout(pb.Ctx(), 120*time.Second)
	defer cancel()
	t.Cleanup(func() {
		if t.Failed() {
			t.Logf("phone console:\n%s", log.String())
		}
	})
	base := "http://camp.test:" + port
	require.NoError(t, pwatest.Open(phone, base+"/join?code="+auth.FormatCode(join.Code)))
	require.NoError(t, pwatest.Type(phone, "join-name", "Ana's phone"))
	require.NoError(t, pwatest.Click(phone, "join-submit"))
	require.NoError(t, pwatest.WaitText(phone, "join-done", "joined"))
	require.NoError(t, pwatest.Click(phone, "join-continue"))
	require.NoError(t, pwatest.WaitSynced(phone))
	require.NoError(t, pwatest.Poll(phone, `import('/js/db.js').then((m) => m.getRecord('`+shared+`')).then((r) => !!r)`, 10*time.Second), "the shared note reaches Ana's phone")
	onPhone := notesOnDevice(t, phone)
	assert.NotContains(t, onPhone, staffOnly, "the staff-only note never reaches Ana's phone")
	require.NoError(t, pwatest.Route(phone, "/today"))
	require.NoError(t, pwatest.Poll(phone, `document.querySelector('[data-testid="entry-`+shared+`"]') && document.querySelector('[data-testid="today-list"]').textContent.includes('Great pads today.')`, 10*time.Second))
	var page string
	require.NoError(t, pwatest.Eval(phone, `document.body.textContent`, &page))
	assert.NotContains(t, page, "left knee")
	// Ana's phone changes only what it wrote: the coach's note offers no Edit or Delete.
	var offers struct{ Theirs, Edit, Delete bool }
	require.NoError(t, pwatest.Eval(phone, `({ Theirs: !!document.querySelector('[data-testid="theirs-`+shared+`"]'),
		Edit: !!document.querySelector('[data-testid="edit-`+shared+`"]'), Delete: !!document.querySelector('[data-testid="delete-`+shared+`"]') })`, &offers))
	assert.Equal(t, struct{ Theirs, Edit, Delete bool }{true, false, false}, offers)
	// Her home offers what her phone may log, not the staff's screens.
	require.NoError(t, pwatest.Route(phone, "/"))
	require.NoError(t, pwatest.Poll(phone, `document.querySelector('[data-testid="screen-home"][data-ready="true"]')`, 10*time.Second))
	var tiles []string
	require.NoError(t, pwatest.Eval(phone, `[...document.querySelectorAll('.tiles [data-testid]')].map((e) => e.dataset.testid)`, &tiles))
	assert.Equal(t, []string{"nav-checkin", "nav-session", "nav-note", "nav-rts", "nav-fightweek", "nav-today"}, tiles)
	// The athlete's own note form has nothing to choose: their notes are read by staff.
	require.NoError(t, pwatest.Route(phone, "/note"))
	require.NoError(t, pwatest.WaitText(phone, "note-audience-own", "Your coach and staff read your notes."))

	// The coach corrects the shared note to staff only, from Today's Edit;
	// Today says who reads each note.
	require.NoError(t, pwatest.Route(coach, "/today"))
	require.NoError(t, pwatest.WaitText(coach, "entry-"+staffOnly, "Watch the left knee. (staff only)"))
	require.NoError(t, pwatest.WaitText(coach, "entry-"+shared, "Great pads today. (shared with the athlete)"))
	require.NoError(t, pwatest.Click(coach, "edit-"+shared))
	require.NoError(t, pwatest.Poll(coach, `document.querySelector('[data-testid="note-text"]') && document.querySelector('[data-testid="note-text"]').value === 'Great pads today.'`, 10*time.Second), "the form opens with the note as written")
	require.NoError(t, pwatest.Poll(coach, pwatest.Pressed("note-audience-athlete"), 2*time.Second))
	require.NoError(t, pwatest.ClickUntil(coach, "note-audience-staff", pwatest.Pressed("note-audience-staff"), 3))
	require.NoError(t, pwatest.SaveAndWait(coach, "note-save"))
	require.NoError(t, pwatest.WaitSynced(coach))

	require.NoError(t, pwatest.Route(phone, "/today"))
	require.NoError(t, pwatest.Poll(phone, `(() => { document.dispatchEvent(new Event('visibilitychange')); return import('/js/db.js').then((m) => m.getRecord('`+shared+`')).then((r) => !r) })()`, 15*time.Second), "made staff-only, the note leaves Ana's phone")
	require.NoError(t, pwatest.Poll(phone, `!document.querySelector('[data-testid="entry-`+shared+`"]')`, 5*time.Second), "and her Today screen")
	require.NoError(t, pwatest.WaitSynced(phone))
	n, err := pwatest.Waiting(phone)
	require.NoError(t, err)
	assert.Zero(t, n)

	// The coach's copy and the hub's are the note as the coach left it.
	onLaptop := notesOnDevice(t, coach)
	require.Contains(t, onLaptop, shared)
	assert.Equal(t, "Great pads today.", onLaptop[shared]["text"])
	assert.Equal(t, "staff", onLaptop[shared]["audience"])
	kept := 0
	for _, r := range h.all()["note"] {
		if r.ID == shared {
			kept++
			assert.False(t, r.Deleted)
			assert.Contains(t, string(r.Body), `"audience":"staff"`)
		}
	}
	assert.Equal(t, 1, kept, "once on the hub, not deleted")
}

// A note and a decision the hub refused can be corrected and sent again,
// like every other kind: the refusal names the entry and the field in
// words, "Correct" opens the form with the entry as it was, and the
// correction is kept.
func TestE2ERefusedNoteAndDecisionAreCorrected(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", t.TempDir()+"/hub.db")
	ids := h.pushAthletes(map[string]string{"Ana Pereira": "kg"})
	ana := ids["Ana Pereira"]
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))
	require.NoError(t, pwatest.WaitSynced(ctx))
	day := time.Now().Format("2006-01-02")

	// Entries an older app would have sent: the hub refuses both.
	noteID, err := pwatest.QueueUnchecked(ctx, fmt.Sprintf(`{ kind: 'note', athlete: '%s', day: '%s', body: { text: 'Ask about the new gloves.', audience: 'everyone' } }`, ana, day))
	require.NoError(t, err)
	long := strings.Repeat("x", 2001)
	decID, err := pwatest.QueueUnchecked(ctx, fmt.Sprintf(`{ kind: 'decision', athlete: '%s', day: '%s', body: { rule: 'jump_drop', note: 'Lighter session today. %s' } }`, ana, day, long))
	require.NoError(t, err)
	require.NoError(t, pwatest.Nudge(ctx))
	require.NoError(t, pwatest.WaitText(ctx, "status-rejected", "2 entries rejected"))

	require.NoError(t, pwatest.Route(ctx, "/settings"))
	var rows []struct {
		ID, Text, Field string
		N               int
	}
	require.NoError(t, pwatest.Poll(ctx, `document.querySelectorAll('[data-testid^="rejected-edit-"]').length === 2`, 10*time.Second))
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.rejectedList()).then((rs) => rs.map((r) => ({ ID: r.id, N: r.n, Field: r.field,
		Text: document.querySelector('[data-testid="rejected-' + r.n + '"]').textContent })))`, &rows))
	require.Len(t, rows, 2)
	byID := map[string]int{}
	for _, r := range rows {
		byID[r.ID] = r.N
		switch r.ID {
		case noteID:
			assert.Equal(t, "body.audience", r.Field)
			assert.Contains(t, r.Text, "Note of Ana Pereira, "+day+" — Who reads it: is not one of the choices")
		case decID:
			assert.Equal(t, "body.note", r.Field)
			assert.Contains(t, r.Text, "Decision of Ana Pereira, "+day+" — What was decided: must be at most 2000 characters")
		}
	}

	// The note: Correct opens it as written; a refused audience becomes
	// staff only, the safe reading, until the coach shares it.
	require.NoError(t, pwatest.Click(ctx, fmt.Sprintf("rejected-edit-%d", byID[noteID])))
	require.NoError(t, pwatest.Poll(ctx, `(document.querySelector('[data-testid="note-text"]') || {}).value === 'Ask about the new gloves.'`, 10*time.Second))
	require.NoError(t, pwatest.Poll(ctx, pwatest.Pressed("note-audience-staff"), 2*time.Second))
	require.NoError(t, pwatest.SaveAndWait(ctx, "note-save"))

	// The decision: Correct opens it with its words; shortened, it is kept.
	require.NoError(t, pwatest.Route(ctx, "/settings"))
	require.NoError(t, pwatest.Click(ctx, fmt.Sprintf("rejected-edit-%d", byID[decID])))
	require.NoError(t, pwatest.WaitText(ctx, "editing", "Jump height under baseline"))
	require.NoError(t, pwatest.Poll(ctx, `(document.querySelector('[data-testid="decision-edit-note"]') || {}).value.startsWith('Lighter session today. xxx')`, 10*time.Second))
	require.NoError(t, pwatest.Click(ctx, "decision-edit-save"))
	require.NoError(t, pwatest.WaitText(ctx, "save-error", "What was decided: must be at most 2000 characters; got 2024"))
	require.NoError(t, pwatest.Type(ctx, "decision-edit-note", "Lighter session today."))
	require.NoError(t, pwatest.SaveAndWait(ctx, "decision-edit-save"))
	require.NoError(t, pwatest.WaitSynced(ctx))

	var left int
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then((m) => m.rejectedList()).then((rs) => rs.length)`, &left))
	assert.Zero(t, left, "both corrections were kept")
	all := h.all()
	require.Len(t, all["note"], 1)
	assert.Equal(t, noteID, all["note"][0].ID, "the same entry, corrected")
	assert.JSONEq(t, `{"text":"Ask about the new gloves.","audience":"staff"}`, string(all["note"][0].Body))
	require.Len(t, all["decision"], 1)
	assert.Equal(t, decID, all["decision"][0].ID)
	assert.JSONEq(t, `{"rule":"jump_drop","note":"Lighter session today."}`, string(all["decision"][0].Body))
}
