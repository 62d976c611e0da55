// Package dataio exports the store as JSON Lines or CSV and imports JSON
// Lines through the same push path devices use, so an import is validated,
// merged and sequenced exactly like a sync.
package dataio

import (
	"bufio"
	"bytes"
	"encoding/csv"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"reflect"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"cornerbook/server/records"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// ImportDevice is the device id under which imports are numbered. Records
// keep their own device field; only the push counter uses this id.
const ImportDevice = "import"

// MaxLineBytes bounds one JSON line of an import.
const MaxLineBytes = 1 << 20

// batchSize is the number of records per transaction during import.
const batchSize = 500

// Progress is told how far a long operation has come.
type Progress func(done, total int)

// ExportJSONL writes every current record (tombstones included) in change
// order, one JSON object per line. kind "" means every kind.
func ExportJSONL(db *storage.DB, w io.Writer, kind string) error {
	bw := bufio.NewWriter(w)
	write := func(r devsync.Record) error {
		b, err := json.Marshal(r)
		if err != nil {
			return err
		}
		bw.Write(b)
		return bw.WriteByte('\n')
	}
	var tail []devsync.Record // the kinds with rules between records, last (orderForRules)
	err := db.All(true, func(r devsync.Record) error {
		if kind != "" && r.Kind != kind {
			return nil
		}
		if orderedKinds[r.Kind] {
			tail = append(tail, r)
			return nil
		}
		return write(r)
	})
	if err != nil {
		return err
	}
	sortByAt(tail)
	for _, r := range tail {
		if err := write(r); err != nil {
			return err
		}
	}
	return bw.Flush()
}

// LineError is one bad line of an import.
type LineError struct {
	Line  int
	Field string
	Msg   string
}

func (e LineError) Error() string {
	if e.Field == "" {
		return fmt.Sprintf("line %d: %s", e.Line, e.Msg)
	}
	return fmt.Sprintf("line %d: %s: %s", e.Line, e.Field, e.Msg)
}

// ImportError lists every bad line; nothing was imported.
type ImportError struct{ Lines []LineError }

func (e *ImportError) Error() string {
	var b strings.Builder
	fmt.Fprintf(&b, "nothing was imported: %d line(s) need fixing", len(e.Lines))
	for i, l := range e.Lines {
		if i == 20 {
			fmt.Fprintf(&b, "\n  … and %d more", len(e.Lines)-20)
			break
		}
		b.WriteString("\n  ")
		b.WriteString(l.Error())
	}
	return b.String()
}

// Result counts what an import did.
type Result struct {
	Lines     int // records read
	Applied   int // stored as new or newer versions
	Unchanged int // already stored with an equal or later version
}

// ImportJSONL reads JSON Lines records. The whole file is checked first
// (JSON shape, then the record rules via prepare); if any line is bad,
// nothing is imported and every bad line is reported. Otherwise records are
// pushed in batches through the store's push path, so importing the same
// file twice stores nothing new.
func ImportJSONL(db *storage.DB, r io.Reader, prepare func(*devsync.Record) error, progress Progress) (Result, error) {
	var res Result
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 64<<10), MaxLineBytes)
	var recs []devsync.Record
	var bad []LineError
	seen := map[string]int{}
	line := 0
	for sc.Scan() {
		line++
		raw := bytes.TrimSpace(sc.Bytes())
		if len(raw) == 0 {
			continue
		}
		rec, err := decodeLine(raw)
		if err != nil {
			bad = append(bad, lineErr(line, err))
			continue
		}
		if prev, dup := seen[rec.ID]; dup {
			bad = append(bad, LineError{Line: line, Field: "id", Msg: fmt.Sprintf("repeats the id of line %d; a file holds one version per record", prev)})
			continue
		}
		seen[rec.ID] = line
		// As a push: a stamp beyond the hub's allowed drift would win over
		// every later edit; a counter no phone holds exactly is refused.
		if rec.Stamp.L > time.Now().UnixMilli()+devsync.MaxDriftMs {
			bad = append(bad, LineError{Line: line, Field: "stamp.l", Msg: fmt.Sprintf("is %s, more than %d s ahead of this computer's clock; an entry cannot be stamped in the future",
				time.UnixMilli(rec.Stamp.L).UTC().Format(time.RFC3339), devsync.MaxDriftMs/1000)})
			continue
		}
		if err := (&devsync.Mutation{N: 1, Record: rec}).CheckCounters(""); err != nil {
			e := lineErr(line, err)
			e.Field = strings.TrimPrefix(e.Field, ".record.")
			bad = append(bad, e)
			continue
		}
		if err := storage.CheckShape(&rec); err != nil {
			bad = append(bad, lineErr(line, err))
			continue
		}
		if !rec.Deleted && prepare != nil {
			check := rec
			check.Body = append(json.RawMessage(nil), rec.Body...)
			if err := prepare(&check); err != nil {
				bad = append(bad, lineErr(line, err))
				continue
			}
		}
		recs = append(recs, rec)
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			bad = append(bad, LineError{Line: line + 1, Msg: fmt.Sprintf("is longer than %d KiB", MaxLineBytes>>10)})
		} else {
			return res, err
		}
	}
	if len(bad) > 0 {
		return res, &ImportError{Lines: bad}
	}
	res.Lines = len(recs)
	orderForRules(recs)
	dev, err := db.Device(ImportDevice)
	if err != nil && !errors.Is(err, storage.ErrNotFound) {
		return res, err
	}
	n := dev.LastN
	for start := 0; start < len(recs); start += batchSize {
		end := min(start+batchSize, len(recs))
		req := devsync.PushRequest{Device: ImportDevice}
		for _, rec := range recs[start:end] {
			n++
			req.Mutations = append(req.Mutations, devsync.Mutation{N: n, Op: devsync.OpOf(rec), Record: rec})
		}
		pr, err := db.Push(req, nil)
		if err != nil {
			return res, err
		}
		if len(pr.Rejected) > 0 {
			// Checked above; a rejection here means the store disagrees
			// with the pre-check. Report it rather than hide it.
			rj := pr.Rejected[0]
			return res, fmt.Errorf("record %s was refused by the store after %d record(s) were imported: %s: %s", rj.ID, res.Applied, rj.Field, rj.Reason)
		}
		res.Applied += pr.Applied
		res.Unchanged += pr.Superseded + pr.Duplicates
		if progress != nil {
			progress(end, len(recs))
		}
	}
	return res, nil
}

