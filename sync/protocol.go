package sync

// Operations a mutation may carry.
const (
	OpUpsert  = "upsert"  // create or edit (Deleted false)
	OpDelete  = "delete"  // tombstone (Deleted true)
	OpRestore = "restore" // undo a delete: Deleted false, Gen one above the tombstone's
)

// Limits of one push, enforced by the server.
const (
	MaxMutationsPerPush = 500
	MaxPushBytes        = 1 << 20 // 1 MiB request body
	DefaultPullLimit    = 500
	MaxPullLimit        = 10000
	// A pull page is sized in bytes as well as records: the app asks for
	// as many bytes as its link carried in about a second on the last
	// page, so a slow Wi-Fi gets small pages and a good one few round
	// trips. The sizes count the records' stored JSON, before
	// compression.
	DefaultPullBytes = 256 << 10
	MinPullBytes     = 16 << 10
	MaxPullBytes     = 4 << 20
	// MaxDriftMs is how far in the hub's future a stamp may be before the
	// push is refused with CodeClockSkew (common practice in HLC
	// implementations: 60 s).
	MaxDriftMs = 60_000
)

// Rejection codes. They cross the wire: only ever append.
const (
	CodeValidation = "VALIDATION" // the record breaks a rule; Field says which
	CodeClockSkew  = "CLOCK_SKEW" // a stamp is too far in the hub's future
	CodeForbidden  = "FORBIDDEN"  // this device may not write this record
	CodeBadRequest = "BAD_REQUEST"
)

// Mutation is one numbered change from one device. N is strictly
// increasing per device; gaps are allowed.
type Mutation struct {
	N      uint64 `json:"n"`
	Op     string `json:"op"`
	Record Record `json:"record"`
}

// PushRequest is the body of POST /api/push.
type PushRequest struct {
	Device    string     `json:"device"`
	Epoch     string     `json:"epoch,omitempty"`
	Mutations []Mutation `json:"mutations"`
	// Waiting is how many entries the device still holds unsynced beyond
	// this push (shown on the coach's device list).
	Waiting int `json:"waiting,omitempty"`
}

// Rejection says why one mutation was not applied. The batch's other
// mutations are unaffected, and the device's counter still advances past
// it so the queue is never blocked.
type Rejection struct {
	N      uint64 `json:"n"`
	ID     string `json:"id,omitempty"`
	Code   string `json:"code"`
	Field  string `json:"field,omitempty"`
	Reason string `json:"reason"`
}

// PushResponse answers a push after its transaction committed.
type PushResponse struct {
	AckedThrough uint64      `json:"ackedThrough"`
	Rejected     []Rejection `json:"rejected"`
	// Overtaken are this push's versions that lost to another device's
	// later version of the same record: kept in the hub's history, and
	// the device is told, so its user can apply them again.
	Overtaken  []Overtaken `json:"overtaken,omitempty"`
	Applied    int         `json:"applied"`    // mutations whose version won
	Superseded int         `json:"superseded"` // valid, but an equal or later version was already stored
	Duplicates int         `json:"duplicates"` // n at or below the device's counter
	ServerTime int64       `json:"serverTime"` // Unix ms
	ServerHLC  HLC         `json:"serverHLC"`
	MaxSeq     uint64      `json:"maxSeq"`
	Epoch      string      `json:"epoch"`
}

// Overtaken names a pushed version that lost to another device's version.
type Overtaken struct {
	N      uint64 `json:"n"`
	ID     string `json:"id"`
	Device string `json:"device"`         // the winner's device
	Name   string `json:"name,omitempty"` // its name, when the hub knows it
	Stamp  HLC    `json:"stamp"`          // the winner's stamp
	At     string `json:"at"`             // the winner's at
	// Deleted is true when the winner deletes the record.
	Deleted bool `json:"deleted,omitempty"`
}

// PullResponse is one page of GET /api/pull?since=N.
type PullResponse struct {
	Epoch   string   `json:"epoch"`
	Records []Record `json:"records"`
	// Withdrawn are ids of records this device once received but may no
	// longer read (a note made staff-only): it drops its copy. Sent only
	// to such a device; the record itself is unchanged on the hub.
	Withdrawn  []string `json:"withdrawn,omitempty"`
	Next       uint64   `json:"next"` // the cursor to send next time
	More       bool     `json:"more"`
	MaxSeq     uint64   `json:"maxSeq"`
	ServerTime int64    `json:"serverTime"`
	ServerHLC  HLC      `json:"serverHLC"`
}

// ErrorBody is the JSON of any non-2xx answer.
type ErrorBody struct {
	Code       string `json:"code"`
	Field      string `json:"field,omitempty"`
	Reason     string `json:"reason"`
	ServerTime int64  `json:"serverTime,omitempty"`
}

// OpOf is the operation a record version implies: delete for a
// tombstone, restore for a live record above generation 0, otherwise
// upsert. The app's db.js opOf is the same rule.
func OpOf(r Record) string {
	switch {
	case r.Deleted:
		return OpDelete
	case r.Gen > 0:
		return OpRestore
	}
	return OpUpsert
}

// MaxExact is the largest integer every device holds exactly: JavaScript
// numbers are IEEE 754 doubles, exact up to 2^53 − 1. Counters, stamps and
// generations above it are refused, so what crosses the wire compares the
// same on the hub and on every phone.
const MaxExact = 1<<53 - 1

// CheckCounters refuses a mutation whose counter, generation or stamp a
// device could not hold exactly, naming the field under prefix
// ("mutations[3]").
func (m *Mutation) CheckCounters(prefix string) error {
	switch {
	case m.N > MaxExact:
		return Invalid(prefix+".n", "is %d, above %d (2^53 − 1), the largest counter every device holds exactly", m.N, uint64(MaxExact))
	case m.Record.Gen < 0 || m.Record.Gen > MaxExact:
		return Invalid(prefix+".record.gen", "is %d; a generation must be between 0 and %d (2^53 − 1)", m.Record.Gen, MaxExact)
	case m.Record.Stamp.L < 0 || m.Record.Stamp.L > MaxExact:
		return Invalid(prefix+".record.stamp.l", "is %d; a stamp must be between 0 and %d (2^53 − 1)", m.Record.Stamp.L, MaxExact)
	}
	return nil
}

// Check verifies that the operation agrees with the record it carries.
func (m *Mutation) Check() error {
	switch m.Op {
	case OpUpsert:
		if m.Record.Deleted {
			return Invalid("op", "an upsert cannot carry a deleted record; use op \"delete\"")
		}
	case OpDelete:
		if !m.Record.Deleted {
			return Invalid("op", "a delete must carry \"deleted\": true")
		}
	case OpRestore:
		if m.Record.Deleted || m.Record.Gen < 1 {
			return Invalid("op", "a restore must carry \"deleted\": false and \"gen\" one above the deleted version")
		}
	case "":
		return Invalid("op", "is required (upsert, delete or restore)")
	default:
		return Invalid("op", "%q is not an operation (upsert, delete or restore)", m.Op)
	}
	if m.N == 0 {
		return Invalid("n", "must be a counter of 1 or more")
	}
	return nil
}
