package auth_test

import (
	"path/filepath"
	"testing"
	"time"

	"cornerbook/server/auth"
	"cornerbook/storage"
	"cornerbook/storage/storagetest"
	devsync "cornerbook/sync"

	"github.com/stretchr/testify/require"
	"golang.org/x/crypto/bcrypt"
)

// A restore replaces the camp's data, not who may reach it: a device
// joined after the backup stays paired and its records are taken again
// when it re-sends them; a device revoked since the backup stays revoked;
// the passphrase is the current one.
func TestRestoreKeepsWhoMayReachTheHub(t *testing.T) {
	dir := t.TempDir()
	live := filepath.Join(dir, "cornerbook.db")
	now := time.Now()
	opt := auth.Options{BcryptCost: bcrypt.MinCost}
	open := func() (*storage.DB, *auth.Store) {
		db, err := storage.Open(live, storage.Options{})
		require.NoError(t, err)
		a, err := auth.Open(db.Bolt(), opt)
		require.NoError(t, err)
		return db, a
	}
	join := func(a *auth.Store, name string) (auth.Device, string) {
		j, err := a.NewJoin(auth.RoleStaff, "", "coach", now)
		require.NoError(t, err)
		d, tok, err := a.Redeem(j.Code, name, "127.0.0.1", now)
		require.NoError(t, err)
		return d, tok
	}

	db, a := open()
	require.NoError(t, a.SetPassphrase("the old camp passphrase"))
	old, oldTok := join(a, "Old tablet")
	before := storagetest.Records(1, 1, 2)
	_, err := db.Push(devsync.PushRequest{Device: old.ID, Mutations: storagetest.Mutations(1, before...)}, nil)
	require.NoError(t, err)
	backup := filepath.Join(dir, "backup.db")
	_, err = storage.BackupFile(db, backup)
	require.NoError(t, err)

	// After the backup: a phone joins and syncs a record, the old tablet
	// is removed, the passphrase changes.
	phone, phoneTok := join(a, "New phone")
	after := storagetest.Records(2, 1, 1)
	for i := range after {
		after[i].Device = phone.ID
	}
	_, err = db.Push(devsync.PushRequest{Device: phone.ID, Mutations: storagetest.Mutations(1, after...)}, nil)
	require.NoError(t, err)
	require.NoError(t, a.Revoke(old.ID))
	require.NoError(t, a.SetPassphrase("the new camp passphrase"))
	require.NoError(t, db.Close())

	res, err := storage.Restore(backup, live)
	require.NoError(t, err)
	require.True(t, res.KeptAccess)
	require.Equal(t, len(before), res.Records)

	db, a = open()
	defer db.Close()
	got, err := a.Authenticate(phoneTok, now)
	require.NoError(t, err, "the phone joined after the backup stays paired")
	require.Equal(t, phone.ID, got.ID)
	_, err = a.Authenticate(oldTok, now)
	require.ErrorIs(t, err, auth.ErrRevoked, "the tablet removed since the backup stays removed")
	require.NoError(t, a.CheckPassphrase("the new camp passphrase"))
	require.Error(t, a.CheckPassphrase("the old camp passphrase"))

	// The phone's record is not in the backup; the phone sees the new
	// epoch and sends it again under its next counter: it is stored.
	_, err = db.Get(after[0].ID)
	require.ErrorIs(t, err, storage.ErrNotFound)
	resp, err := db.Push(devsync.PushRequest{Device: phone.ID, Mutations: storagetest.Mutations(2, after...)}, nil)
	require.NoError(t, err)
	require.Empty(t, resp.Rejected)
	r, err := db.Get(after[0].ID)
	require.NoError(t, err)
	require.Equal(t, phone.ID, r.Device)
}
