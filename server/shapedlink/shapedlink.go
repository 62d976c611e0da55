// Package shapedlink is a TCP proxy on loopback that behaves like a slow
// shared link: each direction has its own bit rate, shared by every
// connection through the proxy, and every byte arrives half a round trip
// after it left the link. Benchmarks put it between a device and the hub
// to measure what a crowded travel router does to sync and first load.
// It only listens on loopback and only forwards to the one address it is
// given.
package shapedlink

import (
	"errors"
	"io"
	"net"
	"sync"
	"sync/atomic"
	"time"
)

// Link describes the link: rates in bits per second, and the round trip.
type Link struct {
	DownBps, UpBps int
	RTT            time.Duration
}

// TravelRouter is a crowded travel router as ENGINEERING.md measures it:
// 1.5 Mbit/s down, 750 kbit/s up, 150 ms round trip.
var TravelRouter = Link{DownBps: 1_500_000, UpBps: 750_000, RTT: 150 * time.Millisecond}

// chunk is the most one read carries through the link at once: about a
// few TCP segments, so a big answer trickles out as on a real link.
const chunk = 4096

// queued bounds how much one direction of one connection holds in flight
// (chunks), so the proxy's memory stays bounded whatever passes.
const queued = 256

// Proxy forwards connections to a target through the shaped link.
type Proxy struct {
	ln          net.Listener
	target      string
	link        Link
	down, up    pacer
	bytesDown   atomic.Int64 // to the client
	bytesUp     atomic.Int64 // to the target
	wg          sync.WaitGroup
	mu          sync.Mutex
	conns       map[net.Conn]bool
	closed      bool
	connsOpened atomic.Int64
}

// pacer is one direction of the link: when it is next free.
type pacer struct {
	mu     sync.Mutex
	freeAt time.Time
	bps    int
}

// depart books n bytes on the link and returns when they have crossed it
// (before the propagation delay).
func (p *pacer) depart(n int) time.Time {
	p.mu.Lock()
	defer p.mu.Unlock()
	now := time.Now()
	if p.freeAt.Before(now) {
		p.freeAt = now
	}
	p.freeAt = p.freeAt.Add(time.Duration(int64(n) * 8 * int64(time.Second) / int64(p.bps)))
	return p.freeAt
}

// Listen starts a proxy on 127.0.0.1 that forwards to target over link.
func Listen(target string, link Link) (*Proxy, error) {
	if link.DownBps <= 0 || link.UpBps <= 0 || link.RTT < 0 {
		return nil, errors.New("shapedlink: rates must be positive and the round trip not negative")
	}
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	if err != nil {
		return nil, err
	}
	p := &Proxy{ln: ln, target: target, link: link, conns: map[net.Conn]bool{},
		down: pacer{bps: link.DownBps}, up: pacer{bps: link.UpBps}}
	p.wg.Add(1)
	go p.accept()
	return p, nil
}

// Addr is the proxy's address (host:port on loopback).
func (p *Proxy) Addr() string { return p.ln.Addr().String() }

// BytesDown and BytesUp count what crossed the link towards the client
// and towards the target since the start.
func (p *Proxy) BytesDown() int64 { return p.bytesDown.Load() }

// BytesUp: see BytesDown.
func (p *Proxy) BytesUp() int64 { return p.bytesUp.Load() }

// Connections counts the connections opened through the proxy since the
// start.
func (p *Proxy) Connections() int64 { return p.connsOpened.Load() }

// Close stops accepting and cuts every connection.
func (p *Proxy) Close() error {
	p.mu.Lock()
	p.closed = true
	for c := range p.conns {
		c.Close()
	}
	p.mu.Unlock()
	err := p.ln.Close()
	p.wg.Wait()
	return err
}

func (p *Proxy) track(c net.Conn) bool {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.closed {
		c.Close()
		return false
	}
	p.conns[c] = true
	return true
}

func (p *Proxy) untrack(c net.Conn) {
	p.mu.Lock()
	delete(p.conns, c)
	p.mu.Unlock()
	c.Close()
}

func (p *Proxy) accept() {
	defer p.wg.Done()
	for {
		c, err := p.ln.Accept()
		if err != nil {
			return
		}
		p.connsOpened.Add(1)
		p.wg.Add(1)
		go p.serve(c)
	}
}

func (p *Proxy) serve(client net.Conn) {
	defer p.wg.Done()
	// The connection itself costs a round trip (SYN, SYN-ACK) on the link.
	time.Sleep(p.link.RTT)
	server, err := net.Dial("tcp", p.target)
	if err != nil {
		client.Close()
		return
	}
	if !p.track(client) || !p.track(server) {
		client.Close()
		server.Close()
		return
	}
	var wg sync.WaitGroup
	wg.Add(2)
	go func() { defer wg.Done(); p.pipe(server, client, &p.up, &p.bytesUp) }()
	go func() { defer wg.Done(); p.pipe(client, server, &p.down, &p.bytesDown) }()
	wg.Wait()
	p.untrack(client)
	p.untrack(server)
}

type piece struct {
	at   time.Time
	data []byte
}

// pipe carries src to dst: each chunk waits for its turn on the link,
// then half a round trip, then is written. EOF closes dst's write side.
func (p *Proxy) pipe(dst, src net.Conn, link *pacer, count *atomic.Int64) {
	q := make(chan piece, queued)
	done := make(chan struct{})
	go func() {
		defer close(done)
		for pc := range q {
			if d := time.Until(pc.at); d > 0 {
				time.Sleep(d)
			}
			if _, err := dst.Write(pc.data); err != nil {
				for range q {
				}
				return
			}
			count.Add(int64(len(pc.data)))
		}
		if tc, ok := dst.(*net.TCPConn); ok {
			tc.CloseWrite()
		} else {
			dst.Close()
		}
	}()
	for {
		buf := make([]byte, chunk)
		n, err := src.Read(buf)
		if n > 0 {
			q <- piece{at: link.depart(n).Add(p.link.RTT / 2), data: buf[:n]}
		}
		if err != nil {
			if !errors.Is(err, io.EOF) {
				src.Close()
			}
			break
		}
	}
	close(q)
	<-done
}
