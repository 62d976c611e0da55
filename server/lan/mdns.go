// Package lan answers for the hub's name on the camp network: a small
// multicast DNS responder (RFC 6762, Cheshire & Krochmal 2013) that
// answers queries for one name with the laptop's LAN addresses, so
// phones reach the hub by a name that stays the same when the camp moves
// to another network and the laptop gets another address.
//
// Answer is pure: a query packet in, a response packet out. Serve is the
// only part that touches the network; tests never call it.
package lan

import (
	"context"
	"errors"
	"net"
	"strings"
	"sync"
	"time"

	"github.com/miekg/dns"
)

// TTL of the answers: RFC 6762 §10 recommends 120 s for records that
// carry a host name's addresses.
const TTL = 120

// Port and group of multicast DNS (RFC 6762 §3).
var (
	group4 = &net.UDPAddr{IP: net.IPv4(224, 0, 0, 251), Port: 5353}
)

// Responder answers for Name (e.g. "cornerbook-coach.local").
type Responder struct {
	Name string
	// Addrs returns the addresses to answer with at the moment of the
	// query: the laptop's current LAN addresses (never loopback).
	Addrs func() []net.IP
}

// Answer returns the response to one query packet, and whether it goes
// back to the asker alone (unicast: a one-shot resolver asking from a
// port other than 5353, or a question with the unicast-response bit, RFC
// 6762 §5.4 and §6.7) rather than to the group. ok is false when the
// packet asks nothing of this name (or is not a query).
func (r *Responder) Answer(packet []byte, fromPort int) (resp []byte, unicast, ok bool) {
	var q dns.Msg
	if err := q.Unpack(packet); err != nil || q.Response || q.Opcode != dns.OpcodeQuery {
		return nil, false, false
	}
	name := dns.Fqdn(strings.ToLower(r.Name))
	legacy := fromPort != 5353
	var answers []dns.RR
	qu := false
	var asked []dns.Question
	for _, question := range q.Question {
		if strings.ToLower(question.Name) != name || question.Qclass&0x7fff != dns.ClassINET {
			continue
		}
		if question.Qclass&0x8000 != 0 {
			qu = true
		}
		asked = append(asked, dns.Question{Name: question.Name, Qtype: question.Qtype, Qclass: dns.ClassINET})
		answers = append(answers, r.records(question.Qtype, name, legacy)...)
	}
	if len(answers) == 0 {
		return nil, false, false
	}
	m := new(dns.Msg)
	m.Response, m.Authoritative = true, true
	m.Answer = answers
	if legacy {
		// A one-shot resolver gets its id and questions back (§6.7).
		m.Id = q.Id
		m.Question = asked
	}
	out, err := m.Pack()
	if err != nil {
		return nil, false, false
	}
	return out, legacy || qu, true
}

// Announcement is the unsolicited response sent when the responder
// starts (§8.3): every address of the name.
func (r *Responder) Announcement() ([]byte, error) {
	m := new(dns.Msg)
	m.Response, m.Authoritative = true, true
	name := dns.Fqdn(strings.ToLower(r.Name))
	m.Answer = r.records(dns.TypeANY, name, false)
	if len(m.Answer) == 0 {
		return nil, errors.New("no LAN address to announce")
	}
	return m.Pack()
}

func (r *Responder) records(qtype uint16, name string, legacy bool) []dns.RR {
	class := uint16(dns.ClassINET)
	if !legacy {
		class |= 0x8000 // cache-flush: this name is ours alone (§10.2)
	}
	ttl := uint32(TTL)
	if legacy {
		ttl = 10 // §6.7: at most 10 s to a one-shot resolver
	}
	var out []dns.RR
	for _, ip := range r.Addrs() {
		if ip.IsLoopback() {
			continue
		}
		if v4 := ip.To4(); v4 != nil && (qtype == dns.TypeA || qtype == dns.TypeANY) {
			out = append(out, &dns.A{Hdr: dns.RR_Header{Name: name, Rrtype: dns.TypeA, Class: class, Ttl: ttl}, A: v4})
		} else if v4 == nil && (qtype == dns.TypeAAAA || qtype == dns.TypeANY) {
			out = append(out, &dns.AAAA{Hdr: dns.RR_Header{Name: name, Rrtype: dns.TypeAAAA, Class: class, Ttl: ttl}, AAAA: ip})
		}
	}
	return out
}

// Serve answers on every interface that is up, multicast-capable and not
// loopback, until ctx ends. It announces the name at start (twice, one
// second apart, §8.3). It never opens a socket on loopback.
func (r *Responder) Serve(ctx context.Context, logf func(string, ...any)) error {
	ifaces, err := net.Interfaces()
	if err != nil {
		return err
	}
	var wg sync.WaitGroup
	served := 0
	for _, ifc := range ifaces {
		if ifc.Flags&net.FlagUp == 0 || ifc.Flags&net.FlagLoopback != 0 || ifc.Flags&net.FlagMulticast == 0 {
			continue
		}
		conn, err := net.ListenMulticastUDP("udp4", &ifc, group4)
		if err != nil {
			logf("camp name: cannot answer on %s: %v", ifc.Name, err)
			continue
		}
		served++
		wg.Add(1)
		go func() {
			defer wg.Done()
			r.serveConn(ctx, conn, logf)
		}()
	}
	if served == 0 {
		return errors.New("no network interface to answer on")
	}
	wg.Wait()
	return nil
}

func (r *Responder) serveConn(ctx context.Context, conn *net.UDPConn, logf func(string, ...any)) {
	go func() { <-ctx.Done(); conn.Close() }()
	if a, err := r.Announcement(); err == nil {
		conn.WriteToUDP(a, group4)
		go func() {
			select {
			case <-ctx.Done():
			case <-time.After(time.Second):
				conn.WriteToUDP(a, group4)
			}
		}()
	}
	buf := make([]byte, 9000)
	for {
		n, from, err := conn.ReadFromUDP(buf)
		if err != nil {
			if ctx.Err() == nil {
				logf("camp name: %v", err)
			}
			return
		}
		resp, unicast, ok := r.Answer(buf[:n], from.Port)
		if !ok {
			continue
		}
		to := group4
		if unicast {
			to = from
		}
		conn.WriteToUDP(resp, to)
	}
}
