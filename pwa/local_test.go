package pwa_test

import (
	"context"
	"encoding/json"
	"fmt"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
)

type rec struct {
	ID      string               `json:"id"`
	Kind    string               `json:"kind"`
	Athlete string               `json:"athlete"`
	Day     string               `json:"day"`
	At      string               `json:"at"`
	Device  string               `json:"device"`
	Stamp   struct{ L, C int64 } `json:"stamp"`
	Gen     int                  `json:"gen"`
	Deleted bool                 `json:"deleted"`
	Body    map[string]any       `json:"body"`
}

type outRow struct {
	N      int    `json:"n"`
	Op     string `json:"op"`
	Record rec    `json:"record"`
}

func records(t *testing.T, ctx context.Context, kind string) []rec {
	t.Helper()
	raw, err := pwatest.ReadIDB(ctx, "records")
	require.NoError(t, err)
	var out []rec
	for _, r := range raw {
		var x rec
		require.NoError(t, json.Unmarshal(r, &x))
		if kind == "" || x.Kind == kind {
			out = append(out, x)
		}
	}
	return out
}

func outbox(t *testing.T, ctx context.Context) []outRow {
	t.Helper()
	raw, err := pwatest.ReadIDB(ctx, "outbox")
	require.NoError(t, err)
	var out []outRow
	for _, r := range raw {
		var x outRow
		require.NoError(t, json.Unmarshal(r, &x))
		out = append(out, x)
	}
	return out
}

func TestCheckinSavedOnThePhoneWithItsOutboxRow(t *testing.T) {
	s := newAppServer(t)
	_, ctx, _ := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	seed(t, ctx, athlete(idAna, "Ana Pereira", "kg"), athlete(idBeto, "Beto Lindqvist", "lb"))

	// A bad value is refused on the screen with the field and why; nothing is stored.
	require.NoError(t, pwatest.Route(ctx, "/checkin"))
	require.NoError(t, pwatest.SelectAthlete(ctx, "Ana Pereira"))
	require.NoError(t, pwatest.Type(ctx, "checkin-mass", "12"))
	require.NoError(t, pwatest.Click(ctx, "checkin-save"))
	require.NoError(t, pwatest.WaitText(ctx, "save-error", "Body mass must be between 25 and 250 kg"))
	assert.Empty(t, records(t, ctx, "checkin"))
	assert.Empty(t, outbox(t, ctx))

	// An athlete who weighs in pounds types pounds; the record holds kg.
	require.NoError(t, pwatest.LogCheckin(ctx, "Beto Lindqvist", 72.5)) // typed as 159.8 lb
	cs := records(t, ctx, "checkin")
	require.Len(t, cs, 1)
	c := cs[0]
	assert.Equal(t, idBeto, c.Athlete)
	assert.InDelta(t, 159.8*0.45359237, c.Body["mass_kg"], 0.0005) // 1 lb = 0.45359237 kg exactly
	var day string
	require.NoError(t, pwatest.Eval(ctx, `import('/js/record.js').then((m) => m.localDay())`, &day))
	assert.Equal(t, day, c.Day)
	assert.Equal(t, time.Now().Format("2006-01-02"), c.Day, "browser and test share the machine's zone")
	_, err := time.Parse(time.RFC3339, c.At)
	assert.NoError(t, err, c.At)

	var device string
	require.NoError(t, pwatest.Meta(ctx, "deviceId", &device))
	assert.Equal(t, device, c.Device)

	rows := outbox(t, ctx)
	require.Len(t, rows, 1)
	assert.Equal(t, 1, rows[0].N)
	assert.Equal(t, "upsert", rows[0].Op)
	assert.Equal(t, c, rows[0].Record, "the outbox carries exactly the stored version")
	var hlc struct{ L, C int64 }
	require.NoError(t, pwatest.Meta(ctx, "hlc", &hlc))
	assert.Equal(t, c.Stamp, hlc, "the clock is persisted with the write")

	require.NoError(t, pwatest.WaitText(ctx, "status-waiting", "1 entry waiting to sync"))
	if err := pwatest.WaitText(ctx, "status-unreachable", "Hub unreachable — your entries are safe on this "); err != nil {
		st, _ := pwatest.Text(ctx, "status")
		var attrs map[string]string
		pwatest.Eval(ctx, `Object.assign({}, document.querySelector('[data-testid=status]').dataset)`, &attrs)
		t.Fatalf("%v; status %q %v", err, st, attrs)
	}

	// A jump grid for two athletes: mean and best as typed, one record each.
	require.NoError(t, pwatest.Route(ctx, "/jumps"))
	require.NoError(t, pwatest.Type(ctx, "jump-"+idAna+"-0", "30.1"))
	require.NoError(t, pwatest.Type(ctx, "jump-"+idAna+"-1", "31.4"))
	require.NoError(t, pwatest.WaitText(ctx, "jump-mean-"+idAna, "30.8 cm"))
	require.NoError(t, pwatest.Type(ctx, "jump-"+idAna+"-2", "29.9"))
	require.NoError(t, pwatest.WaitText(ctx, "jump-mean-"+idAna, "30.5 cm")) // (30.1 + 31.4 + 29.9) / 3 = 30.47
	require.NoError(t, pwatest.WaitText(ctx, "jump-best-"+idAna, "31.4 cm"))
	require.NoError(t, pwatest.LogJumps(ctx, map[string][]float64{"Beto Lindqvist": {40, 41.5, 39}}))
	js := records(t, ctx, "jump")
	require.Len(t, js, 2)
	for _, j := range js {
		assert.Equal(t, "cmj", j.Body["test"])
		assert.Len(t, j.Body["heights_cm"], 3)
	}

	// Rounds: one tap per finished round, undo removes the last one (tombstone).
	require.NoError(t, pwatest.LogRound(ctx, []string{"Ana Pereira", "Beto Lindqvist"}, "spar", 3))
	require.NoError(t, pwatest.LogRound(ctx, []string{"Ana Pereira", "Beto Lindqvist"}, "pads", 2))
	require.NoError(t, pwatest.WaitText(ctx, "round-count-"+idAna, "2"))
	require.NoError(t, pwatest.Click(ctx, "round-undo"))
	require.NoError(t, pwatest.WaitText(ctx, "round-count-"+idAna, "1"))
	live, dead := 0, 0
	for _, r := range records(t, ctx, "round") {
		if r.Deleted {
			dead++
			assert.Equal(t, "pads", r.Body["activity"], "undo takes back the last round")
		} else {
			live++
			assert.Equal(t, "spar", r.Body["activity"])
			assert.EqualValues(t, 3, r.Body["intensity"])
			assert.EqualValues(t, 180, r.Body["seconds"])
		}
	}
	assert.Equal(t, 2, live)
	assert.Equal(t, 2, dead)

	// Counters strictly increase and every row is still waiting.
	rows = outbox(t, ctx)
	require.Len(t, rows, 1+2+4+2)
	for i, r := range rows {
		assert.Equal(t, i+1, r.N)
	}
	require.NoError(t, pwatest.WaitText(ctx, "status-waiting", "9 entries waiting to sync"))
}

