package server_test

import (
	"bytes"
	"encoding/json"
	"fmt"
	"net/http"
	"net/http/httptest"
	"path/filepath"
	"testing"
	"time"

	"github.com/google/uuid"
	bolt "go.etcd.io/bbolt"

	"cornerbook/server"
	devsync "cornerbook/sync"
)

// BenchmarkPushHandlerVsRawBolt: a phone's offline backlog (batches of
// 100 check-ins of one athlete, ~300-byte records) through the real push
// handler over HTTP — decoding, validation, merge, index, history,
// sequence, device counter, one transaction — against raw bbolt storing
// the same record bytes with one put each in one transaction per batch,
// interleaved batch by batch in the same run. ENGINEERING.md target:
// ingest/raw ≥ 0.4.
func BenchmarkPushHandlerVsRawBolt(b *testing.B) {
	now := time.Date(2026, 11, 30, 9, 0, 0, 0, time.UTC)
	nowFn := func() time.Time { return now }
	dir := b.TempDir()
	db, err := server.OpenStore(filepath.Join(dir, "hub.db"), nowFn)
	if err != nil {
		b.Fatal(err)
	}
	defer db.Close()
	srv, err := server.New(server.Config{Store: db, Now: nowFn, Location: time.UTC})
	if err != nil {
		b.Fatal(err)
	}
	ts := httptest.NewServer(srv.Handler())
	defer ts.Close()
	raw, err := bolt.Open(filepath.Join(dir, "raw.db"), 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		b.Fatal(err)
	}
	defer raw.Close()
	raw.Update(func(tx *bolt.Tx) error { _, err := tx.CreateBucketIfNotExists([]byte("r")); return err })

	athID, _ := uuid.NewV7()
	ath, _ := json.Marshal(map[string]any{"name": "Bench", "units": "kg"})
	first := devsync.PushRequest{Device: "phone", Mutations: []devsync.Mutation{{N: 1, Op: "upsert", Record: devsync.Record{
		ID: athID.String(), Kind: "athlete", Athlete: athID.String(), Day: "2026-01-01", At: "2026-01-01T08:00:00Z", Device: "phone", Stamp: devsync.HLC{L: 1}, Body: ath}}}}
	post(b, ts.URL, first)

	const batch = 100
	n := uint64(1)
	var day time.Time
	var tHandler, tRaw time.Duration
	size := 0
	b.ResetTimer()
	for i := 0; i < b.N; i++ {
		req := devsync.PushRequest{Device: "phone"}
		keys := make([][]byte, 0, batch)
		vals := make([][]byte, 0, batch)
		for j := 0; j < batch; j++ {
			n++
			day = now.AddDate(0, 0, -int(n%365)).Add(-2 * time.Hour)
			id, _ := uuid.NewV7()
			body, _ := json.Marshal(map[string]any{"mass_kg": 70.4, "sleep_h": 7.5, "sleep": 4, "fatigue": 3, "soreness": 3, "stress": 4, "mood": 4, "rhr_bpm": 52, "usg": 1.014})
			r := devsync.Record{ID: id.String(), Kind: "checkin", Athlete: athID.String(), Day: day.Format("2006-01-02"), At: day.Format(time.RFC3339),
				Device: "phone", Stamp: devsync.HLC{L: now.Add(-time.Hour).UnixMilli() + int64(n)}, Body: body}
			req.Mutations = append(req.Mutations, devsync.Mutation{N: n, Op: "upsert", Record: r})
			v, _ := json.Marshal(r)
			size += len(v)
			keys, vals = append(keys, []byte(r.ID)), append(vals, v)
		}
		payload, _ := json.Marshal(req)
		t0 := time.Now()
		postRaw(b, ts.URL, payload)
		t1 := time.Now()
		if err := raw.Update(func(tx *bolt.Tx) error {
			bk := tx.Bucket([]byte("r"))
			for k := range keys {
				if err := bk.Put(keys[k], vals[k]); err != nil {
					return err
				}
			}
			return nil
		}); err != nil {
			b.Fatal(err)
		}
		tHandler += t1.Sub(t0)
		tRaw += time.Since(t1)
	}
	recs := float64(b.N * batch)
	b.ReportMetric(recs/tHandler.Seconds(), "handler-records/s")
	b.ReportMetric(recs/tRaw.Seconds(), "raw-records/s")
	b.ReportMetric(tRaw.Seconds()/tHandler.Seconds(), "handler/raw")
	b.ReportMetric(float64(size)/recs, "bytes/record")
}

func post(b *testing.B, url string, req devsync.PushRequest) {
	p, _ := json.Marshal(req)
	postRaw(b, url, p)
}

func postRaw(b *testing.B, url string, payload []byte) {
	resp, err := http.Post(url+"/api/push", "application/json", bytes.NewReader(payload))
	if err != nil {
		b.Fatal(err)
	}
	var out devsync.PushResponse
	json.NewDecoder(resp.Body).Decode(&out)
	resp.Body.Close()
	if resp.StatusCode != 200 || len(out.Rejected) > 0 {
		b.Fatal(fmt.Sprintf("push: %d %+v", resp.StatusCode, out.Rejected))
	}
}
