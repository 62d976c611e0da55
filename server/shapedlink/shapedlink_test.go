package shapedlink

import (
	"bytes"
	"io"
	"net"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

// A server's answer of 64 KB through the travel router takes its
// transmission time at 1.5 Mbit/s (64 KiB × 8 / 1.5 Mbit/s ≈ 350 ms) plus
// the connection's round trip and half a round trip of propagation, and
// arrives whole; the request going up is paced at 750 kbit/s.
func TestLinkPacesAndDelays(t *testing.T) {
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	defer ln.Close()
	answer := bytes.Repeat([]byte("0123456789abcdef"), 4096) // 64 KiB
	go func() {
		for {
			c, err := ln.Accept()
			if err != nil {
				return
			}
			go func() {
				defer c.Close()
				req := make([]byte, 16<<10)
				if _, err := io.ReadFull(c, req); err != nil {
					return
				}
				c.Write(answer)
			}()
		}
	}()
	p, err := Listen(ln.Addr().String(), TravelRouter)
	require.NoError(t, err)
	defer p.Close()

	t0 := time.Now()
	c, err := net.Dial("tcp", p.Addr())
	require.NoError(t, err)
	defer c.Close()
	_, err = c.Write(make([]byte, 16<<10))
	require.NoError(t, err)
	got, err := io.ReadAll(c)
	require.NoError(t, err)
	elapsed := time.Since(t0)
	assert.Equal(t, answer, got)

	up := time.Duration(16<<10*8) * time.Second / 750_000     // ≈ 175 ms
	down := time.Duration(64<<10*8) * time.Second / 1_500_000 // ≈ 350 ms
	least := TravelRouter.RTT + up + TravelRouter.RTT + down  // connect, request, answer
	assert.GreaterOrEqual(t, elapsed, least-10*time.Millisecond)
	assert.Less(t, elapsed, least+600*time.Millisecond, "no more than scheduling slack on top")
	assert.Equal(t, int64(len(answer)), p.BytesDown())
	assert.Equal(t, int64(16<<10), p.BytesUp())
	assert.Equal(t, int64(1), p.Connections())
}

func TestLinkRefusesNonsense(t *testing.T) {
	_, err := Listen("127.0.0.1:1", Link{DownBps: 0, UpBps: 1, RTT: time.Millisecond})
	assert.Error(t, err)
}
