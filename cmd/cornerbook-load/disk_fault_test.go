package main

import (
	"context"
	"errors"
	"math/rand/v2"
	"net/http"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/server"
	devsync "cornerbook/sync"
)

// mountSmallDisk mounts a tmpfs of the given size (e.g. "1536k") on a new
// folder and unmounts it when the test ends. It skips the test when
// mounting is not allowed here (not root, or no mount rights in this
// container).
func mountSmallDisk(t *testing.T, size string) string {
	t.Helper()
	dir := filepath.Join(t.TempDir(), "disk")
	require.NoError(t, os.Mkdir(dir, 0o700))
	out, err := exec.Command("mount", "-t", "tmpfs", "-o", "size="+size+",mode=0700", "tmpfs", dir).CombinedOutput()
	if err != nil {
		t.Skipf("cannot mount a small tmpfs here (needs root and mount rights), so the full-disk test does not run: %v: %s", err, strings.TrimSpace(string(out)))
	}
	t.Cleanup(func() {
		if out, err := exec.Command("umount", dir).CombinedOutput(); err != nil {
			t.Errorf("umount %s: %v: %s", dir, err, out)
		}
	})
	return dir
}

// TestFaultDiskFull fills the hub's data folder — a small tmpfs — with
// pushes until the disk is full. The hub must then refuse writes with a
// clear error (507 DISK_FULL, never a 200 for a batch it could not
// commit), keep
// serving reads, lose nothing it acknowledged, and take writes again once
// space is freed.
func TestFaultDiskFull(t *testing.T) {
	if testing.Short() {
		t.Skip("mounts a tmpfs and runs a hub subprocess")
	}
	disk := mountSmallDisk(t, "1536k")
	h := newProcHub(t, disk)
	h.start()
	c := h.client()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	st, err := c.status(ctx)
	require.NoError(t, err)
	today, err := time.Parse(time.DateOnly, st.Today)
	require.NoError(t, err)

	// The coach's laptop pushes an athlete and a long backlog for them.
	const dev = "disk-filler"
	rng := rand.New(rand.NewPCG(5, 5))
	ath := newAthletes(1, dev, time.Now(), rng)[0]
	s := &sim{role: "staff", athlete: ath.ID, id: dev}
	s.backlog(today, MaxDays, rng)
	muts := append([]devsync.Mutation{{N: 0, Op: devsync.OpUpsert, Record: ath}}, s.muts...)
	for i := range muts {
		muts[i].N = uint64(i + 1)
	}
	acked := map[string]devsync.Record{}
	var failed *apiError
	var failedBatch []devsync.Mutation
	for off := 0; off < len(muts); off += 100 {
		b := muts[off:min(off+100, len(muts))]
		res, err := c.push(ctx, coach, devsync.PushRequest{Device: dev, Mutations: b})
		if err != nil {
			require.True(t, errors.As(err, &failed), "a full disk is answered, not a broken connection: %v", err)
			failedBatch = b
			break
		}
		require.Empty(t, res.Rejected)
		require.Equal(t, b[len(b)-1].N, res.AckedThrough)
		for _, m := range b {
			e, err := expected(m.Record)
			require.NoError(t, err)
			acked[m.Record.ID] = e
		}
	}
	require.NotNil(t, failed, "the %d records never filled the 1.5 MiB disk", len(muts))
	require.NotEmpty(t, acked, "some pushes fit before the disk filled")
	t.Logf("disk full after %d acknowledged records: HTTP %d %s: %s", len(acked), failed.Status, failed.Body.Code, failed.Body.Reason)

	// The refusal says why, in plain words, and that nothing was changed.
	assert.Equal(t, http.StatusInsufficientStorage, failed.Status)
	assert.Equal(t, "DISK_FULL", failed.Body.Code)
	assert.Contains(t, failed.Body.Reason, "disk is full")
	assert.Contains(t, failed.Body.Reason, "nothing was changed")
	// Still full: the same batch is refused again, nothing half-applied.
	_, err = c.push(ctx, coach, devsync.PushRequest{Device: dev, Mutations: failedBatch})
	require.Error(t, err, "a second try on a full disk is refused too")

	// Reads go on: status and a full pull hold every acknowledged record.
	_, err = c.status(ctx)
	require.NoError(t, err, "status on a full disk")
	pulled, _, err := c.pullAll(ctx, coach)
	require.NoError(t, err, "pull on a full disk")
	chk := compare(pulled, acked, map[string]bool{dev: true})
	assert.Zero(t, chk.Missing, "%v", chk.Samples)
	assert.Zero(t, chk.Mismatched, "%v", chk.Samples)
	assert.Zero(t, chk.Duplicates, "%v", chk.Samples)
	assert.Zero(t, chk.Unexpected, "nothing of the refused batch is stored: %v", chk.Samples)

	// Space is freed: the refused batch goes through, once.
	out, err := exec.Command("mount", "-o", "remount,size=64m", disk).CombinedOutput()
	require.NoError(t, err, "%s", out)
	res, err := c.push(ctx, coach, devsync.PushRequest{Device: dev, Mutations: failedBatch})
	require.NoError(t, err, "a push after space was freed")
	assert.Equal(t, len(failedBatch), res.Applied)
	for _, m := range failedBatch {
		e, _ := expected(m.Record)
		acked[m.Record.ID] = e
	}
	h.stop()

	// The store, opened directly: invariants hold, everything acknowledged is there once.
	db, err := server.OpenStore(filepath.Join(disk, "cornerbook.db"), nil)
	require.NoError(t, err)
	defer db.Close()
	require.NoError(t, db.Check())
	n := 0
	require.NoError(t, db.All(true, func(r devsync.Record) error {
		if want, ok := acked[r.ID]; ok {
			n++
			assert.True(t, sameVersion(r, want), "record %s changed", r.ID)
		}
		return nil
	}))
	assert.Equal(t, len(acked), n)
}
