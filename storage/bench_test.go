package storage_test

import (
	"encoding/json"
	"path/filepath"
	"testing"
	"time"

	bolt "go.etcd.io/bbolt"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
	devsync "cornerbook/sync"
)

// The ingest target (ENGINEERING.md, "Targets to measure"): a push through
// the store — shape checks, merge, index, history, change sequence and
// device counter — at least 0.4 × raw bbolt storing the same records with
// one put each in one transaction per batch of the same size.
//
//	go test ./storage -run '^$' -bench 'Ingest|RawBolt' -benchtime 300x -count 3
//
// Two batch shapes: "one-athlete" is an athlete's phone pushing its
// backlog (the common push); "50-athletes" interleaves a whole camp's
// check-ins day by day, as an import does — the worst case for the
// athlete-first index, which then touches one leaf page per athlete.
// BenchmarkIngestVsRaw alternates the two stores batch by batch in one
// loop and reports the ratio directly, which holds up best on a noisy
// machine.

const benchBatch = 100

var benchShapes = []struct {
	name     string
	athletes int
}{{"one-athlete", 1}, {"50-athletes", 50}}

// benchBatches makes n batches of 100 new check-ins (about 300 bytes of
// JSON each, storagetest.Gen) as one device's mutations, the athletes'
// days interleaved.
func benchBatches(n, athletes int) [][]devsync.Mutation {
	recs := storagetest.Records(42, athletes, (n*benchBatch+athletes-1)/athletes)
	out := make([][]devsync.Mutation, n)
	for i := range out {
		out[i] = storagetest.Mutations(uint64(i*benchBatch+1), recs[i*benchBatch:(i+1)*benchBatch]...)
	}
	return out
}

func openBench(b *testing.B) *storage.DB {
	db, err := storage.Open(filepath.Join(b.TempDir(), "ingest.db"), storage.Options{})
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { db.Close() })
	return db
}

type rawStore struct {
	db     *bolt.DB
	bucket []byte
}

func openRaw(b *testing.B) rawStore {
	db, err := bolt.Open(filepath.Join(b.TempDir(), "raw.db"), 0o600, &bolt.Options{Timeout: time.Second})
	if err != nil {
		b.Fatal(err)
	}
	b.Cleanup(func() { db.Close() })
	r := rawStore{db: db, bucket: []byte("records")}
	if err := db.Update(func(tx *bolt.Tx) error { _, err := tx.CreateBucket(r.bucket); return err }); err != nil {
		b.Fatal(err)
	}
	return r
}

// encoded is a batch as raw key/value pairs: id → record JSON.
type encoded struct{ keys, vals [][]byte }

func encode(b *testing.B, batch []devsync.Mutation) encoded {
	var e encoded
	for _, m := range batch {
		v, err := json.Marshal(m.Record)
		if err != nil {
			b.Fatal(err)
		}
		e.keys = append(e.keys, []byte(m.Record.ID))
		e.vals = append(e.vals, v)
	}
	return e
}

func (r rawStore) put(e encoded) error {
	return r.db.Update(func(tx *bolt.Tx) error {
		bk := tx.Bucket(r.bucket)
		for i := range e.keys {
			if err := bk.Put(e.keys[i], e.vals[i]); err != nil {
				return err
			}
		}
		return nil
	})
}

func pushBatch(b *testing.B, db *storage.DB, batch []devsync.Mutation) {
	res, err := db.Push(devsync.PushRequest{Device: "dev-bench", Mutations: batch}, nil)
	if err != nil {
		b.Fatal(err)
	}
	if res.Applied != len(batch) {
		b.Fatalf("push applied %d of %d", res.Applied, len(batch))
	}
}

func BenchmarkIngest(b *testing.B) {
	for _, shape := range benchShapes {
		b.Run(shape.name, func(b *testing.B) {
			db := openBench(b)
			batches := benchBatches(b.N, shape.athletes)
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				pushBatch(b, db, batches[i])
			}
			b.ReportMetric(float64(b.N*benchBatch)/b.Elapsed().Seconds(), "records/s")
		})
	}
}

func BenchmarkRawBolt(b *testing.B) {
	for _, shape := range benchShapes {
		b.Run(shape.name, func(b *testing.B) {
			raw := openRaw(b)
			enc := encodeAll(b, benchBatches(b.N, shape.athletes))
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				if err := raw.put(enc[i]); err != nil {
					b.Fatal(err)
				}
			}
			b.ReportMetric(float64(b.N*benchBatch)/b.Elapsed().Seconds(), "records/s")
		})
	}
}

func BenchmarkIngestVsRaw(b *testing.B) {
	for _, shape := range benchShapes {
		b.Run(shape.name, func(b *testing.B) {
			db, raw := openBench(b), openRaw(b)
			batches := benchBatches(b.N, shape.athletes)
			enc := encodeAll(b, batches)
			var tIngest, tRaw time.Duration
			b.ResetTimer()
			for i := 0; i < b.N; i++ {
				t0 := time.Now()
				pushBatch(b, db, batches[i])
				t1 := time.Now()
				if err := raw.put(enc[i]); err != nil {
					b.Fatal(err)
				}
				tIngest += t1.Sub(t0)
				tRaw += time.Since(t1)
			}
			n := float64(b.N * benchBatch)
			b.ReportMetric(n/tIngest.Seconds(), "ingest-records/s")
			b.ReportMetric(n/tRaw.Seconds(), "raw-records/s")
			b.ReportMetric(tRaw.Seconds()/tIngest.Seconds(), "ingest/raw")
			st, rst := db.Bolt().Stats(), raw.db.Stats()
			b.ReportMetric(float64(st.TxStats.GetWrite())/float64(b.N), "pages/push")
			b.ReportMetric(float64(rst.TxStats.GetWrite())/float64(b.N), "raw-pages/batch")
		})
	}
}

func encodeAll(b *testing.B, batches [][]devsync.Mutation) []encoded {
	enc := make([]encoded, len(batches))
	for i := range batches {
		enc[i] = encode(b, batches[i])
	}
	return enc
}
