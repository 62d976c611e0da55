package server_test

import (
	"bufio"
	"io"
	"net"
	"net/http"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
	"golang.org/x/crypto/bcrypt"

	"cornerbook/server"
	"cornerbook/server/auth"
)

// TestListener_SlowBodiesAreCut: requests whose bodies trickle in (an
// unauthenticated /api/join, on loopback) do not hold their connections
// past the body timeout; a push keeps the longer whole-request timeout;
// and the 413 of /api/join does not speak of pushes.
func TestListener_SlowBodiesAreCut(t *testing.T) {
	nowFn := func() time.Time { return fixedNow }
	db, err := server.OpenStore(filepath.Join(t.TempDir(), "cornerbook.db"), nowFn)
	require.NoError(t, err)
	defer db.Close()
	accounts, err := auth.Open(db.Bolt(), auth.Options{Now: nowFn, BcryptCost: bcrypt.MinCost})
	require.NoError(t, err)
	srv, err := server.New(server.Config{Store: db, Now: nowFn, Location: time.UTC, Auth: accounts,
		BodyTimeout: 300 * time.Millisecond, ReadTimeout: 5 * time.Second})
	require.NoError(t, err)
	ln, err := net.Listen("tcp", "127.0.0.1:0")
	require.NoError(t, err)
	require.NoError(t, srv.Serve(ln))
	defer srv.Close()

	const conns = 20
	start := time.Now()
	var wg sync.WaitGroup
	held := make([]time.Duration, conns)
	for i := range conns {
		wg.Add(1)
		go func() {
			defer wg.Done()
			c, err := net.Dial("tcp", ln.Addr().String())
			if !assert.NoError(t, err) {
				return
			}
			defer c.Close()
			io.WriteString(c, "POST /api/join HTTP/1.1\r\nHost: camp.local\r\nContent-Type: application/json\r\nContent-Length: 1000\r\n\r\n{\"code\":")
			c.SetReadDeadline(time.Now().Add(4 * time.Second)) // the test's own bound
			io.Copy(io.Discard, c)                             // until the hub answers and closes, or the bound
			held[i] = time.Since(start)
		}()
	}
	wg.Wait()
	for i, d := range held {
		assert.Less(t, d, 2*time.Second, "connection %d held %v", i, d)
	}

	// A request body larger than /api/join allows: 413 in words of its own.
	resp, err := http.Post("http://"+ln.Addr().String()+"/api/join", "application/json",
		strings.NewReader(`{"code":"`+strings.Repeat("x", 8<<10)+`"}`))
	require.NoError(t, err)
	body, _ := io.ReadAll(resp.Body)
	resp.Body.Close()
	assert.Equal(t, 413, resp.StatusCode)
	assert.NotContains(t, string(body), "push")

	// A push may take longer than the body timeout to arrive.
	c, err := net.Dial("tcp", ln.Addr().String())
	require.NoError(t, err)
	defer c.Close()
	push := `{"device":"phone-1","mutations":[]}`
	io.WriteString(c, "POST /api/push HTTP/1.1\r\nHost: 127.0.0.1\r\nContent-Type: application/json\r\nConnection: close\r\nContent-Length: "+strconv.Itoa(len(push))+"\r\n\r\n"+push[:10])
	time.Sleep(700 * time.Millisecond)
	io.WriteString(c, push[10:])
	c.SetReadDeadline(time.Now().Add(4 * time.Second))
	st, err := bufio.NewReader(c).ReadString('\n')
	require.NoError(t, err)
	assert.Contains(t, st, " 200 ", "a slow push is still read whole")
}
