package dataio_test

import (
	"errors"
	"fmt"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"cornerbook/server/dataio"
	"cornerbook/server/records"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// An import refuses, as a push does, a line stamped more than a minute
// ahead of the clock (it would win over every later edit) and a
// generation no phone holds exactly, naming the line and the field; the
// store stays as it was.
func TestImportRefusesStampsAheadAndInexactCounters(t *testing.T) {
	db, err := storage.Open(filepath.Join(t.TempDir(), "hub.db"), storage.Options{})
	if err != nil {
		t.Fatal(err)
	}
	defer db.Close()
	now := time.Now()
	ath := "0190a0b0-0000-7000-8000-0000000000a1"
	line := func(id string, stampMs int64, gen int64) string {
		return fmt.Sprintf(`{"id":%q,"kind":"checkin","athlete":%q,"day":%q,"at":%q,"device":"tablet","stamp":{"l":%d,"c":0},"gen":%d,"body":{"mass_kg":70}}`,
			id, ath, now.Format(time.DateOnly), now.Format(time.RFC3339), stampMs, gen)
	}
	file := strings.Join([]string{
		fmt.Sprintf(`{"id":%q,"kind":"athlete","athlete":%q,"at":%q,"device":"tablet","stamp":{"l":%d,"c":0},"body":{"name":"Ana Example","units":"kg"}}`, ath, ath, now.Format(time.RFC3339), now.UnixMilli()),
		line("0190a0b0-0000-7000-8000-0000000000c1", time.Date(2100, 1, 1, 0, 0, 0, 0, time.UTC).UnixMilli(), 0),
		line("0190a0b0-0000-7000-8000-0000000000c2", now.Add(61*time.Second).UnixMilli(), 0),
		line("0190a0b0-0000-7000-8000-0000000000c3", now.UnixMilli(), devsync.MaxExact+1),
		line("0190a0b0-0000-7000-8000-0000000000c4", now.Add(30*time.Second).UnixMilli(), 0), // within the drift: fine
	}, "\n")
	_, err = dataio.ImportJSONL(db, strings.NewReader(file), records.PrepareAt(now), nil)
	var ie *dataio.ImportError
	if !errors.As(err, &ie) {
		t.Fatalf("import answered %v; want the bad lines", err)
	}
	want := map[int]string{2: "stamp.l", 3: "stamp.l", 4: "gen"}
	if len(ie.Lines) != len(want) {
		t.Fatalf("bad lines %+v; want lines 2, 3 (stamp.l) and 4 (gen)", ie.Lines)
	}
	for _, l := range ie.Lines {
		if want[l.Line] != l.Field {
			t.Errorf("line %d: field %q (%s); want %q", l.Line, l.Field, l.Msg, want[l.Line])
		}
	}
	if seq, _ := db.MaxSeq(); seq != 0 {
		t.Errorf("the store changed: sequence %d", seq)
	}
}
