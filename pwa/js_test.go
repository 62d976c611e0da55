package pwa_test

import (
	"encoding/json"
	"fmt"
	"math/rand/v2"
	"testing"

	"github.com/chromedp/cdproto/emulation"
	"github.com/chromedp/chromedp"
	"github.com/google/uuid"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"

	"cornerbook/pwa/pwatest"
	devsync "cornerbook/sync"
)

// The browser's modules are checked in the browser against the Go
// implementations the hub uses, and against published values.
func TestJSModulesMatchGoAndReferences(t *testing.T) {
	s := newAppServer(t)
	_, ctx, _ := start(t, "")
	require.NoError(t, pwatest.Open(ctx, s.URL("/")))

	t.Run("uuidv7 layout (RFC 9562 §5.7)", func(t *testing.T) {
		const ms = 1764576000123 // 2025-12-01T08:00:00.123Z
		var ids []string
		require.NoError(t, pwatest.Eval(ctx, fmt.Sprintf(`import('/js/uuid.js').then((m) => Array.from({ length: 500 }, () => m.uuidv7(%d)))`, ms), &ids))
		seen := map[string]bool{}
		for _, id := range ids {
			u, err := uuid.Parse(id)
			require.NoError(t, err, id)
			assert.Equal(t, uuid.Version(7), u.Version(), id)
			assert.Equal(t, uuid.RFC4122, u.Variant(), id) // variant bits 10
			sec, nsec := u.Time().UnixTime()
			assert.Equal(t, int64(ms), sec*1000+nsec/1e6, id)
			assert.False(t, seen[id], "duplicate id")
			seen[id] = true
		}
		var live string
		require.NoError(t, pwatest.Eval(ctx, `import('/js/uuid.js').then((m) => m.uuidv7())`, &live))
		u, err := uuid.Parse(live)
		require.NoError(t, err)
		assert.Equal(t, uuid.Version(7), u.Version())
	})

	t.Run("HLC matches sync.Clock", func(t *testing.T) {
		type op struct {
			Recv bool        `json:"recv"`
			PT   int64       `json:"pt"`
			M    devsync.HLC `json:"m"`
		}
		r := rand.New(rand.NewPCG(1, 2))
		var ops []op
		pt := int64(1_764_576_000_000)
		for i := 0; i < 400; i++ {
			pt += int64(r.IntN(5)) - 1 // the physical clock stalls and steps back too
			o := op{Recv: r.IntN(3) == 0, PT: pt}
			if o.Recv {
				o.M = devsync.HLC{L: pt + int64(r.IntN(7)) - 3, C: uint32(r.IntN(4))}
			}
			ops = append(ops, o)
		}
		var k devsync.Clock
		var want []devsync.HLC
		for _, o := range ops {
			if o.Recv {
				want = append(want, k.Update(o.M, o.PT))
			} else {
				want = append(want, k.Now(o.PT))
			}
		}
		b, _ := json.Marshal(ops)
		var got []devsync.HLC
		require.NoError(t, pwatest.Eval(ctx, `import('/js/hlc.js').then((m) => { const k = new m.Clock(); return `+string(b)+`.map((o) => o.recv ? k.update(o.m, o.pt) : k.now(o.pt)) })`, &got))
		assert.Equal(t, want, got)

		// Restoring an older state never moves the clock back.
		var back devsync.HLC
		require.NoError(t, pwatest.Eval(ctx, `import('/js/hlc.js').then((m) => { const k = new m.Clock({ l: 500, c: 3 }); k.restore({ l: 400, c: 9 }); return k.now(100) })`, &back))
		assert.Equal(t, devsync.HLC{L: 500, C: 4}, back)
	})

	t.Run("compare matches sync.Compare", func(t *testing.T) {
		r := rand.New(rand.NewPCG(3, 4))
		bodies := []string{`{"a":1}`, `{"a":2}`, `{"b":1}`}
		mk := func() devsync.Record {
			return devsync.Record{ID: "x", Kind: "note", Gen: r.IntN(2), Deleted: r.IntN(2) == 0, Device: []string{"a", "b"}[r.IntN(2)],
				Stamp: devsync.HLC{L: int64(r.IntN(3)), C: uint32(r.IntN(2))}, Body: json.RawMessage(bodies[r.IntN(3)])}
		}
		var pairs [][2]devsync.Record
		var want []int
		for i := 0; i < 500; i++ {
			a, b := mk(), mk()
			pairs = append(pairs, [2]devsync.Record{a, b})
			want = append(want, devsync.Compare(&a, &b))
		}
		b, _ := json.Marshal(pairs)
		var got []int
		require.NoError(t, pwatest.Eval(ctx, `import('/js/record.js').then((m) => `+string(b)+`.map(([a, b]) => m.compare(a, b)))`, &got))
		assert.Equal(t, want, got)
	})

	t.Run("units and jump arithmetic", func(t *testing.T) {
		var v struct {
			Kg100, Lb, H500, H600 float64
			Mean, Best            float64
			N                     int
		}
		require.NoError(t, pwatest.Eval(ctx, `import('/js/record.js').then((m) => {
			const st = m.attemptStats([30.1, 31.4, 29.9, NaN, 0]);
			return { Kg100: m.toKg(100, 'lb'), Lb: m.fromKg(45.359237, 'lb'), H500: m.heightFromFlightMs(500), H600: m.heightFromFlightMs(600), Mean: st.mean, Best: st.best, N: st.n } })`, &v))
		// 1 lb = 0.45359237 kg exactly (international yard and pound, 1959).
		assert.Equal(t, 45.359237, v.Kg100)
		assert.InDelta(t, 100, v.Lb, 1e-12)
		// h = g·t²/8 with g = 9.81: t = 0.500 s → 30.6563 cm, t = 0.600 s → 44.1450 cm (flight-time method; REFERENCES.md table, computed).
		assert.InDelta(t, 30.6563, v.H500, 0.0005)
		assert.InDelta(t, 44.1450, v.H600, 0.0005)
		assert.InDelta(t, 30.4667, v.Mean, 0.0001)
		assert.Equal(t, 31.4, v.Best)
		assert.Equal(t, 3, v.N)
	})

	t.Run("day is the local calendar day, not UTC", func(t *testing.T) {
		_, err := chromedp.Call(ctx, emulation.SetTimezoneOverride, emulation.SetTimezoneOverrideParams{TimezoneID: "Pacific/Auckland"})
		require.NoError(t, err)
		defer chromedp.Call(ctx, emulation.SetTimezoneOverride, emulation.SetTimezoneOverrideParams{TimezoneID: ""})
		var v struct{ Day, ISO, At string }
		// 2026-01-01 12:30 UTC is 2026-01-02 01:30 in Auckland (UTC+13 in summer).
		require.NoError(t, pwatest.Eval(ctx, `import('/js/record.js').then((m) => { const d = new Date(Date.UTC(2026, 0, 1, 12, 30)); return { Day: m.localDay(d), ISO: d.toISOString().slice(0, 10), At: m.rfc3339(d) } })`, &v))
		assert.Equal(t, "2026-01-02", v.Day)
		assert.Equal(t, "2026-01-01", v.ISO)
		assert.Equal(t, "2026-01-02T01:30:00.000+13:00", v.At)
	})
}
