package server_test

import (
	"encoding/json"
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