func TestDeleteRestoreAndCorrectFromToday(t *testing.T) {
	s := newAppServer(t)
	_, ctx, _ := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))
	seed(t, ctx, athlete(idAna, "Ana Pereira", "kg"))
	require.NoError(t, pwatest.LogSession(ctx, "Ana Pereira", 6, 60))
	ss := records(t, ctx, "session")
	require.Len(t, ss, 1)
	id := ss[0].ID

	require.NoError(t, pwatest.Route(ctx, "/today"))
	require.NoError(t, pwatest.WaitText(ctx, "entry-"+id, "60 min, RPE 6 = 360 AU")) // Foster et al. 2001: load = RPE × minutes
	require.NoError(t, pwatest.WaitText(ctx, "waiting-"+id, "waiting to sync"))
	require.NoError(t, pwatest.Click(ctx, "delete-"+id))
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, pwatest.Q("restore-"+id)), 5*time.Second))
	d := records(t, ctx, "session")[0]
	assert.True(t, d.Deleted)
	assert.Equal(t, 0, d.Gen)
	assert.Equal(t, ss[0].Body, d.Body, "a tombstone is the whole record")

	require.NoError(t, pwatest.Click(ctx, "restore-"+id))
	require.NoError(t, pwatest.Poll(ctx, fmt.Sprintf(`document.querySelector(%q)`, pwatest.Q("edit-"+id)), 5*time.Second))
	r := records(t, ctx, "session")[0]
	assert.False(t, r.Deleted)
	assert.Equal(t, 1, r.Gen, "a restore starts the next generation")

	// Correct it: same id, new version.
	require.NoError(t, pwatest.Click(ctx, "edit-"+id))
	require.NoError(t, pwatest.WaitText(ctx, "editing", "Correcting"))
	require.NoError(t, pwatest.Poll(ctx, `document.querySelector('[data-testid="session-minutes"]').value === '60'`, 5*time.Second))
	require.NoError(t, pwatest.Type(ctx, "session-minutes", "75"))
	require.NoError(t, pwatest.Click(ctx, "session-save"))
	require.NoError(t, pwatest.WaitText(ctx, "saved", "Saved on this "))
	all := records(t, ctx, "session")
	require.Len(t, all, 1)
	assert.EqualValues(t, 75, all[0].Body["minutes"])
	assert.Equal(t, 1, all[0].Gen)

	rows := outbox(t, ctx)
	require.Len(t, rows, 4)
	ops := []string{}
	for i, row := range rows {
		ops = append(ops, row.Op)
		if i > 0 {
			prev := rows[i-1].Record.Stamp
			cur := row.Record.Stamp
			assert.True(t, cur.L > prev.L || (cur.L == prev.L && cur.C > prev.C), "stamps increase")
		}
	}
	assert.Equal(t, []string{"upsert", "delete", "restore", "upsert"}, ops)
}
