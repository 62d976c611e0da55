package server_test

import (
	"encoding/json"
	"fmt"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	devsync "cornerbook/sync"
)

// Notes carry an audience: a staff-only note never reaches the athlete's
// device, a shared one does. An athlete's device edits and deletes only
// what it wrote.
func TestAthleteDeviceSeesSharedNotesAndChangesOnlyItsOwn(t *testing.T) {
	c := newCampHub(t)
	staffOnly := c.recordAs("staff", "note", c.athleteA, map[string]any{"text": "Watch the left knee.", "audience": "staff"})
	shared := c.recordAs("staff", "note", c.athleteA, map[string]any{"text": "Great pads today.", "audience": "athlete"})
	own := c.recordAs("athleteA", "note", c.athleteA, map[string]any{"text": "Left hand sore."})
	checkin := c.recordAs("staff", "checkin", c.athleteA, map[string]any{"mass_kg": 70.1})
	for as, r := range map[string]devsync.Record{"staff": staffOnly, "athleteA": own} {
		st, resp := c.pushAs(as, r)
		require.Equal(t, "stored", pushOutcome(st, resp))
	}
	for _, r := range []devsync.Record{shared, checkin} {
		st, resp := c.pushAs("staff", r)
		require.Equal(t, "stored", pushOutcome(st, resp))
	}

	st, out := c.do("athleteA", "GET", "/api/pull?since=0", nil)
	require.Equal(t, 200, st)
	var page devsync.PullResponse
	require.NoError(t, json.Unmarshal(out, &page))
	seen := map[string]bool{}
	for _, r := range page.Records {
		seen[r.ID] = true
	}
	assert.False(t, seen[staffOnly.ID], "a staff-only note never reaches the athlete's device")
	assert.True(t, seen[shared.ID], "a note shared with the athlete does")
	assert.True(t, seen[own.ID], "and the athlete's own")
	st, _ = c.do("athleteA", "GET", "/api/records/"+staffOnly.ID+"/history", nil)
	assert.Equal(t, 404, st, "nor through its history")
	st, out = c.do("staff", "GET", "/api/pull?since=0", nil)
	require.Equal(t, 200, st)
	assert.Contains(t, string(out), staffOnly.ID)

	// The athlete's device corrects its own note, not staff's, and cannot
	// delete the check-in staff logged for it.
	edit := shared
	edit.Device, edit.Stamp.L = c.devices["athleteA"], shared.Stamp.L+1000
	edit.Body = json.RawMessage(`{"text":"Great pads today!","audience":"athlete"}`)
	st, resp := c.pushAs("athleteA", edit)
	require.Equal(t, 200, st)
	require.Len(t, resp.Rejected, 1)
	assert.Equal(t, "FORBIDDEN", resp.Rejected[0].Code)
	assert.Equal(t, "id", resp.Rejected[0].Field)
	assert.Contains(t, resp.Rejected[0].Reason, "only its own entries")
	del := checkin
	del.Device, del.Stamp.L, del.Deleted = c.devices["athleteA"], checkin.Stamp.L+1000, true
	st, out2 := c.do("athleteA", "POST", "/api/push", devsync.PushRequest{Device: c.devices["athleteA"], Mutations: []devsync.Mutation{{N: 1 << 52, Op: "delete", Record: del}}})
	require.Equal(t, 200, st)
	require.NoError(t, json.Unmarshal(out2, &resp))
	require.Len(t, resp.Rejected, 1)
	assert.Equal(t, "id", resp.Rejected[0].Field)
	mine := own
	mine.Stamp.L = own.Stamp.L + 1000
	mine.Body = json.RawMessage(`{"text":"Left hand sore, better now."}`)
	st, out3 := c.do("athleteA", "POST", "/api/push", devsync.PushRequest{Device: c.devices["athleteA"], Mutations: []devsync.Mutation{{N: 1<<52 + 1, Op: "upsert", Record: mine}}})
	require.Equal(t, 200, st)
	resp = devsync.PushResponse{}
	require.NoError(t, json.Unmarshal(out3, &resp))
	assert.Equal(t, "stored", pushOutcome(st, resp), "%+v", resp.Rejected)
}

