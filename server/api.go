package server

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net/http"
	"sort"
	"strconv"
	"strings"
	"time"
	"unicode/utf8"

	"github.com/gorilla/mux"

	"cornerbook/pwa"
	"cornerbook/storage"
	devsync "cornerbook/sync"
)

// handlePush applies a batch of numbered mutations in one transaction and
// acknowledges only after the commit.
func (s *Server) handlePush(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessWrite)
	if err != nil {
		return err
	}
	var req devsync.PushRequest
	body, err := readBody(w, r, devsync.MaxPushBytes)
	if err != nil {
		return err
	}
	// Pushes as clients write them take the reflection-free decoder;
	// anything else (and every malformed push) is decoded strictly by
	// encoding/json, which names the field at fault.
	if !utf8.Valid(body) || !devsync.DecodePush(body, &req) {
		req = devsync.PushRequest{}
		if err := decodeJSON(body, &req); err != nil {
			return withMutationIndex(err, body)
		}
	}
	if req.Device == "" {
		return userError(devsync.CodeBadRequest, "device", "is required: the id of the device that made these entries")
	}
	if len(req.Device) > 100 {
		return userError(devsync.CodeBadRequest, "device", "is longer than 100 characters")
	}
	if who.DeviceID != "" && req.Device != who.DeviceID {
		return userError(devsync.CodeForbidden, "device", "does not match the device this token was issued to")
	}
	if len(req.Mutations) > devsync.MaxMutationsPerPush {
		return userError(CodeTooLarge, "mutations", fmt.Sprintf("holds %d entries; send at most %d per push", len(req.Mutations), devsync.MaxMutationsPerPush))
	}
	now := s.now().UnixMilli()
	for i, m := range req.Mutations {
		if m.Record.Stamp.L > now+devsync.MaxDriftMs {
			e := userError(devsync.CodeClockSkew, fmt.Sprintf("mutations[%d].record.stamp.l", i),
				fmt.Sprintf("is %s ahead of the hub's clock; check the device's date and time (nothing in this push was applied)", humanMs(m.Record.Stamp.L-now)))
			e.ServerTime = now
			return e
		}
	}
	res, err := s.store.Push(req, who.allowWrite(req.Device))
	if err != nil {
		if e := fromField(err); e != nil {
			return e
		}
		return err
	}
	var top devsync.HLC
	for _, m := range req.Mutations {
		if m.Record.Stamp.Compare(top) > 0 {
			top = m.Record.Stamp
		}
	}
	hlc := s.observe(top)
	epoch, err := s.store.Epoch()
	if err != nil {
		return err
	}
	if res.Rejected == nil {
		res.Rejected = []devsync.Rejection{}
	}
	if a := who.seesOnly(); a != "" && res.Applied == 0 {
		// Nothing of its own stored: an athlete's device learns no count
		// of what others logged.
		res.MaxSeq, _ = s.hub.view(a)
	}
	for i := range res.Overtaken {
		res.Overtaken[i].Name = s.deviceName(res.Overtaken[i].Device)
	}
	writeJSON(w, http.StatusOK, devsync.PushResponse{
		AckedThrough: res.AckedThrough, Rejected: res.Rejected, Overtaken: res.Overtaken,
		Applied: res.Applied, Superseded: res.Superseded, Duplicates: res.Duplicates,
		ServerTime: s.now().UnixMilli(), ServerHLC: hlc, MaxSeq: res.MaxSeq, Epoch: epoch,
	})
	if s.cfg.Auth != nil && who.DeviceID != "" && s.shouldReport(who.DeviceID, req.Waiting) {
		if err := s.cfg.Auth.ReportSync(who.DeviceID, s.now(), req.Waiting); err != nil {
			s.logf("device list: could not note the sync of %s: %v", who.DeviceID, err)
		}
	}
	if res.Applied > 0 {
		s.flags.Changed(res.Changed)
		s.hub.Poke(res.MaxSeq, res.Changed)
	}
	return nil
}

