package lan

import (
	"net"
	"testing"

	"github.com/miekg/dns"
	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// No test here opens a socket: queries are packets handed to Answer.

func responder() *Responder {
	return &Responder{Name: "cornerbook-coach.local", Addrs: func() []net.IP {
		return []net.IP{net.ParseIP("192.0.2.10"), net.ParseIP("127.0.0.1"), net.ParseIP("2001:db8::10"), net.ParseIP("::1")}
	}}
}

func query(t *testing.T, name string, qtype uint16, qu bool) []byte {
	m := new(dns.Msg)
	m.Id = 0
	m.Question = []dns.Question{{Name: dns.Fqdn(name), Qtype: qtype, Qclass: dns.ClassINET}}
	if qu {
		m.Question[0].Qclass |= 0x8000
	}
	b, err := m.Pack()
	require.NoError(t, err)
	return b
}

func decode(t *testing.T, b []byte) *dns.Msg {
	var m dns.Msg
	require.NoError(t, m.Unpack(b))
	return &m
}

// TestAnswer_AQueryForTheName: an A query for the name (any case) gets
// the LAN IPv4 address, never loopback, multicast to the group, in the
// form RFC 6762 asks of a multicast response (Cheshire & Krochmal 2013:
// id 0, no questions §6, authoritative, cache-flush §10.2, TTL 120 s §10).
func TestAnswer_AQueryForTheName(t *testing.T) {
	resp, unicast, ok := responder().Answer(query(t, "Cornerbook-Coach.local", dns.TypeA, false), 5353)
	require.True(t, ok)
	assert.False(t, unicast)
	m := decode(t, resp)
	assert.True(t, m.Response)
	assert.True(t, m.Authoritative)
	assert.Zero(t, m.Id)
	assert.Empty(t, m.Question)
	require.Len(t, m.Answer, 1)
	a := m.Answer[0].(*dns.A)
	assert.Equal(t, "192.0.2.10", a.A.String())
	assert.Equal(t, "cornerbook-coach.local.", a.Hdr.Name)
	assert.Equal(t, uint16(dns.ClassINET|0x8000), a.Hdr.Class)
	assert.EqualValues(t, 120, a.Hdr.Ttl)
}

// TestAnswer_AAAAAndAny: AAAA gets the IPv6 LAN address; ANY gets both.
func TestAnswer_AAAAAndAny(t *testing.T) {
	resp, _, ok := responder().Answer(query(t, "cornerbook-coach.local", dns.TypeAAAA, false), 5353)
	require.True(t, ok)
	m := decode(t, resp)
	require.Len(t, m.Answer, 1)
	assert.Equal(t, "2001:db8::10", m.Answer[0].(*dns.AAAA).AAAA.String())
	resp, _, ok = responder().Answer(query(t, "cornerbook-coach.local", dns.TypeANY, false), 5353)
	require.True(t, ok)
	assert.Len(t, decode(t, resp).Answer, 2)
}

// TestAnswer_OnlyItsName: other names, responses and garbage get nothing.
func TestAnswer_OnlyItsName(t *testing.T) {
	r := responder()
	for name, pkt := range map[string][]byte{
		"another host": query(t, "printer.local", dns.TypeA, false),
		"a look-alike": query(t, "cornerbook-coach.local.evil", dns.TypeA, false),
		"garbage":      []byte{1, 2, 3},
		"empty":        nil,
	} {
		_, _, ok := r.Answer(pkt, 5353)
		assert.False(t, ok, name)
	}
	// Someone else's response about the name is not a question.
	m := new(dns.Msg)
	m.Response = true
	m.Answer = []dns.RR{&dns.A{Hdr: dns.RR_Header{Name: "cornerbook-coach.local.", Rrtype: dns.TypeA, Class: dns.ClassINET, Ttl: 120}, A: net.ParseIP("192.0.2.99")}}
	b, _ := m.Pack()
	_, _, ok := r.Answer(b, 5353)
	assert.False(t, ok)
	// No LAN address: nothing to say, even when asked.
	lone := &Responder{Name: "cornerbook-coach.local", Addrs: func() []net.IP { return []net.IP{net.ParseIP("127.0.0.1")} }}
	_, _, ok = lone.Answer(query(t, "cornerbook-coach.local", dns.TypeA, false), 5353)
	assert.False(t, ok)
	_, err := lone.Announcement()
	assert.Error(t, err)
}

// TestAnswer_UnicastWhenAsked: a one-shot resolver (source port not 5353)
// gets its id and question back, unicast, with a TTL of at most 10 s
// (§6.7); a question with the unicast-response bit is answered unicast
// (§5.4).
func TestAnswer_UnicastWhenAsked(t *testing.T) {
	q := new(dns.Msg)
	q.SetQuestion("cornerbook-coach.local.", dns.TypeA)
	q.Id = 4242
	b, _ := q.Pack()
	resp, unicast, ok := responder().Answer(b, 53211)
	require.True(t, ok)
	assert.True(t, unicast)
	m := decode(t, resp)
	assert.EqualValues(t, 4242, m.Id)
	require.Len(t, m.Question, 1)
	require.Len(t, m.Answer, 1)
	assert.LessOrEqual(t, m.Answer[0].Header().Ttl, uint32(10))
	assert.Equal(t, uint16(dns.ClassINET), m.Answer[0].Header().Class, "no cache-flush bit to a one-shot resolver")

	_, unicast, ok = responder().Answer(query(t, "cornerbook-coach.local", dns.TypeA, true), 5353)
	require.True(t, ok)
	assert.True(t, unicast)
}

// TestAnnouncement: the start-up announcement carries every LAN address.
func TestAnnouncement(t *testing.T) {
	b, err := responder().Announcement()
	require.NoError(t, err)
	m := decode(t, b)
	assert.True(t, m.Response)
	assert.Len(t, m.Answer, 2)
}
