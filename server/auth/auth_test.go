package auth

import (
	"bytes"
	"crypto/sha256"
	"encoding/base64"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"
	"sync"
	"sync/atomic"
	"testing"
	"time"

	devsync "cornerbook/sync"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	bolt "go.etcd.io/bbolt"
	"golang.org/x/crypto/bcrypt"
)

var t0 = time.Date(2026, 12, 1, 7, 0, 0, 0, time.UTC)

type clock struct {
	mu sync.Mutex
	t  time.Time
}

func (c *clock) Now() time.Time { c.mu.Lock(); defer c.mu.Unlock(); return c.t }
func (c *clock) Add(d time.Duration) {
	c.mu.Lock()
	c.t = c.t.Add(d)
	c.mu.Unlock()
}

type fixture struct {
	s     *Store
	db    *bolt.DB
	path  string
	clock *clock
	hashN *atomic.Int64 // passphrase hash checks performed
}

// open makes a store on a real bbolt file. Tests use bcrypt's minimum cost
// for speed; TestDefaultCostIs12 checks the production cost.
func open(t *testing.T, tweak ...func(*Options)) *fixture {
	t.Helper()
	path := filepath.Join(t.TempDir(), "hub.db")
	db, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: time.Second})
	require.NoError(t, err)
	t.Cleanup(func() { db.Close() })
	f := &fixture{db: db, path: path, clock: &clock{t: t0}, hashN: new(atomic.Int64)}
	opt := Options{
		Now:        f.clock.Now,
		BcryptCost: bcrypt.MinCost,
		CompareHash: func(h, p []byte) error {
			f.hashN.Add(1)
			return bcrypt.CompareHashAndPassword(h, p)
		},
	}
	for _, fn := range tweak {
		fn(&opt)
	}
	f.s, err = Open(db, opt)
	require.NoError(t, err)
	return f
}

func fieldOf(t *testing.T, err error) string {
	t.Helper()
	var fe *devsync.FieldError
	require.True(t, errors.As(err, &fe), "want a *devsync.FieldError, got %v", err)
	return fe.Field
}

const goodPass = "hands up, chin down"

func TestPassphraseSetAndCheck(t *testing.T) {
	f := open(t)
	s := f.s
	assert.False(t, s.HasPassphrase())
	assert.ErrorIs(t, s.CheckPassphrase(goodPass), ErrNoPassphrase)

	err := s.SetPassphrase("jab-cross")
	assert.Equal(t, "passphrase", fieldOf(t, err))
	assert.Contains(t, err.Error(), "at least 10 characters (it has 9)")
	assert.Equal(t, "passphrase", fieldOf(t, s.SetPassphrase("          ")))
	assert.Equal(t, "passphrase", fieldOf(t, s.SetPassphrase(strings.Repeat("x", MaxPassphrase+1))))
	assert.False(t, s.HasPassphrase(), "a refused passphrase stores nothing")

	require.NoError(t, s.SetPassphrase(goodPass))
	assert.True(t, s.HasPassphrase())
	assert.NoError(t, s.CheckPassphrase(goodPass))
	assert.ErrorIs(t, s.CheckPassphrase("hands up, chin up!"), ErrWrongPassphrase)
	assert.ErrorIs(t, s.CheckPassphrase(""), ErrWrongPassphrase)

	// Ten characters, counted as characters, not bytes.
	assert.NoError(t, s.SetPassphrase("ääääääääää"))
	assert.NoError(t, s.CheckPassphrase("ääääääääää"))

	// A bad new passphrase keeps the old one.
	require.Error(t, s.SetPassphrase("short"))
	assert.NoError(t, s.CheckPassphrase("ääääääääää"))

	// bcrypt reads 72 bytes; the pre-hash makes every character count.
	long := strings.Repeat("one more round ", 6) // 90 bytes
	require.NoError(t, s.SetPassphrase(long+"A"))
	assert.NoError(t, s.CheckPassphrase(long+"A"))
	assert.ErrorIs(t, s.CheckPassphrase(long+"B"), ErrWrongPassphrase)

	// The passphrase is not in the database file.
	data, err := os.ReadFile(f.path)
	require.NoError(t, err)
	assert.False(t, bytes.Contains(data, []byte("one more round")))
}