// handlePull returns one page of records after a cursor.
func (s *Server) handlePull(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	q := r.URL.Query()
	since, err := uintParam(q.Get("since"), "since", 0)
	if err != nil {
		return err
	}
	limit, err := uintParam(q.Get("limit"), "limit", devsync.DefaultPullLimit)
	if err != nil {
		return err
	}
	if limit == 0 || limit > devsync.MaxPullLimit {
		return userError(devsync.CodeBadRequest, "limit", fmt.Sprintf("must be between 1 and %d", devsync.MaxPullLimit))
	}
	size, err := uintParam(q.Get("bytes"), "bytes", devsync.DefaultPullBytes)
	if err != nil {
		return err
	}
	if size < devsync.MinPullBytes || size > devsync.MaxPullBytes {
		return userError(devsync.CodeBadRequest, "bytes", fmt.Sprintf("must be between %d and %d", devsync.MinPullBytes, devsync.MaxPullBytes))
	}
	page, err := s.store.PullFor(since, int(limit), int(size), storage.PullFilter{Visible: who.canRead, MaybeSeen: who.maybeSeen})
	if err != nil {
		return err
	}
	recs, next, more, maxSeq, lastSeen := page.Records, page.Next, page.More, page.MaxSeq, page.LastSeen
	if who.seesOnly() != "" {
		// An athlete's cursor and count move only with what it sees, so a
		// pull never tells when others log. A full page (more) moves on
		// through the others' records: it tells only that there were many.
		if !more {
			next = max(since, lastSeen)
		}
		maxSeq = next
	}
	epoch, err := s.store.Epoch()
	if err != nil {
		return err
	}
	if recs == nil {
		recs = []devsync.Record{}
	}
	writeJSON(w, http.StatusOK, devsync.PullResponse{
		Epoch: epoch, Records: recs, Withdrawn: page.Withdrawn, Next: next, More: more, MaxSeq: maxSeq,
		ServerTime: s.now().UnixMilli(), ServerHLC: s.stampNow(),
	})
	return nil
}

// Status is the hub's self-description for screens.
type Status struct {
	Name       string `json:"name"`
	Epoch      string `json:"epoch"`
	MaxSeq     uint64 `json:"maxSeq"`
	ServerTime int64  `json:"serverTime"`
	Build      string `json:"build"`
	TimeZone   string `json:"timeZone"`
	Today      string `json:"today"`
	Peers      int    `json:"peers"`
	Role       string `json:"role"`
	Athlete    string `json:"athlete,omitempty"`
}

func (s *Server) handleStatus(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	epoch, err := s.store.Epoch()
	if err != nil {
		return err
	}
	loc := s.flags.location()
	seq, _ := s.hub.view(who.seesOnly())
	writeJSON(w, http.StatusOK, Status{
		Name: s.cfg.Name, Epoch: epoch, MaxSeq: seq, ServerTime: s.now().UnixMilli(),
		Build: pwa.BuildHash(), TimeZone: loc.String(), Today: s.now().In(loc).Format("2006-01-02"),
		Peers: s.hub.Count(), Role: who.Role, Athlete: who.Athlete,
	})
	return nil
}

func (s *Server) handleHistory(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	id := mux.Vars(r)["id"]
	versions, err := s.store.History(id)
	if errors.Is(err, storage.ErrNotFound) || (err == nil && len(versions) == 0) {
		return userError(CodeNotFound, "id", "no record with this id")
	}
	if err != nil {
		return err
	}
	if !who.canRead(&versions[len(versions)-1]) {
		return userError(CodeNotFound, "id", "no record with this id")
	}
	// Every version the hub received: the winners in order, and those
	// another version overtook, each with its device's name and time.
	lost, err := s.store.Overtaken(id)
	if err != nil {
		return err
	}
	// An athlete's device sees only the versions it may read: a note shared
	// now may have been staff-only before, in other words.
	versions, lost = readable(versions, who.canRead), readable(lost, who.canRead)
	type entry struct {
		devsync.Record
		DeviceName string `json:"device_name,omitempty"`
		Kept       bool   `json:"kept"`
	}
	all := make([]entry, 0, len(versions)+len(lost))
	for _, v := range versions {
		all = append(all, entry{Record: v, DeviceName: s.deviceName(v.Device), Kept: true})
	}
	for _, v := range lost {
		all = append(all, entry{Record: v, DeviceName: s.deviceName(v.Device)})
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].Stamp.Compare(all[j].Stamp) < 0 })
	writeJSON(w, http.StatusOK, map[string]any{"id": id, "versions": versions, "received": all})
	return nil
}

