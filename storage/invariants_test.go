package storage_test

import (
	"bytes"
	"encoding/binary"
	"errors"
	"os"
	"path/filepath"
	"strings"
	"testing"

	bolt "go.etcd.io/bbolt"

	"cornerbook/storage"
)

// TestCheckFindsEachBrokenInvariant: every invariant of the layout, broken
// alone in an otherwise good file, makes Open refuse the file (and Check
// fail), naming what is wrong; the untouched file opens.
func TestCheckFindsEachBrokenInvariant(t *testing.T) {
	_, raw := goodStore(t)
	first := func(tx *bolt.Tx, bucket string) ([]byte, []byte) {
		k, v := tx.Bucket([]byte(bucket)).Cursor().First()
		return bytes.Clone(k), bytes.Clone(v)
	}
	cases := map[string]struct {
		break_ func(tx *bolt.Tx) error
		want   string
	}{
		"an index entry missing": {func(tx *bolt.Tx) error {
			k, _ := first(tx, "index")
			return tx.Bucket([]byte("index")).Delete(k)
		}, "index"},
		"a stray index entry": {func(tx *bolt.Tx) error {
			k, _ := first(tx, "index")
			return tx.Bucket([]byte("index")).Put(append(k[:len(k)-1:len(k)-1], 'x'), nil)
		}, "index"},
		"an index entry under another day": {func(tx *bolt.Tx) error {
			k, _ := first(tx, "index")
			ix := tx.Bucket([]byte("index"))
			if err := ix.Delete(k); err != nil {
				return err
			}
			parts := bytes.SplitN(k, []byte("|"), 4)
			parts[2] = []byte("1999-01-01")
			return ix.Put(bytes.Join(parts, []byte("|")), nil)
		}, "index"},
		"a change entry missing": {func(tx *bolt.Tx) error {
			k, _ := first(tx, "changes")
			return tx.Bucket([]byte("changes")).Delete(k)
		}, "change"},
		"a change entry naming the wrong record": {func(tx *bolt.Tx) error {
			ch := tx.Bucket([]byte("changes"))
			k1, _ := first(tx, "changes")
			c := ch.Cursor()
			c.First()
			_, v2 := c.Next()
			return ch.Put(k1, bytes.Clone(v2))
		}, "change"},
		"a stray change entry": {func(tx *bolt.Tx) error {
			ch := tx.Bucket([]byte("changes"))
			_, v := first(tx, "changes")
			k := make([]byte, 8)
			binary.BigEndian.PutUint64(k, ch.Sequence()+1)
			return ch.Put(k, v)
		}, "change"},
		"a record unreadable": {func(tx *bolt.Tx) error {
			k, v := first(tx, "records")
			v = append(v[:8:8], []byte(`{"id": broken`)...)
			return tx.Bucket([]byte("records")).Put(k, v)
		}, "unreadable"},
	}
	for name, c := range cases {
		t.Run(name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "cornerbook.db")
			if err := os.WriteFile(path, raw, 0o600); err != nil {
				t.Fatal(err)
			}
			b, err := bolt.Open(path, 0o600, nil)
			if err != nil {
				t.Fatal(err)
			}
			if err := b.Update(c.break_); err != nil {
				t.Fatal(err)
			}
			b.Close()
			db, err := storage.Open(path, storage.Options{})
			if err == nil {
				db.Close()
				t.Fatal("opened")
			}
			if !errors.Is(err, storage.ErrDamaged) || !strings.Contains(err.Error(), c.want) {
				t.Fatalf("err %v, want ErrDamaged naming %q", err, c.want)
			}
		})
	}
	path := filepath.Join(t.TempDir(), "cornerbook.db")
	if err := os.WriteFile(path, raw, 0o600); err != nil {
		t.Fatal(err)
	}
	db, err := storage.Open(path, storage.Options{})
	if err != nil {
		t.Fatalf("the good file: %v", err)
	}
	db.Close()
}