func TestDefaultCostIs12(t *testing.T) {
	f := open(t, func(o *Options) { o.BcryptCost = 0 })
	require.NoError(t, f.s.SetPassphrase(goodPass))
	var hash []byte
	require.NoError(t, f.db.View(func(tx *bolt.Tx) error {
		hash = append(hash, tx.Bucket(bucketMeta).Get(keyPassphrase)...)
		return nil
	}))
	cost, err := bcrypt.Cost(hash)
	require.NoError(t, err)
	assert.Equal(t, 12, cost)
	assert.True(t, bytes.HasPrefix(hash, []byte("$2")), "a bcrypt hash")
}

func TestEleventhWrongPassphraseRefusedUnchecked(t *testing.T) {
	f := open(t)
	require.NoError(t, f.s.SetPassphrase(goodPass))
	for i := range 10 {
		err := f.s.CheckPassphrase("wrong guess " + string(rune('a'+i)))
		require.ErrorIs(t, err, ErrWrongPassphrase, "attempt %d", i+1)
		f.clock.Add(time.Second)
	}
	require.EqualValues(t, 10, f.hashN.Load())

	// 11th, ten seconds after the first: refused, and not hashed.
	err := f.s.CheckPassphrase("wrong guess k")
	require.ErrorIs(t, err, ErrThrottled)
	var te *ThrottledError
	require.True(t, errors.As(err, &te))
	assert.Equal(t, 50*time.Second, te.RetryAfter, "the first failure leaves the window 60 s after it")
	assert.Contains(t, err.Error(), "try again in 50 s")
	// Even the right passphrase is not checked while throttled.
	assert.ErrorIs(t, f.s.CheckPassphrase(goodPass), ErrThrottled)
	_, _, err = f.s.Login(goodPass)
	assert.ErrorIs(t, err, ErrThrottled)
	assert.EqualValues(t, 10, f.hashN.Load(), "no hash check while throttled")

	// 60 s after the first failure it leaves the window: one attempt again.
	f.clock.Add(50 * time.Second)
	assert.NoError(t, f.s.CheckPassphrase(goodPass))
	assert.EqualValues(t, 11, f.hashN.Load())
	assert.ErrorIs(t, f.s.CheckPassphrase("wrong again"), ErrWrongPassphrase)
	assert.ErrorIs(t, f.s.CheckPassphrase(goodPass), ErrThrottled, "back at ten failures in the window")

	// A whole minute of quiet: all allowed again.
	f.clock.Add(time.Minute)
	for range 3 {
		assert.NoError(t, f.s.CheckPassphrase(goodPass))
	}
}

func TestConcurrentWrongPassphrasesStayWithinBudget(t *testing.T) {
	f := open(t, func(o *Options) {
		inner := o.CompareHash
		o.CompareHash = func(h, p []byte) error {
			time.Sleep(5 * time.Millisecond) // keep the checks overlapping
			return inner(h, p)
		}
	})
	require.NoError(t, f.s.SetPassphrase(goodPass))
	var wg sync.WaitGroup
	var throttled atomic.Int64
	for range 40 {
		wg.Add(1)
		go func() {
			defer wg.Done()
			if errors.Is(f.s.CheckPassphrase("not the passphrase"), ErrThrottled) {
				throttled.Add(1)
			}
		}()
	}
	wg.Wait()
	assert.LessOrEqual(t, f.hashN.Load(), int64(10))
	assert.EqualValues(t, 40-f.hashN.Load(), throttled.Load())
}