// readable keeps the versions canRead passes.
func readable(vs []devsync.Record, canRead func(*devsync.Record) bool) []devsync.Record {
	out := vs[:0:0]
	for i := range vs {
		if canRead(&vs[i]) {
			out = append(out, vs[i])
		}
	}
	return out
}

// deviceName is a device's name as the coach gave it, or "" when the hub
// keeps no device list or does not know the device.
func (s *Server) deviceName(id string) string {
	if s.cfg.Auth == nil || id == "" {
		return ""
	}
	d, err := s.cfg.Auth.Device(id)
	if err != nil {
		return ""
	}
	return d.Name
}

// decodeStrict reads a JSON body of at most limit bytes that must be valid
// UTF-8 and hold only known fields.
func decodeStrict(w http.ResponseWriter, r *http.Request, limit int64, v any) error {
	body, err := readBody(w, r, limit)
	if err != nil {
		return err
	}
	return decodeJSON(body, v)
}

// readBody reads at most limit bytes of a request body.
func readBody(w http.ResponseWriter, r *http.Request, limit int64) ([]byte, error) {
	body, err := readAll(http.MaxBytesReader(w, r.Body, limit), r.ContentLength, limit)
	if err != nil {
		var mbe *http.MaxBytesError
		if errors.As(err, &mbe) {
			if r.URL.Path == "/api/push" {
				return nil, userError(CodeTooLarge, "body", fmt.Sprintf("is larger than %d KiB; send fewer entries per push", limit>>10))
			}
			return nil, userError(CodeTooLarge, "body", fmt.Sprintf("is larger than %d KiB, more than this request ever needs", limit>>10))
		}
		return nil, userError(devsync.CodeBadRequest, "body", "could not be read: "+err.Error())
	}
	return body, nil
}

// readAll is io.ReadAll sized by the request's Content-Length (when it
// declares one within limit), so a large push is read into one buffer
// rather than a chain of doubling ones.
func readAll(rd io.Reader, length, limit int64) ([]byte, error) {
	if length <= 0 || length > limit {
		return io.ReadAll(rd)
	}
	buf := make([]byte, 0, length+1) // +1: room to see the end of the body
	for {
		n, err := rd.Read(buf[len(buf):cap(buf)])
		buf = buf[:len(buf)+n]
		if err == io.EOF {
			return buf, nil
		}
		if err != nil {
			return buf, err
		}
		if len(buf) == cap(buf) {
			buf = append(buf, 0)[:len(buf)] // longer than declared: let it grow
		}
	}
}

// decodeJSON decodes one JSON value strictly, naming the field at fault.
func decodeJSON(body []byte, v any) error {
	if !utf8.Valid(body) {
		return userError(devsync.CodeBadRequest, "body", "is not valid UTF-8 text")
	}
	dec := json.NewDecoder(bytes.NewReader(body))
	dec.DisallowUnknownFields()
	if err := dec.Decode(v); err != nil {
		return jsonError(err)
	}
	if dec.More() {
		return userError(devsync.CodeBadRequest, "body", "holds more than one JSON value")
	}
	return nil
}