func decodeLine(raw []byte) (devsync.Record, error) {
	var rec devsync.Record
	if !utf8.Valid(raw) {
		return rec, devsync.Invalid("", "is not valid UTF-8 text")
	}
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.DisallowUnknownFields()
	if err := dec.Decode(&rec); err != nil {
		var se *json.SyntaxError
		var te *json.UnmarshalTypeError
		switch {
		case errors.As(err, &se):
			return rec, devsync.Invalid("", "is not valid JSON (near byte %d): %v", se.Offset, se)
		case errors.As(err, &te):
			return rec, devsync.Invalid(te.Field, "has the wrong type (a JSON %s)", te.Value)
		case strings.HasPrefix(err.Error(), "json: unknown field "):
			return rec, devsync.Invalid(strings.Trim(strings.TrimPrefix(err.Error(), "json: unknown field "), `"`), "is not a field of the record format")
		case errors.Is(err, io.ErrUnexpectedEOF):
			return rec, devsync.Invalid("", "ends in the middle of a record (is the line cut short?)")
		}
		return rec, devsync.Invalid("", "%v", err)
	}
	if dec.More() {
		return rec, devsync.Invalid("", "holds more than one JSON value; put one record per line")
	}
	if rec.ID == "" {
		return rec, devsync.Invalid("id", "is required")
	}
	if rec.Kind == "" {
		return rec, devsync.Invalid("kind", "is required")
	}
	return rec, nil
}

func lineErr(line int, err error) LineError {
	var fe *devsync.FieldError
	if errors.As(err, &fe) {
		return LineError{Line: line, Field: fe.Field, Msg: fe.Reason}
	}
	return LineError{Line: line, Msg: err.Error()}
}

