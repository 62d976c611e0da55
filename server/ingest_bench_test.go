package server_test

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"net/http/httptest"
	"os"
	"path/filepath"
	"sync"
	"testing"
	"time"

	"github.com/google/uuid"
	bolt "go.etcd.io/bbolt"

	"cornerbook/server"
	devsync "cornerbook/sync"
)

// BenchmarkPushHandlerVsRawBolt: pushes of 100 check-ins (~330-byte
// records) through the real push handler over HTTP — decoding,
// validation, rights, merge, index, history, sequence, device counter,
// one transaction — against raw bbolt storing the same record bytes with
// one put each in one transaction per batch, interleaved batch by batch
// in the same run. ENGINEERING.md target: handler/raw ≥ 0.4.
//
//	go test ./server -run '^$' -bench PushHandlerVsRawBolt -benchtime 300x -count 3
//
// Two shapes of push, both into a camp of 50 athletes:
//
//   - phone-backlog: an athlete's phone pushing its backlog, 100
//     consecutive days of that athlete (one device per athlete, the
//     athletes' phones taking turns). This is the push the target is
//     about: a phone that was offline for days reaching the Wi-Fi.
//   - tablet-camp: a coach's tablet pushing the same days for 10
//     athletes at once (10 athletes × 10 days per push), which touches
//     one index page per athlete.
//   - phones-at-once: four phones pushing their backlogs at the same
//     time, as when the camp's phones reach the Wi-Fi together; the raw
//     side then stores the same four batches from four goroutines.
//     bbolt takes one writer at a time, so the hub can decode and
//     validate one push while another commits.
//
// Each shape runs twice: over a loopback socket (the figure the target
// is judged on: what a push costs end to end), and "in-process", the
// same requests handed to the same handler chain (routing, middleware,
// decoding, validation, store) without the socket, which shows the
// hub's own share. BenchmarkLoopbackPost measures the socket alone.
func BenchmarkPushHandlerVsRawBolt(b *testing.B) {
	for _, shape := range []struct {
		name              string
		perPush, together int
	}{{"phone-backlog", 1, 1}, {"tablet-camp", 10, 1}, {"phones-at-once", 1, 4}} {
		b.Run(shape.name, func(b *testing.B) { benchPush(b, shape.perPush, shape.together, true) })
		b.Run(shape.name+"/in-process", func(b *testing.B) { benchPush(b, shape.perPush, shape.together, false) })
	}
}