// jsonError explains a decoding error in terms of the field.
func jsonError(err error) error {
	var se *json.SyntaxError
	var te *json.UnmarshalTypeError
	switch {
	case errors.As(err, &se):
		return userError(devsync.CodeBadRequest, "body", fmt.Sprintf("is not valid JSON (near byte %d): %v", se.Offset, se))
	case errors.As(err, &te):
		return userError(devsync.CodeBadRequest, te.Field, fmt.Sprintf("must be %s, not a JSON %s", jsonKind(te.Type.String()), te.Value))
	case errors.Is(err, io.EOF):
		return userError(devsync.CodeBadRequest, "body", "is empty")
	case errors.Is(err, io.ErrUnexpectedEOF):
		return userError(devsync.CodeBadRequest, "body", "ends in the middle of a JSON value (was the upload cut?)")
	case strings.HasPrefix(err.Error(), "json: unknown field "):
		return userError(devsync.CodeBadRequest, strings.Trim(strings.TrimPrefix(err.Error(), "json: unknown field "), `"`), "is not a known field")
	}
	return userError(devsync.CodeBadRequest, "body", err.Error())
}

func jsonKind(goType string) string {
	switch {
	case strings.HasPrefix(goType, "int"), strings.HasPrefix(goType, "uint"):
		return "a whole number"
	case strings.HasPrefix(goType, "float"):
		return "a number"
	case goType == "string":
		return "text"
	case goType == "bool":
		return "true or false"
	case strings.HasPrefix(goType, "[]"):
		return "a list"
	}
	return "an object"
}

func uintParam(v, name string, def uint64) (uint64, error) {
	if v == "" {
		return def, nil
	}
	n, err := strconv.ParseUint(v, 10, 64)
	if err != nil {
		return 0, userError(devsync.CodeBadRequest, name, fmt.Sprintf("must be a whole number of 0 or more; got %q", v))
	}
	return n, nil
}

func humanMs(ms int64) string {
	switch {
	case ms >= 86_400_000:
		return fmt.Sprintf("%.1f days", float64(ms)/86_400_000)
	case ms >= 3_600_000:
		return fmt.Sprintf("%.1f hours", float64(ms)/3_600_000)
	case ms >= 60_000:
		return fmt.Sprintf("%.0f minutes", float64(ms)/60_000)
	}
	return fmt.Sprintf("%.0f seconds", float64(ms)/1000)
}

// reportEvery bounds how often a device's "last sync" is written to the
// device list: each write is a commit of its own, and a backlog arrives
// as a burst of pushes. A change in the waiting count is written at once.
const reportEvery = 30 * time.Second

type syncReport struct {
	at      time.Time
	waiting int
}

// shouldReport says whether this push's sync note is worth a commit.
func (s *Server) shouldReport(device string, waiting int) bool {
	s.reportMu.Lock()
	defer s.reportMu.Unlock()
	now := s.now()
	last, ok := s.reported[device]
	if ok && last.waiting == waiting && now.Sub(last.at) < reportEvery {
		return false
	}
	if s.reported == nil {
		s.reported = map[string]syncReport{}
	}
	s.reported[device] = syncReport{at: now, waiting: waiting}
	return true
}

// withMutationIndex puts the list index into a field error inside the
// mutations ("mutations[3].record.stamp.l" rather than the decoder's
// "mutations.record.stamp.l"), so a device can tell which entry is wrong.
func withMutationIndex(err error, body []byte) error {
	var ue *Error
	if !errors.As(err, &ue) || !strings.HasPrefix(ue.Field, "mutations.") {
		return err
	}
	var list struct {
		Mutations []json.RawMessage `json:"mutations"`
	}
	if json.Unmarshal(body, &list) != nil {
		return err
	}
	for i, raw := range list.Mutations {
		var m devsync.Mutation
		if jerr := decodeJSON(raw, &m); jerr != nil {
			var me *Error
			if errors.As(jerr, &me) {
				e := *ue
				e.Field = fmt.Sprintf("mutations[%d].%s", i, me.Field)
				if me.Field == "body" {
					e.Field = fmt.Sprintf("mutations[%d]", i)
				}
				return &e
			}
		}
	}
	return err
}
