package server

import (
	"encoding/json"
	"net/http"
	"slices"
	"sync"
	"sync/atomic"
	"time"

	"github.com/gorilla/websocket"

	"cornerbook/server/auth"
	"cornerbook/server/records"
	devsync "cornerbook/sync"
)

// Websocket timing, after the gorilla chat example's reasoning.
const (
	wsWriteWait  = 10 * time.Second    // time allowed to write one message
	wsPongWait   = 60 * time.Second    // time allowed to read the next pong
	wsPingPeriod = wsPongWait * 9 / 10 // must be less than wsPongWait
	wsReadLimit  = 1024                // clients send nothing that matters; 1 KiB is plenty
	wsHeartbeat  = 25 * time.Second    // an application-level poke so browsers notice a dead link
)

// pokeHub owns the set of websocket peers. It carries no data: only "the
// change sequence is now N". A peer that falls behind loses nothing — it
// sees the latest sequence on its next wake-up and pulls.
//
// An athlete's device is told only of changes it can see: its own
// athlete's records and the camp-wide settings. Its counters are its own
// (the sequence of the last change it can see, a count of its athlete's
// flag changes), so its pokes never reveal when anyone else logs.
type pokeHub struct {
	mu     sync.Mutex // guards peers, closed and the athletes' counters
	peers  map[*peer]struct{}
	closed bool
	seq    atomic.Uint64 // latest sequence announced
	flags  atomic.Uint64 // bumps when the day's flags change

	athSeq   map[string]uint64 // athlete → sequence of its latest change
	campSeq  uint64            // sequence of the latest camp-wide settings change
	athFlags map[string]uint64 // athlete → changes of its flags
	flagsAll uint64            // changes of every athlete's flags at once
}

type peer struct {
	conn    *websocket.Conn
	athlete string        // "" for coach and staff devices, who see everything
	wake    chan struct{} // 1 slot: coalesces pokes
	done    chan struct{}
	once    sync.Once
}

func newPokeHub() *pokeHub {
	return &pokeHub{peers: map[*peer]struct{}{}, athSeq: map[string]uint64{}, athFlags: map[string]uint64{}}
}

// view is what a peer is told: the camp's counters, or an athlete's own.
func (h *pokeHub) view(athlete string) (seq, flags uint64) {
	if athlete == "" {
		return h.seq.Load(), h.flags.Load()
	}
	h.mu.Lock()
	defer h.mu.Unlock()
	return max(h.athSeq[athlete], h.campSeq), h.athFlags[athlete] + h.flagsAll
}

// Poke announces a new maximum sequence, reached by a push that changed
// recs: coach and staff devices are woken, and the devices of the
// athletes those records belong to (all athletes for camp settings).
func (h *pokeHub) Poke(seq uint64, recs []devsync.Record) {
	for {
		old := h.seq.Load()
		if seq <= old || h.seq.CompareAndSwap(old, seq) {
			break
		}
	}
	h.mu.Lock()
	touched := map[string]bool{}
	all := false
	for _, r := range recs {
		switch {
		case r.Athlete != "":
			h.athSeq[r.Athlete] = seq
			touched[r.Athlete] = true
		case r.Kind == records.KindSettings:
			h.campSeq = seq
			all = true
		}
	}
	h.mu.Unlock()
	h.wake(func(a string) bool { return all || touched[a] })
}

// FlagsChanged tells dashboards the flags were recomputed: of the named
// athletes, or of every athlete when none is named.
func (h *pokeHub) FlagsChanged(athletes ...string) {
	h.flags.Add(1)
	h.mu.Lock()
	if len(athletes) == 0 {
		h.flagsAll++
	}
	for _, a := range athletes {
		h.athFlags[a]++
	}
	h.mu.Unlock()
	h.wake(func(a string) bool { return len(athletes) == 0 || slices.Contains(athletes, a) })
}

// wake wakes coach and staff peers, and athletes' peers for which
// concerns says so.
func (h *pokeHub) wake(concerns func(athlete string) bool) {
	h.mu.Lock()
	defer h.mu.Unlock()
	for p := range h.peers {
		if p.athlete != "" && !concerns(p.athlete) {
			continue
		}
		select {
		case p.wake <- struct{}{}:
		default: // already woken; the writer will send the latest values
		}
	}
}

func (h *pokeHub) add(p *peer) bool {
	h.mu.Lock()
	defer h.mu.Unlock()
	if h.closed {
		return false
	}
	h.peers[p] = struct{}{}
	return true
}

