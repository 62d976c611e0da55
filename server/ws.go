package server

import (
	"encoding/json"
	"net/http"
	"sync"
	"sync/atomic"
	"time"

	"github.com/gorilla/websocket"

	"cornerbook/server/auth"
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
type pokeHub struct {
	mu     sync.Mutex // guards peers and closed
	peers  map[*peer]struct{}
	closed bool
	seq    atomic.Uint64 // latest sequence announced
	flags  atomic.Uint64 // bumps when the day's flags change
}

type peer struct {
	conn *websocket.Conn
	wake chan struct{} // 1 slot: coalesces pokes
	done chan struct{}
	once sync.Once
}

func newPokeHub() *pokeHub { return &pokeHub{peers: map[*peer]struct{}{}} }

// Poke announces a new maximum sequence to every peer.
func (h *pokeHub) Poke(seq uint64) {
	for {
		old := h.seq.Load()
		if seq <= old || h.seq.CompareAndSwap(old, seq) {
			break
		}
	}
	h.wakeAll()
}

// FlagsChanged tells dashboards the flags were recomputed.
func (h *pokeHub) FlagsChanged() {
	h.flags.Add(1)
	h.wakeAll()
}

func (h *pokeHub) wakeAll() {
	h.mu.Lock()
	defer h.mu.Unlock()
	for p := range h.peers {
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
	if _, err := s.authorize(r, accessRead); err != nil {
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
	p := &peer{conn: conn, wake: make(chan struct{}, 1), done: make(chan struct{})}
	if !s.hub.add(p) {
		conn.Close()
		return nil
	}
	hello := wsMessage{T: "hello", Epoch: epoch, Seq: s.hub.seq.Load(), Flags: s.hub.flags.Load(), ServerTime: s.now().UnixMilli()}
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
			seq, fl := s.hub.seq.Load(), s.hub.flags.Load()
			if seq == sentSeq && fl == sentFlags {
				continue
			}
			if !write(wsMessage{T: "poke", Seq: seq, Flags: fl}) {
				return
			}
			sentSeq, sentFlags = seq, fl
		case <-beat.C:
			if !write(wsMessage{T: "poke", Seq: s.hub.seq.Load(), Flags: s.hub.flags.Load()}) {
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