// benchPush runs b.N pushes of 100 check-ins, each for perPush athletes
// (100/perPush consecutive days each), together of them at a time, over
// a loopback socket or (overSocket false) straight into the handler.
func benchPush(b *testing.B, perPush, together int, overSocket bool) {
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
	defer srv.Close()
	handler := srv.Handler()
	ts := httptest.NewServer(handler)
	defer ts.Close()
	send := func(payload []byte, want int) error {
		if overSocket {
			return postRaw(ts.URL, payload, want)
		}
		return serveRaw(handler, payload, want)
	}
	raw, err := bolt.Open(filepath.Join(dir, "raw.db"), 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		b.Fatal(err)
	}
	defer raw.Close()
	if err := raw.Update(func(tx *bolt.Tx) error { _, err := tx.CreateBucketIfNotExists([]byte("r")); return err }); err != nil {
		b.Fatal(err)
	}

	const batch, camp = 100, 50
	athletes := make([]string, camp)
	setup := devsync.PushRequest{Device: "laptop"}
	for i := range athletes {
		id, _ := uuid.NewV7()
		athletes[i] = id.String()
		body, _ := json.Marshal(map[string]any{"name": fmt.Sprintf("Bench %d", i), "units": "kg"})
		setup.Mutations = append(setup.Mutations, devsync.Mutation{N: uint64(i + 1), Op: "upsert", Record: devsync.Record{
			ID: athletes[i], Kind: "athlete", Athlete: athletes[i], Day: "2026-01-01", At: "2026-01-01T08:00:00Z",
			Device: "laptop", Stamp: devsync.HLC{L: 1}, Body: body}})
	}
	post(b, ts.URL, setup)

	// Each athlete's check-ins run day after day from 2001 onwards; each
	// device numbers its own mutations. Every push (and the raw batch of
	// the same records) is built before the clock starts: building them
	// is the phones' work, and its garbage would otherwise be collected
	// on the hub's time.
	type batchOf struct {
		payload    []byte
		keys, vals [][]byte
	}
	batches := make([]batchOf, b.N)
	start := time.Date(2001, 1, 1, 7, 0, 0, 0, time.UTC)
	nextDay := make([]int, camp)
	counters := map[string]uint64{}
	stamp := now.Add(-time.Hour).UnixMilli()
	size := 0
	for i := range batches {
		device := "tablet"
		first := (i * perPush) % camp
		if perPush == 1 {
			device = fmt.Sprintf("phone-%02d", first)
		}
		req := devsync.PushRequest{Device: device}
		keys := make([][]byte, 0, batch)
		vals := make([][]byte, 0, batch)
		for d := 0; d < batch/perPush; d++ {
			for a := first; a < first+perPush; a++ {
				day := start.AddDate(0, 0, nextDay[a])
				nextDay[a]++
				if !day.Before(now) {
					b.Fatalf("b.N = %d runs past today; use a smaller -benchtime", b.N)
				}
				counters[device]++
				stamp++
				id, _ := uuid.NewV7()
				body, _ := json.Marshal(map[string]any{"mass_kg": 70.4, "sleep_h": 7.5, "sleep": 4, "fatigue": 3, "soreness": 3, "stress": 4, "mood": 4, "rhr_bpm": 52, "usg": 1.014})
				r := devsync.Record{ID: id.String(), Kind: "checkin", Athlete: athletes[a], Day: day.Format(time.DateOnly), At: day.Format(time.RFC3339),
					Device: device, Stamp: devsync.HLC{L: stamp}, Body: body}
				req.Mutations = append(req.Mutations, devsync.Mutation{N: counters[device], Op: "upsert", Record: r})
				v, _ := json.Marshal(r)
				size += len(v)
				keys, vals = append(keys, []byte(r.ID)), append(vals, v)
			}
		}
		payload, _ := json.Marshal(req)
		batches[i] = batchOf{payload, keys, vals}
	}
	storeRaw := func(bt batchOf) error {
		return raw.Update(func(tx *bolt.Tx) error {
			bk := tx.Bucket([]byte("r"))
			for k := range bt.keys {
				if err := bk.Put(bt.keys[k], bt.vals[k]); err != nil {
					return err
				}
			}
			return nil
		})
	}
	// Each round pushes together batches at once through the handler,
	// then stores the same batches raw, as many at once.
	var tHandler, tRaw time.Duration
	b.ResetTimer()
	for i := 0; i < len(batches); i += together {
		round := batches[i:min(i+together, len(batches))]
		t0 := time.Now()
		if err := inParallel(round, func(bt batchOf) error { return send(bt.payload, batch) }); err != nil {
			b.Fatal(err)
		}
		t1 := time.Now()
		if err := inParallel(round, storeRaw); err != nil {
			b.Fatal(err)
		}
		tHandler += t1.Sub(t0)
		tRaw += time.Since(t1)
		clear(round) // let them go, as a phone's push would
	}
	recs := float64(b.N * batch)
	b.ReportMetric(recs/tHandler.Seconds(), "handler-records/s")
	b.ReportMetric(recs/tRaw.Seconds(), "raw-records/s")
	b.ReportMetric(tRaw.Seconds()/tHandler.Seconds(), "handler/raw")
	b.ReportMetric(float64(size)/recs, "bytes/record")
	hs, rs := db.Bolt().Stats().TxStats, raw.Stats().TxStats
	b.ReportMetric(float64(hs.GetWrite())/float64(b.N), "pages/push")
	b.ReportMetric(float64(rs.GetWrite())/float64(b.N), "raw-pages/batch")
}

func post(b *testing.B, url string, req devsync.PushRequest) {
	p, _ := json.Marshal(req)
	if err := postRaw(url, p, len(req.Mutations)); err != nil {
		b.Fatal(err)
	}
}