func (h *pokeHub) remove(p *peer) {
	h.mu.Lock()
	delete(h.peers, p)
	h.mu.Unlock()
	p.close()
}

// Count is the number of connected peers.
func (h *pokeHub) Count() int {
	h.mu.Lock()
	defer h.mu.Unlock()
	return len(h.peers)
}

// CloseAll drops every peer; with final, no new peer is accepted.
func (h *pokeHub) CloseAll(final bool) {
	h.mu.Lock()
	ps := make([]*peer, 0, len(h.peers))
	for p := range h.peers {
		ps = append(ps, p)
	}
	h.peers = map[*peer]struct{}{}
	if final {
		h.closed = true
	}
	h.mu.Unlock()
	for _, p := range ps {
		p.close()
	}
}

func (p *peer) close() {
	p.once.Do(func() {
		close(p.done)
		p.conn.Close()
	})
}

type wsMessage struct {
	T          string `json:"t"`
	Epoch      string `json:"epoch,omitempty"`
	Seq        uint64 `json:"seq"`
	Flags      uint64 `json:"flags"`
	ServerTime int64  `json:"serverTime,omitempty"`
}

// upgrader keeps gorilla's default origin check: a browser Origin must
// match the Host (no cross-site websocket hijacking).
var upgrader = websocket.Upgrader{ReadBufferSize: 1024, WriteBufferSize: 1024, Subprotocols: []string{auth.WSProtocol}}

func (s *Server) handleWS(w http.ResponseWriter, r *http.Request) error {
	who, err := s.authorize(r, accessRead)
	if err != nil {
		return err
	}
	epoch, err := s.store.Epoch()
	if err != nil {
		return err
	}
	conn, err := upgrader.Upgrade(w, r, nil)
	if err != nil {
		return nil // the upgrader already answered
	}
	p := &peer{conn: conn, athlete: who.seesOnly(), wake: make(chan struct{}, 1), done: make(chan struct{})}
	if !s.hub.add(p) {
		conn.Close()
		return nil
	}
	seq, fl := s.hub.view(p.athlete)
	hello := wsMessage{T: "hello", Epoch: epoch, Seq: seq, Flags: fl, ServerTime: s.now().UnixMilli()}
	go s.wsWriter(p, hello)
	go s.wsReader(p)
	return nil
}

// wsReader is the connection's only reader: it keeps the read deadline
// moving on pongs and ends the peer on any error.
func (s *Server) wsReader(p *peer) {
	defer s.hub.remove(p)
	p.conn.SetReadLimit(wsReadLimit)
	p.conn.SetReadDeadline(time.Now().Add(wsPongWait))
	p.conn.SetPongHandler(func(string) error {
		return p.conn.SetReadDeadline(time.Now().Add(wsPongWait))
	})
	for {
		if _, _, err := p.conn.ReadMessage(); err != nil {
			return
		}
	}
}

// wsWriter is the connection's only writer.
func (s *Server) wsWriter(p *peer, hello wsMessage) {
	defer s.hub.remove(p)
	ping := time.NewTicker(wsPingPeriod)
	defer ping.Stop()
	beat := time.NewTicker(wsHeartbeat)
	defer beat.Stop()
	write := func(m wsMessage) bool {
		b, _ := json.Marshal(m)
		p.conn.SetWriteDeadline(time.Now().Add(wsWriteWait))
		return p.conn.WriteMessage(websocket.TextMessage, b) == nil
	}
	if !write(hello) {
		return
	}
	sentSeq, sentFlags := hello.Seq, hello.Flags
	for {
		select {
		case <-p.done:
			p.conn.SetWriteDeadline(time.Now().Add(time.Second))
			p.conn.WriteMessage(websocket.CloseMessage, websocket.FormatCloseMessage(websocket.CloseGoingAway, "hub closing"))
			return
		case <-p.wake:
			seq, fl := s.hub.view(p.athlete)
			if seq == sentSeq && fl == sentFlags {
				continue
			}
			if !write(wsMessage{T: "poke", Seq: seq, Flags: fl}) {
				return
			}
			sentSeq, sentFlags = seq, fl
		case <-beat.C:
			seq, fl := s.hub.view(p.athlete)
			if !write(wsMessage{T: "poke", Seq: seq, Flags: fl}) {
				return
			}
		case <-ping.C:
			p.conn.SetWriteDeadline(time.Now().Add(wsWriteWait))
			if err := p.conn.WriteMessage(websocket.PingMessage, nil); err != nil {
				return
			}
		}
	}
}