func TestSetupCode(t *testing.T) {
	f := open(t)
	code := f.s.SetupCode()
	require.Len(t, code, CodeLength)
	for _, c := range code {
		assert.Contains(t, CodeAlphabet, string(c))
	}
	assert.Equal(t, "passphrase", fieldOf(t, f.s.SetupWithCode(code, "short")))
	assert.ErrorIs(t, f.s.SetupWithCode("AAAAAAAA", goodPass), ErrBadSetupCode)
	assert.False(t, f.s.HasPassphrase())

	typed := strings.ToLower(FormatCode(code)) // "abcd-efgh", as typed on a phone
	require.NoError(t, f.s.SetupWithCode(typed, goodPass))
	assert.NoError(t, f.s.CheckPassphrase(goodPass))
	assert.Empty(t, f.s.SetupCode(), "one time only")
	assert.ErrorIs(t, f.s.SetupWithCode(code, "another passphrase"), ErrPassphraseSet)
	assert.NoError(t, f.s.CheckPassphrase(goodPass), "unchanged")

	// A restarted hub with a passphrase has no setup code.
	s2, err := Open(f.db, Options{BcryptCost: bcrypt.MinCost})
	require.NoError(t, err)
	assert.Empty(t, s2.SetupCode())

	// Setting it on the laptop also ends the setup code.
	g := open(t)
	c := g.s.SetupCode()
	require.NoError(t, g.s.SetPassphrase(goodPass))
	assert.Empty(t, g.s.SetupCode())
	assert.ErrorIs(t, g.s.SetupWithCode(c, "another passphrase"), ErrPassphraseSet)
}

func TestSetupCodeAttemptsAreThrottled(t *testing.T) {
	f := open(t)
	for range 10 {
		require.ErrorIs(t, f.s.SetupWithCode("WRONGCDE", goodPass), ErrBadSetupCode)
	}
	assert.ErrorIs(t, f.s.SetupWithCode(f.s.SetupCode(), goodPass), ErrThrottled)
	assert.False(t, f.s.HasPassphrase())
}

func TestLogin(t *testing.T) {
	f := open(t)
	require.NoError(t, f.s.SetPassphrase(goodPass))
	_, _, err := f.s.Login("not it at all")
	assert.ErrorIs(t, err, ErrWrongPassphrase)
	devs, _ := f.s.Devices()
	assert.Empty(t, devs)

	dev, tok, err := f.s.Login(goodPass)
	require.NoError(t, err)
	assert.Equal(t, RoleCoach, dev.Role)
	assert.Equal(t, LaptopName, dev.Name)
	assert.Empty(t, dev.Athlete)
	got, err := f.s.Authenticate(tok, t0)
	require.NoError(t, err)
	assert.Equal(t, dev.ID, got.ID)
	assert.True(t, got.IsCoach())
}

func TestJoinValidation(t *testing.T) {
	f := open(t)
	for _, c := range []struct {
		role    Role
		athlete string
		field   string
	}{
		{"boss", "", "role"},
		{"", "", "role"},
		{"Coach", "", "role"},
		{RoleAthlete, "", "athlete"},
		{RoleAthlete, "   ", "athlete"},
		{RoleStaff, "ath-1", "athlete"},
		{RoleCoach, "ath-1", "athlete"},
		{RoleAthlete, "ath 1", "athlete"},
		{RoleAthlete, strings.Repeat("a", 65), "athlete"},
	} {
		_, err := f.s.NewJoin(c.role, c.athlete, "coach-screen", t0)
		require.Error(t, err, "%+v", c)
		assert.Equal(t, c.field, fieldOf(t, err), "%+v", c)
	}
	var n int
	require.NoError(t, f.db.View(func(tx *bolt.Tx) error { n = tx.Bucket(bucketJoins).Stats().KeyN; return nil }))
	assert.Zero(t, n, "refused join codes are not stored")
}

