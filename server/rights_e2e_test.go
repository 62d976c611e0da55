package server_test

import (
	"encoding/json"
	"errors"
	"path/filepath"
	"testing"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	"cornerbook/server/auth"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// TestAppForbidsWhatTheHubForbids holds the app's check of who may write
// what to the hub's policy: for a staff device and an athlete's device,
// every kind, for its own athlete, another athlete and the whole camp, new
// or over a version written by itself, by another device or of another
// kind, the app in Chromium refuses exactly what auth.CanOverwrite
// refuses, naming the same field in the same words. And what it refuses
// is not saved: nothing is stored or queued on the device.
func TestAppForbidsWhatTheHubForbids(t *testing.T) {
	h := startE2EHub(t, "127.0.0.1:0", filepath.Join(t.TempDir(), "hub.db"))
	_, ctx, _ := e2eBrowser(t, "")
	require.NoError(t, pwatest.Open(ctx, h.url("/")))

	type probe struct {
		Role    string          `json:"role"`
		Athlete string          `json:"athlete"`
		Rec     devsync.Record  `json:"rec"`
		Old     *devsync.Record `json:"old"`
		Field   string          `json:"field"`
		Reason  string          `json:"reason"`
	}
	var probes []probe
	for _, d := range []auth.Device{
		{ID: "dev-staff", Role: auth.RoleStaff},
		{ID: "dev-ana", Role: auth.RoleAthlete, Athlete: "ath-ana"},
		{ID: "dev-lost", Role: auth.RoleAthlete},
	} {
		for _, k := range append(records.Kinds, "potion") {
			for _, whose := range []string{d.Athlete, "ath-beto", ""} {
				rec := devsync.Record{ID: "rec-1", Kind: k, Athlete: whose, Device: d.ID}
				if k == records.KindAthlete && whose != "" {
					rec.ID = whose
				}
				olds := []*devsync.Record{nil}
				for _, by := range []string{d.ID, "dev-other"} {
					o := rec
					o.Device = by
					olds = append(olds, &o)
				}
				jump := rec
				jump.Kind, jump.Device = records.KindJump, d.ID
				olds = append(olds, &jump)
				for _, old := range olds {
					p := probe{Role: string(d.Role), Athlete: d.Athlete, Rec: rec, Old: old}
					var fe *devsync.FieldError
					if err := auth.CanOverwrite(d, old, &rec); errors.As(err, &fe) {
						p.Field, p.Reason = fe.Field, fe.Reason
					} else {
						require.NoError(t, err)
					}
					probes = append(probes, p)
				}
			}
		}
	}
	in, err := json.Marshal(probes)
	require.NoError(t, err)
	var got []struct{ Field, Reason string }
	require.NoError(t, pwatest.Eval(ctx, `import('/js/checks.js').then((m) => `+string(in)+`.map((p) => {
		const bad = m.rightsTrouble(p.role, p.athlete, p.rec, p.old) || {};
		return { Field: bad.field || '', Reason: bad.reason || '' };
	}))`, &got))
	require.Len(t, got, len(probes))
	refused := 0
	for i, p := range probes {
		if p.Field != "" {
			refused++
		}
		if got[i].Field != p.Field || got[i].Reason != p.Reason {
			t.Errorf("%s device (athlete %q), %s of %q over %+v:\n hub: %q %q\n app: %q %q", p.Role, p.Athlete, p.Rec.Kind, p.Rec.Athlete, p.Old, p.Field, p.Reason, got[i].Field, got[i].Reason)
		}
	}
	require.Greater(t, refused, len(probes)/2, "the probes must exercise the refusals")

	// A device joined as an athlete's phone does not save a jump test, nor
	// change a check-in staff wrote: refused in words, nothing kept or queued.
	var res []struct {
		Msg string `json:"msg"`
		N   int    `json:"n"`
	}
	require.NoError(t, pwatest.Eval(ctx, `import('/js/db.js').then(async (db) => {
		await db.setMeta('role', 'athlete');
		await db.setMeta('athlete', 'ath-ana');
		// A check-in staff logged for Ana, as a pull brings it.
		const store = await db.openStore();
		await store.put('records', { id: 'ci-staff', kind: 'checkin', athlete: 'ath-ana', day: '2026-12-03', at: '2026-12-03T07:00:00Z',
			device: 'dev-staff', stamp: { l: 1, c: 0 }, body: { mass_kg: 70 } });
		const count = async () => (await db.byKind('jump')).length + (await db.byKind('checkin')).length + (await db.outboxBatch(10)).length;
		const out = [];
		for (const act of [
			() => db.save({ kind: 'jump', athlete: 'ath-ana', day: '2026-12-03', body: { test: 'cmj', heights_cm: [40, 41, 42] } }),
			() => db.save({ id: 'ci-staff', kind: 'checkin', athlete: 'ath-ana', day: '2026-12-03', body: { mass_kg: 69.5 } }),
			() => db.remove('ci-staff'),
		]) {
			let msg = '';
			try { await act(); } catch (e) { msg = e.message; }
			out.push({ msg, n: await count() });
		}
		out.push({ msg: String((await db.getRecord('ci-staff')).body.mass_kg), n: 0 });
		return out;
	})`, &res))
	require.Len(t, res, 4)
	assert.Equal(t, "Kind: an athlete's device can write check-ins, sessions and notes, not jump tests", res[0].Msg)
	const theirs = "Entry: this check-in was last written by another device; an athlete's device changes only its own entries — ask the coach"
	assert.Equal(t, theirs, res[1].Msg)
	assert.Equal(t, theirs, res[2].Msg)
	for _, r := range res[:3] {
		assert.Equal(t, 1, r.N, "nothing stored or queued beyond the check-in as it was")
	}
	assert.Equal(t, "70", res[3].Msg, "the check-in is unchanged")
}
