package storage_test

import (
	"io"
	"os"
	"path/filepath"
	"testing"
	"time"

	bolt "go.etcd.io/bbolt"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
)

// BenchmarkOpenCheck measures what the check at Open costs on a large
// store: 50 athletes × 730 days of check-ins (73,000 records), against
// the floor of reading the same file once (bbolt open + read every byte).
// Reported: ms per open with the check, the same for the floor, and the
// file's size.
func BenchmarkOpenCheck(b *testing.B) {
	path := filepath.Join(b.TempDir(), "cornerbook.db")
	db, err := storage.Open(path, storage.Options{})
	if err != nil {
		b.Fatal(err)
	}
	recs := storagetest.Records(9, 50, 730)
	for i := 0; i < len(recs); i += 1000 {
		end := min(i+1000, len(recs))
		pushRecs(b, db, "dev-a", uint64(i+1), recs[i:end])
	}
	db.Close()
	st, _ := os.Stat(path)
	b.ResetTimer()
	var checked, floor float64
	for i := 0; i < b.N; i++ {
		t0 := msNow()
		db, err := storage.Open(path, storage.Options{})
		if err != nil {
			b.Fatal(err)
		}
		db.Close()
		t1 := msNow()
		bdb, err := bolt.Open(path, 0o600, &bolt.Options{ReadOnly: true})
		if err != nil {
			b.Fatal(err)
		}
		f, _ := os.Open(path)
		io.Copy(io.Discard, f)
		f.Close()
		bdb.Close()
		t2 := msNow()
		checked += t1 - t0
		floor += t2 - t1
	}
	b.ReportMetric(checked/float64(b.N), "ms/open-checked")
	b.ReportMetric(floor/float64(b.N), "ms/read-floor")
	b.ReportMetric(float64(st.Size())/(1<<20), "MB-file")
}

func msNow() float64 { return float64(time.Now().UnixNano()) / 1e6 }