func TestJoinSingleUseAndBinding(t *testing.T) {
	f := open(t)
	j, err := f.s.NewJoin(RoleAthlete, "ath-0001", "coach-screen", t0)
	require.NoError(t, err)
	assert.Len(t, j.Code, CodeLength)
	for _, c := range j.Code {
		assert.Contains(t, CodeAlphabet, string(c))
	}
	assert.Equal(t, t0.Add(10*time.Minute), j.Expires)

	// A bad name is refused first and does not use the code.
	_, _, err = f.s.Redeem(j.Code, "  ", "192.168.50.31", t0)
	assert.Equal(t, "name", fieldOf(t, err))

	dev, tok, err := f.s.Redeem(" "+strings.ToLower(FormatCode(j.Code))+" ", "Sam's phone", "192.168.50.31", t0.Add(time.Minute))
	require.NoError(t, err)
	assert.Equal(t, RoleAthlete, dev.Role)
	assert.Equal(t, "ath-0001", dev.Athlete)
	assert.Equal(t, "Sam's phone", dev.Name)
	assert.Equal(t, "coach-screen", dev.JoinedBy)
	raw, err := base64.RawURLEncoding.DecodeString(tok)
	require.NoError(t, err)
	assert.Len(t, raw, 32, "256-bit token")

	_, _, err = f.s.Redeem(j.Code, "Other phone", "192.168.50.32", t0.Add(2*time.Minute))
	assert.ErrorIs(t, err, ErrJoinUsed)
	assert.Contains(t, err.Error(), "07:01 UTC")
	devs, _ := f.s.Devices()
	assert.Len(t, devs, 1)

	got, err := f.s.Authenticate(tok, t0.Add(3*time.Minute))
	require.NoError(t, err)
	assert.Equal(t, dev.ID, got.ID)
	assert.Equal(t, "ath-0001", got.Athlete)

	// Two codes are not the same code.
	j2, err := f.s.NewJoin(RoleStaff, "", "coach-screen", t0)
	require.NoError(t, err)
	assert.NotEqual(t, j.Code, j2.Code)
	staff, _, err := f.s.Redeem(j2.Code, "Cutman tablet", "192.168.50.40", t0)
	require.NoError(t, err)
	assert.Equal(t, RoleStaff, staff.Role)
	assert.Empty(t, staff.Athlete)
}

func TestJoinExpiresAfterTenMinutes(t *testing.T) {
	f := open(t)
	j1, err := f.s.NewJoin(RoleStaff, "", "", t0)
	require.NoError(t, err)
	j2, err := f.s.NewJoin(RoleStaff, "", "", t0)
	require.NoError(t, err)
	_, _, err = f.s.Redeem(j1.Code, "Physio tablet", "a", t0.Add(10*time.Minute-time.Second))
	assert.NoError(t, err, "9:59 after: still valid")
	_, _, err = f.s.Redeem(j2.Code, "Physio tablet", "a", t0.Add(10*time.Minute))
	assert.ErrorIs(t, err, ErrJoinExpired)
	assert.Contains(t, err.Error(), "07:10 UTC")
	_, _, err = f.s.Redeem("ABCDEFGH", "Physio tablet", "a", t0)
	assert.ErrorIs(t, err, ErrJoinUnknown)
	_, _, err = f.s.Redeem("", "Physio tablet", "a", t0)
	assert.ErrorIs(t, err, ErrJoinUnknown)

	// Old codes are cleared out when new ones are made.
	_, err = f.s.NewJoin(RoleStaff, "", "", t0.Add(25*time.Hour))
	require.NoError(t, err)
	var n int
	require.NoError(t, f.db.View(func(tx *bolt.Tx) error { n = tx.Bucket(bucketJoins).Stats().KeyN; return nil }))
	assert.Equal(t, 1, n)
}

func TestWrongJoinCodesThrottledPerAddress(t *testing.T) {
	f := open(t)
	j, err := f.s.NewJoin(RoleAthlete, "ath-0002", "", t0)
	require.NoError(t, err)
	for i := range 10 {
		_, _, err := f.s.Redeem("WRNGCD"+string(CodeAlphabet[i])+"2", "phone", "10.42.0.99", t0)
		require.ErrorIs(t, err, ErrJoinUnknown)
	}
	_, _, err = f.s.Redeem(j.Code, "phone", "10.42.0.99", t0.Add(time.Second))
	assert.ErrorIs(t, err, ErrThrottled, "the right code is not even looked at")
	// Another address is unaffected, and the code was not used up.
	dev, _, err := f.s.Redeem(j.Code, "phone", "10.42.0.12", t0.Add(time.Second))
	require.NoError(t, err)
	assert.Equal(t, "ath-0002", dev.Athlete)
	// After the window the first address may try again.
	j2, err := f.s.NewJoin(RoleStaff, "", "", t0.Add(time.Minute))
	require.NoError(t, err)
	_, _, err = f.s.Redeem(j2.Code, "tablet", "10.42.0.99", t0.Add(time.Minute))
	assert.NoError(t, err)
}