// A note shared with the athlete and later made staff-only is taken back
// from the athlete's device on its next pull (the id alone, in
// "withdrawn"), never sent to another athlete's device, and left as it is
// on the hub and on every coach's and staff device. Shared again, it comes
// back. Its history, asked for by the athlete's device, holds only the
// versions the athlete may read.
func TestNoteMadeStaffOnlyIsWithdrawnFromTheAthletesDevice(t *testing.T) {
	c := newCampHub(t)
	pull := func(as string, since uint64) devsync.PullResponse {
		t.Helper()
		st, out := c.do(as, "GET", fmt.Sprintf("/api/pull?since=%d", since), nil)
		require.Equal(t, 200, st, "%s", out)
		var page devsync.PullResponse
		require.NoError(t, json.Unmarshal(out, &page))
		return page
	}
	ids := func(p devsync.PullResponse) []string {
		var out []string
		for _, r := range p.Records {
			out = append(out, r.ID)
		}
		return out
	}
	shared := c.recordAs("staff", "note", c.athleteA, map[string]any{"text": "Great pads today.", "audience": "athlete"})
	always := c.recordAs("staff", "note", c.athleteA, map[string]any{"text": "Watch the left knee.", "audience": "staff"})
	for _, r := range []devsync.Record{shared, always} {
		st, resp := c.pushAs("staff", r)
		require.Equal(t, "stored", pushOutcome(st, resp))
	}
	first := pull("athleteA", 0)
	require.Contains(t, ids(first), shared.ID)
	require.NotContains(t, ids(first), always.ID)
	assert.Empty(t, first.Withdrawn, "nothing to take back yet")

	// Staff make the shared note staff-only, with words for staff alone.
	private := shared
	private.Stamp.L += 1000
	private.Body = json.RawMessage(`{"text":"Great pads; cut looks hard on him.","audience":"staff"}`)
	st, resp := c.pushAs("staff", private)
	require.Equal(t, "stored", pushOutcome(st, resp))

	st, out := c.do("athleteA", "GET", fmt.Sprintf("/api/pull?since=%d", first.Next), nil)
	require.Equal(t, 200, st)
	assert.NotContains(t, string(out), "cut looks hard", "the staff-only words never reach the athlete's device")
	var next devsync.PullResponse
	require.NoError(t, json.Unmarshal(out, &next))
	assert.Empty(t, next.Records)
	assert.Equal(t, []string{shared.ID}, next.Withdrawn, "the athlete's device drops its copy")
	assert.Greater(t, next.Next, first.Next, "and moves past it")
	again := pull("athleteA", next.Next)
	assert.Empty(t, again.Withdrawn, "taken back once")

	// A device pulling from the start (a new phone, a restored hub) is told
	// of the note it may have held; never of one that was never shared.
	fresh := pull("athleteA", 0)
	assert.Equal(t, []string{shared.ID}, fresh.Withdrawn)
	assert.NotContains(t, ids(fresh), shared.ID)
	other := pull("athleteB", 0)
	assert.Empty(t, other.Withdrawn, "another athlete's device never learns of it")
	assert.NotContains(t, ids(other), shared.ID)

	// Staff's copy is the note as written, and the hub keeps both versions.
	staffPage := pull("staff", 0)
	var kept *devsync.Record
	for i := range staffPage.Records {
		if staffPage.Records[i].ID == shared.ID {
			kept = &staffPage.Records[i]
		}
	}
	require.NotNil(t, kept)
	assert.JSONEq(t, string(private.Body), string(kept.Body))
	assert.False(t, kept.Deleted)
	assert.Empty(t, staffPage.Withdrawn)
	hist, err := c.store.History(shared.ID)
	require.NoError(t, err)
	assert.Len(t, hist, 2)

	// Shared again with new words: it comes back to the athlete's device,
	// and its history there holds only what the athlete may read.
	reshared := private
	reshared.Stamp.L += 1000
	reshared.Body = json.RawMessage(`{"text":"Great pads today. Keep it up.","audience":"athlete"}`)
	st, resp = c.pushAs("staff", reshared)
	require.Equal(t, "stored", pushOutcome(st, resp))
	back := pull("athleteA", again.Next)
	assert.Equal(t, []string{shared.ID}, ids(back))
	assert.Empty(t, back.Withdrawn)
	st, out = c.do("athleteA", "GET", "/api/records/"+shared.ID+"/history", nil)
	require.Equal(t, 200, st)
	assert.NotContains(t, string(out), "cut looks hard", "a staff-only version stays off the athlete's device")
	assert.Contains(t, string(out), "Keep it up")
	st, out = c.do("staff", "GET", "/api/records/"+shared.ID+"/history", nil)
	require.Equal(t, 200, st)
	assert.Contains(t, string(out), "cut looks hard")
}