// ExportCSV writes one kind as RFC 4180 CSV: the record's common fields,
// then every body field, with its unit in the header ("mass_kg (kg)").
// Lists are joined with "; ".
func ExportCSV(db *storage.DB, w io.Writer, kind string) error {
	bodyType, ok := bodyTypes[kind]
	if !ok {
		return devsync.Invalid("kind", "%q is not a record kind (one of %s)", kind, strings.Join(records.Kinds, ", "))
	}
	cols := bodyColumns(bodyType)
	cw := csv.NewWriter(w)
	header := []string{"id", "athlete", "day", "at", "device", "deleted"}
	for _, c := range cols {
		header = append(header, c.header)
	}
	if err := cw.Write(header); err != nil {
		return err
	}
	err := db.All(true, func(r devsync.Record) error {
		if r.Kind != kind {
			return nil
		}
		row := []string{r.ID, r.Athlete, r.Day, r.At, r.Device, strconv.FormatBool(r.Deleted)}
		var body map[string]any
		if len(r.Body) > 0 {
			dec := json.NewDecoder(bytes.NewReader(r.Body))
			dec.UseNumber()
			dec.Decode(&body)
		}
		for _, c := range cols {
			row = append(row, cell(body[c.name]))
		}
		return cw.Write(row)
	})
	if err != nil {
		return err
	}
	cw.Flush()
	return cw.Error()
}

// bodyTypes are the record kinds' body types, from the registry.
var bodyTypes = func() map[string]reflect.Type {
	m := make(map[string]reflect.Type, len(records.Registry))
	for i := range records.Registry {
		m[records.Registry[i].Name] = records.Registry[i].BodyType()
	}
	return m
}()

type column struct{ name, header string }

// unitOf reads the unit from a field name's suffix (the record format
// names units in field names: mass_kg, heights_cm, work_s …).
func unitOf(name string) string {
	suffixes := []struct{ s, unit string }{
		{"_kg", "kg"}, {"_cm", "cm"}, {"_ms", "ms"}, {"_s", "s"}, {"_h", "h"},
		{"_bpm", "bpm"}, {"_au", "AU"}, {"_rounds", "rounds"},
	}
	for _, x := range suffixes {
		if strings.HasSuffix(name, x.s) {
			return x.unit
		}
	}
	switch name {
	case "minutes":
		return "min"
	case "rpe":
		return "CR-10"
	case "hr_peak", "hr_mean":
		return "bpm"
	case "usg":
		return "specific gravity"
	case "sleep", "fatigue", "soreness", "stress", "mood":
		return "1-5, 5 best"
	case "intensity":
		return "1 easy, 2 moderate, 3 hard"
	}
	return ""
}

func bodyColumns(t reflect.Type) []column {
	var cols []column
	for i := 0; i < t.NumField(); i++ {
		tag := strings.Split(t.Field(i).Tag.Get("json"), ",")[0]
		if tag == "" || tag == "-" {
			continue
		}
		h := tag
		if u := unitOf(tag); u != "" {
			h = fmt.Sprintf("%s (%s)", tag, u)
		}
		cols = append(cols, column{name: tag, header: h})
	}
	return cols
}

func cell(v any) string {
	switch x := v.(type) {
	case nil:
		return ""
	case string:
		return x
	case json.Number:
		return x.String()
	case bool:
		return strconv.FormatBool(x)
	case []any:
		parts := make([]string, len(x))
		for i, e := range x {
			parts[i] = cell(e)
		}
		return strings.Join(parts, "; ")
	case map[string]any:
		keys := make([]string, 0, len(x))
		for k := range x {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		b, _ := json.Marshal(x)
		return string(b)
	}
	b, _ := json.Marshal(v)
	return string(b)
}

// orderedKinds are the kinds with rules between records (a return-to-sport
// step after the one below it, a fight-day weigh-in after the official
// one). The store lists records in the order they last changed, so a
// corrected step 3 would come after step 4, or a corrected incident after
// its steps; export writes these kinds last, by the time each happened,
// and import sends them in that order, so a file imports as the store
// held it and export → import → export stays identical.
var orderedKinds = map[string]bool{records.KindWeighIn: true, records.KindRTSStep: true}

func orderForRules(recs []devsync.Record) {
	var tail []devsync.Record
	n := 0
	for _, r := range recs {
		if orderedKinds[r.Kind] {
			tail = append(tail, r)
			continue
		}
		recs[n] = r
		n++
	}
	sortByAt(tail)
	copy(recs[n:], tail)
}

// sortByAt orders records by the instant of their at (as written when it
// does not parse), keeping the given order among equal times.
func sortByAt(recs []devsync.Record) {
	sort.SliceStable(recs, func(i, j int) bool {
		ti, ei := time.Parse(time.RFC3339, recs[i].At)
		tj, ej := time.Parse(time.RFC3339, recs[j].At)
		if ei != nil || ej != nil {
			return recs[i].At < recs[j].At
		}
		return ti.Before(tj)
	})
}