func TestSecretsStoredOnlyAsHashes(t *testing.T) {
	f := open(t)
	require.NoError(t, f.s.SetPassphrase(goodPass))
	j, err := f.s.NewJoin(RoleAthlete, "ath-0003", "", t0)
	require.NoError(t, err)
	_, tok1, err := f.s.Redeem(j.Code, "phone", "x", t0)
	require.NoError(t, err)
	_, tok2, err := f.s.Login(goodPass)
	require.NoError(t, err)
	require.NoError(t, f.db.Sync())

	data, err := os.ReadFile(f.path)
	require.NoError(t, err)
	for _, secret := range []string{tok1, tok2, j.Code, goodPass} {
		assert.False(t, bytes.Contains(data, []byte(secret)), "%q must not be stored", secret)
	}
	for _, tok := range []string{tok1, tok2} {
		raw, _ := base64.RawURLEncoding.DecodeString(tok)
		assert.False(t, bytes.Contains(data, raw), "raw token bytes must not be stored")
		// The scan does see what is stored: the hash is there.
		h := sha256.Sum256([]byte(tok))
		assert.True(t, bytes.Contains(data, h[:]), "the token's hash is the index key")
	}
}

func TestAuthenticate(t *testing.T) {
	f := open(t)
	j, _ := f.s.NewJoin(RoleStaff, "", "", t0)
	dev, tok, err := f.s.Redeem(j.Code, "Ringside tablet", "x", t0)
	require.NoError(t, err)

	_, err = f.s.Authenticate("", t0)
	assert.ErrorIs(t, err, ErrNoToken)
	_, err = f.s.Authenticate("not-a-token", t0)
	assert.ErrorIs(t, err, ErrUnknownToken)
	forged := []byte(tok)
	forged[5] ^= 1
	_, err = f.s.Authenticate(string(forged), t0)
	assert.ErrorIs(t, err, ErrUnknownToken)

	// Last seen moves at most once a minute.
	_, err = f.s.Authenticate(tok, t0.Add(30*time.Second))
	require.NoError(t, err)
	d, _ := f.s.Device(dev.ID)
	assert.Equal(t, t0, d.LastSeen)
	_, err = f.s.Authenticate(tok, t0.Add(61*time.Second))
	require.NoError(t, err)
	d, _ = f.s.Device(dev.ID)
	assert.Equal(t, t0.Add(61*time.Second), d.LastSeen)

	// Survives a restart.
	require.NoError(t, f.db.Close())
	db, err := bolt.Open(f.path, 0o600, &bolt.Options{Timeout: time.Second})
	require.NoError(t, err)
	defer db.Close()
	s2, err := Open(db, Options{})
	require.NoError(t, err)
	got, err := s2.Authenticate(tok, t0.Add(2*time.Minute))
	require.NoError(t, err)
	assert.Equal(t, dev.ID, got.ID)
}

func TestRevoke(t *testing.T) {
	f := open(t)
	j1, _ := f.s.NewJoin(RoleAthlete, "ath-0004", "", t0)
	j2, _ := f.s.NewJoin(RoleAthlete, "ath-0005", "", t0)
	lost, tokLost, err := f.s.Redeem(j1.Code, "lost phone", "x", t0)
	require.NoError(t, err)
	_, tokKept, err := f.s.Redeem(j2.Code, "kept phone", "x", t0)
	require.NoError(t, err)

	f.clock.Add(5 * time.Minute)
	require.NoError(t, f.s.Revoke(lost.ID))
	_, err = f.s.Authenticate(tokLost, t0.Add(6*time.Minute))
	assert.ErrorIs(t, err, ErrRevoked)
	_, err = f.s.Authenticate(tokKept, t0.Add(6*time.Minute))
	assert.NoError(t, err)
	require.NoError(t, f.s.Revoke(lost.ID), "twice is fine")
	assert.ErrorIs(t, f.s.Revoke("no-such-id"), ErrUnknownDevice)

	devs, err := f.s.Devices()
	require.NoError(t, err)
	require.Len(t, devs, 2)
	byName := map[string]Device{devs[0].Name: devs[0], devs[1].Name: devs[1]}
	assert.True(t, byName["lost phone"].Revoked)
	assert.Equal(t, t0.Add(5*time.Minute), byName["lost phone"].RevokedAt)
	assert.False(t, byName["kept phone"].Revoked)

	assert.False(t, CanRead(byName["lost phone"], &devsync.Record{Kind: "checkin", Athlete: "ath-0004"}))
	assert.ErrorIs(t, RequireCoach(byName["lost phone"]), ErrRevoked)
}