// inParallel runs fn on every element at once (inline for one) and
// returns the first error.
func inParallel[T any](xs []T, fn func(T) error) error {
	if len(xs) == 1 {
		return fn(xs[0])
	}
	errs := make([]error, len(xs))
	var wg sync.WaitGroup
	for j := range xs {
		wg.Go(func() { errs[j] = fn(xs[j]) })
	}
	wg.Wait()
	return errors.Join(errs...)
}

// benchClient sends a push in one write where the kernel allows: the
// default 4 KiB buffers cost the client a dozen system calls per 33 KB
// push, which this benchmark would otherwise charge to the handler.
var benchClient = &http.Client{Transport: &http.Transport{WriteBufferSize: 64 << 10, ReadBufferSize: 16 << 10}}

// serveRaw hands a push to the handler chain in-process, as the socket
// would deliver it, and checks that every one of want mutations was
// applied.
func serveRaw(h http.Handler, payload []byte, want int) error {
	req := httptest.NewRequest(http.MethodPost, "/api/push", bytes.NewReader(payload))
	req.RemoteAddr = "127.0.0.1:50000"
	req.Header.Set("Content-Type", "application/json")
	req.Header.Set("Accept-Encoding", "gzip")
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	var out devsync.PushResponse
	err := json.Unmarshal(rec.Body.Bytes(), &out)
	if err != nil || rec.Code != 200 || len(out.Rejected) > 0 || out.Applied != want {
		return fmt.Errorf("push: %d %v, %d applied of %d, rejected %+v", rec.Code, err, out.Applied, want, out.Rejected)
	}
	return nil
}

// postRaw pushes and checks that every one of want mutations was applied.
func postRaw(url string, payload []byte, want int) error {
	resp, err := benchClient.Post(url+"/api/push", "application/json", bytes.NewReader(payload))
	if err != nil {
		return err
	}
	var out devsync.PushResponse
	err = json.NewDecoder(resp.Body).Decode(&out)
	resp.Body.Close()
	if err != nil || resp.StatusCode != 200 || len(out.Rejected) > 0 || out.Applied != want {
		return fmt.Errorf("push: %d %v, %d applied of %d, rejected %+v", resp.StatusCode, err, out.Applied, want, out.Rejected)
	}
	return nil
}

// BenchmarkLoopbackPost: what the loopback socket alone costs a push of
// the ingest benchmark's size — a 33 KB POST answered by a handler that
// only reads it — back to back, and with an fsync of a 33 KB write
// between requests, as the ingest benchmark's raw side puts one between
// pushes. The difference is the socket's wake-up after the disk, which
// the end-to-end ingest figure carries and the in-process one does not.
//
//	go test ./server -run '^$' -bench LoopbackPost -benchtime 2000x -count 3
func BenchmarkLoopbackPost(b *testing.B) {
	for _, gap := range []bool{false, true} {
		name := "back-to-back"
		if gap {
			name = "after-fsync"
		}
		b.Run(name, func(b *testing.B) {
			ts := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
				if _, err := io.Copy(io.Discard, r.Body); err != nil {
					http.Error(w, err.Error(), http.StatusBadRequest)
					return
				}
				w.Header().Set("Content-Type", "application/json")
				fmt.Fprint(w, `{"acked_through":100,"rejected":[],"applied":100}`)
			}))
			defer ts.Close()
			f, err := os.Create(filepath.Join(b.TempDir(), "gap"))
			if err != nil {
				b.Fatal(err)
			}
			defer f.Close()
			payload := bytes.Repeat([]byte("x"), 33_000)
			var posting time.Duration
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				t0 := time.Now()
				resp, err := benchClient.Post(ts.URL, "application/json", bytes.NewReader(payload))
				if err != nil {
					b.Fatal(err)
				}
				_, err = io.Copy(io.Discard, resp.Body)
				resp.Body.Close()
				if err != nil || resp.StatusCode != 200 {
					b.Fatal(resp.StatusCode, err)
				}
				posting += time.Since(t0)
				if gap {
					if _, err := f.WriteAt(payload, 0); err != nil {
						b.Fatal(err)
					}
					if err := f.Sync(); err != nil {
						b.Fatal(err)
					}
				}
			}
			b.ReportMetric(float64(posting.Microseconds())/float64(b.N), "µs/post")
		})
	}
}
