package auth

import (
	"fmt"
	"net/http"
	"net/http/httptest"
	"testing"
	"time"

	devsync "cornerbook/sync"

	"github.com/stretchr/testify/assert"
	"github.com/stretchr/testify/require"
)

func TestStatus(t *testing.T) {
	for err, want := range map[error]int{
		nil:                                      200,
		&ThrottledError{RetryAfter: time.Second}: 429,
		ErrNoToken:                               401,
		fmt.Errorf("pull: %w", ErrRevoked):       401,
		ErrWrongPassphrase:                       401,
		CanWrite(athA, rec(athA, "bout", "own")): 403,
		RequireCoach(staff):                      403,
		ErrUnknownDevice:                         404,
		ErrJoinUnknown:                           404,
		fmt.Errorf("%w (x)", ErrJoinExpired):     410,
		ErrJoinUsed:                              410,
		ErrPassphraseSet:                         409,
		devsync.Invalid("name", "is empty"):      400,
		fmt.Errorf("disk full"):                  500,
	} {
		assert.Equal(t, want, Status(err), "%v", err)
	}
}

func TestCancelJoin(t *testing.T) {
	f := open(t)
	j, err := f.s.NewJoin(RoleStaff, "", "", t0)
	require.NoError(t, err)
	require.NoError(t, f.s.CancelJoin(FormatCode(j.Code)))
	_, _, err = f.s.Redeem(j.Code, "tablet", "x", t0)
	assert.ErrorIs(t, err, ErrJoinUnknown)
	assert.ErrorIs(t, f.s.CancelJoin(j.Code), ErrJoinUnknown)

	j2, _ := f.s.NewJoin(RoleStaff, "", "", t0)
	_, _, err = f.s.Redeem(j2.Code, "tablet", "x", t0)
	require.NoError(t, err)
	assert.ErrorIs(t, f.s.CancelJoin(j2.Code), ErrJoinUsed)
}

func TestFromLaptop(t *testing.T) {
	for _, c := range []struct {
		remote, host, origin, site string
		want                       bool
	}{
		{"127.0.0.1:50000", "localhost:8080", "", "", true},
		{"127.0.0.1:50000", "127.0.0.1:8080", "http://127.0.0.1:8080", "same-origin", true},
		{"[::1]:50000", "[::1]:8080", "", "", true},
		{"192.168.50.31:50000", "localhost:8080", "", "", false},                // a phone
		{"127.0.0.1:50000", "evil.example:8080", "", "", false},                 // DNS rebinding
		{"127.0.0.1:50000", "localhost:8080", "http://evil.example", "", false}, // another site's form
		{"127.0.0.1:50000", "localhost:8080", "null", "", false},
		{"127.0.0.1:50000", "localhost:8080", "", "cross-site", false},
		{"127.0.0.1:50000", "192.168.50.10:8443", "", "", false}, // the LAN address, even from the laptop
	} {
		r := httptest.NewRequest(http.MethodPost, "/api/devices", nil)
		r.RemoteAddr, r.Host = c.remote, c.host
		if c.origin != "" {
			r.Header.Set("Origin", c.origin)
		}
		if c.site != "" {
			r.Header.Set("Sec-Fetch-Site", c.site)
		}
		assert.Equal(t, c.want, FromLaptop(r), "%+v", c)
	}
}

func TestFromLaptopOnARealServer(t *testing.T) {
	srv := httptest.NewServer(http.HandlerFunc(func(w http.ResponseWriter, r *http.Request) {
		fmt.Fprint(w, FromLaptop(r))
	}))
	defer srv.Close()
	get := func(origin string) string {
		req, _ := http.NewRequest(http.MethodGet, srv.URL, nil)
		if origin != "" {
			req.Header.Set("Origin", origin)
		}
		res, err := srv.Client().Do(req)
		require.NoError(t, err)
		defer res.Body.Close()
		b := make([]byte, 8)
		n, _ := res.Body.Read(b)
		return string(b[:n])
	}
	assert.Equal(t, "true", get(""))
	assert.Equal(t, "true", get(srv.URL))
	assert.Equal(t, "false", get("http://evil.example"))
}