func TestReportSyncAndDeviceList(t *testing.T) {
	f := open(t)
	j, _ := f.s.NewJoin(RoleAthlete, "ath-0006", "coach-screen", t0)
	dev, _, err := f.s.Redeem(j.Code, "Jo's phone", "x", t0)
	require.NoError(t, err)
	require.NoError(t, f.s.ReportSync(dev.ID, t0.Add(time.Hour), 3))
	assert.Equal(t, "waiting", fieldOf(t, f.s.ReportSync(dev.ID, t0, -1)))
	assert.ErrorIs(t, f.s.ReportSync("nobody", t0, 0), ErrUnknownDevice)

	devs, err := f.s.Devices()
	require.NoError(t, err)
	require.Len(t, devs, 1)
	d := devs[0]
	assert.Equal(t, "Jo's phone", d.Name)
	assert.Equal(t, RoleAthlete, d.Role)
	assert.Equal(t, "ath-0006", d.Athlete)
	assert.Equal(t, t0, d.Created)
	assert.Equal(t, t0.Add(time.Hour), d.LastSync)
	assert.Equal(t, t0.Add(time.Hour), d.LastSeen)
	assert.Equal(t, 3, d.Waiting)

	require.NoError(t, f.s.Rename(dev.ID, "Jo's old phone"))
	assert.Equal(t, "name", fieldOf(t, f.s.Rename(dev.ID, "")))
	d, _ = f.s.Device(dev.ID)
	assert.Equal(t, "Jo's old phone", d.Name)
}

func TestOpenRefusesBadCost(t *testing.T) {
	path := filepath.Join(t.TempDir(), "hub.db")
	db, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: time.Second})
	require.NoError(t, err)
	defer db.Close()
	_, err = Open(db, Options{BcryptCost: 40})
	assert.Error(t, err)
}

// BenchmarkBcrypt measures one passphrase check at the production cost
// (12) and at cost 10 in the same run; each step of cost doubles the work
// (Provos and Mazières 1999), so cost=12 should take about 4× cost=10.
//
//	go test ./server/auth -run '^$' -bench 'Bcrypt|SHA256' -benchtime 5x
func BenchmarkBcrypt(b *testing.B) {
	for _, cost := range []int{10, DefaultBcryptCost} {
		b.Run(fmt.Sprintf("cost=%d", cost), func(b *testing.B) {
			hash, err := bcrypt.GenerateFromPassword(prehash(goodPass), cost)
			if err != nil {
				b.Fatal(err)
			}
			for b.Loop() {
				if err := bcrypt.CompareHashAndPassword(hash, prehash(goodPass)); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}

func BenchmarkSHA256Baseline(b *testing.B) {
	for b.Loop() {
		_ = prehash(goodPass)
	}
}

// BenchmarkAuthenticate is one token check with 200 paired devices.
func BenchmarkAuthenticate(b *testing.B) {
	path := filepath.Join(b.TempDir(), "hub.db")
	db, err := bolt.Open(path, 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		b.Fatal(err)
	}
	defer db.Close()
	s, err := Open(db, Options{BcryptCost: bcrypt.MinCost})
	if err != nil {
		b.Fatal(err)
	}
	var tok string
	for i := range 200 {
		j, err := s.NewJoin(RoleStaff, "", "", t0)
		if err != nil {
			b.Fatal(err)
		}
		if _, tok, err = s.Redeem(j.Code, "tablet", string(rune(i)), t0); err != nil {
			b.Fatal(err)
		}
	}
	for b.Loop() {
		if _, err := s.Authenticate(tok, t0.Add(time.Second)); err != nil {
			b.Fatal(err)
		}
	}
}
