package main

import (
	"bytes"
	"context"
	"crypto/tls"
	"crypto/x509"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"net"
	"net/http"
	"net/url"
	"os"
	"strconv"
	"time"

	devsync "cornerbook/sync"
)

// loopbackURL parses a hub address and refuses anything but http or
// https to a loopback IP literal (127.0.0.0/8 or ::1). Host names are
// refused too: a name could resolve anywhere.
func loopbackURL(raw string) (*url.URL, error) {
	u, err := url.Parse(raw)
	if err != nil {
		return nil, fmt.Errorf("--url %q is not an address: %v", raw, err)
	}
	if u.Scheme != "http" && u.Scheme != "https" {
		return nil, fmt.Errorf("--url %q must start with http:// or https://", raw)
	}
	ip := net.ParseIP(u.Hostname())
	if ip == nil || !ip.IsLoopback() {
		return nil, fmt.Errorf("--url %q: the load tool only talks to a hub on this machine (127.0.0.1 or [::1]); %q is refused", raw, u.Hostname())
	}
	if u.Port() == "" {
		return nil, fmt.Errorf("--url %q needs a port, e.g. https://127.0.0.1:8443", raw)
	}
	u.Path, u.RawQuery, u.Fragment = "", "", ""
	return u, nil
}

// client speaks the hub's API. Every connection is dialled to a loopback
// address or refused, and redirects are never followed.
type client struct {
	base       *url.URL
	http       *http.Client
	deviceHost string // Host header of device requests ("" = the URL's)
}

func newClient(base *url.URL, caPEM []byte, conns int, deviceHost string) (*client, error) {
	dialer := &net.Dialer{Timeout: 5 * time.Second}
	tr := &http.Transport{
		DialContext: func(ctx context.Context, network, addr string) (net.Conn, error) {
			host, _, err := net.SplitHostPort(addr)
			if err != nil {
				return nil, err
			}
			if ip := net.ParseIP(host); ip == nil || !ip.IsLoopback() {
				return nil, fmt.Errorf("refusing to connect to %s: not a loopback address", addr)
			}
			return dialer.DialContext(ctx, network, addr)
		},
		MaxIdleConns:        conns + 4,
		MaxIdleConnsPerHost: conns + 4,
		IdleConnTimeout:     30 * time.Second,
		ForceAttemptHTTP2:   false,
	}
	if base.Scheme == "https" {
		if len(caPEM) == 0 {
			return nil, errors.New("an https hub needs --ca-file: the camp authority's certificate (DATA/tls/ca.crt)")
		}
		pool := x509.NewCertPool()
		if !pool.AppendCertsFromPEM(caPEM) {
			return nil, errors.New("--ca-file holds no PEM certificate")
		}
		tr.TLSClientConfig = &tls.Config{RootCAs: pool, MinVersion: tls.VersionTLS12}
	}
	return &client{
		base:       base,
		deviceHost: deviceHost,
		http: &http.Client{Transport: tr, Timeout: 30 * time.Second,
			CheckRedirect: func(*http.Request, []*http.Request) error { return http.ErrUseLastResponse }},
	}, nil
}

func readCA(path string) ([]byte, error) {
	if path == "" {
		return nil, nil
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("--ca-file: %w", err)
	}
	return b, nil
}

// as is who a request speaks for: the laptop (no token, loopback Host)
// or a paired device (its token, and the device Host header).
type as struct {
	token string
}

var coach = as{}

// apiError is a non-2xx answer with the hub's error body.
type apiError struct {
	Status int
	Body   devsync.ErrorBody
	Raw    string
}

func (e *apiError) Error() string {
	if e.Body.Code == "" {
		return fmt.Sprintf("HTTP %d: %.200s", e.Status, e.Raw)
	}
	if e.Body.Field != "" {
		return fmt.Sprintf("HTTP %d %s %s: %s", e.Status, e.Body.Code, e.Body.Field, e.Body.Reason)
	}
	return fmt.Sprintf("HTTP %d %s: %s", e.Status, e.Body.Code, e.Body.Reason)
}

// transient reports whether err is worth retrying: the hub could not be
// reached, the connection broke, or the hub answered 5xx or 429.
func transient(err error) bool {
	var ae *apiError
	if errors.As(err, &ae) {
		return ae.Status >= 500 || ae.Status == http.StatusTooManyRequests
	}
	return err != nil && !errors.Is(err, context.Canceled) && !errors.Is(err, context.DeadlineExceeded)
}

// do sends one request and decodes a 2xx JSON answer into out.
func (c *client) do(ctx context.Context, who as, method, path string, body, out any) error {
	var rd io.Reader
	if body != nil {
		b, err := json.Marshal(body)
		if err != nil {
			return err
		}
		rd = bytes.NewReader(b)
	}
	req, err := http.NewRequestWithContext(ctx, method, c.base.String()+path, rd)
	if err != nil {
		return err
	}
	if body != nil {
		req.Header.Set("Content-Type", "application/json")
	}
	if who.token != "" {
		req.Header.Set("Authorization", "Bearer "+who.token)
		if c.deviceHost != "" {
			req.Host = c.deviceHost
		}
	}
	resp, err := c.http.Do(req)
	if err != nil {
		return err
	}
	defer resp.Body.Close()
	raw, err := io.ReadAll(io.LimitReader(resp.Body, 64<<20))
	if err != nil {
		return fmt.Errorf("reading the answer to %s %s: %w", method, path, err)
	}
	if resp.StatusCode/100 != 2 {
		e := &apiError{Status: resp.StatusCode, Raw: string(raw)}
		json.Unmarshal(raw, &e.Body)
		return e
	}
	if out == nil {
		return nil
	}
	if err := json.Unmarshal(raw, out); err != nil {
		return fmt.Errorf("the answer to %s %s is not the expected JSON: %w", method, path, err)
	}
	return nil
}

// retry calls fn until it succeeds, fails permanently, or ctx ends,
// backing off from 20 ms to 1 s. It returns the number of failed tries.
func retry(ctx context.Context, fn func() error) (int, error) {
	wait := 20 * time.Millisecond
	for tries := 0; ; tries++ {
		err := fn()
		if err == nil || !transient(err) {
			return tries, err
		}
		select {
		case <-ctx.Done():
			return tries, fmt.Errorf("%w (last error: %v)", ctx.Err(), err)
		case <-time.After(wait):
		}
		wait = min(wait*2, time.Second)
	}
}

// status is the part of GET /api/status the tool needs.
type status struct {
	Epoch    string `json:"epoch"`
	MaxSeq   uint64 `json:"maxSeq"`
	TimeZone string `json:"timeZone"`
	Today    string `json:"today"`
	Role     string `json:"role"`
}

func (c *client) status(ctx context.Context) (status, error) {
	var st status
	err := c.do(ctx, coach, http.MethodGet, "/api/status", nil, &st)
	return st, err
}

type joinCode struct {
	Code string `json:"code"`
}

type paired struct {
	Token  string `json:"token"`
	Device struct {
		ID      string `json:"id"`
		Role    string `json:"role"`
		Athlete string `json:"athlete"`
	} `json:"device"`
}

// join pairs one device as the coach would: a join code made on the
// laptop, redeemed with a device name.
func (c *client) join(ctx context.Context, role, athlete, name string) (paired, error) {
	var jc joinCode
	req := map[string]string{"role": role}
	if athlete != "" {
		req["athlete"] = athlete
	}
	if err := c.do(ctx, coach, http.MethodPost, "/api/joins", req, &jc); err != nil {
		return paired{}, fmt.Errorf("making a join code: %w", err)
	}
	var p paired
	if err := c.do(ctx, coach, http.MethodPost, "/api/join", map[string]string{"code": jc.Code, "name": name}, &p); err != nil {
		return paired{}, fmt.Errorf("joining with code %s: %w", jc.Code, err)
	}
	if p.Token == "" || p.Device.ID == "" {
		return paired{}, errors.New("the hub answered a join without a token or device id")
	}
	return p, nil
}

func (c *client) push(ctx context.Context, who as, req devsync.PushRequest) (devsync.PushResponse, error) {
	var res devsync.PushResponse
	err := c.do(ctx, who, http.MethodPost, "/api/push", req, &res)
	return res, err
}

func (c *client) pull(ctx context.Context, who as, since uint64, limit int) (devsync.PullResponse, error) {
	var res devsync.PullResponse
	err := c.do(ctx, who, http.MethodGet, "/api/pull?since="+strconv.FormatUint(since, 10)+"&limit="+strconv.Itoa(limit), nil, &res)
	return res, err
}

// pullAll pulls every page from cursor 0, retrying broken pages from the
// same cursor. It returns the records in the order pulled and the number
// of pages.
func (c *client) pullAll(ctx context.Context, who as) ([]devsync.Record, int, error) {
	var out []devsync.Record
	var since uint64
	pages := 0
	for {
		var page devsync.PullResponse
		_, err := retry(ctx, func() error {
			var err error
			page, err = c.pull(ctx, who, since, devsync.MaxPullLimit)
			return err
		})
		if err != nil {
			return out, pages, fmt.Errorf("pull from %d: %w", since, err)
		}
		pages++
		out = append(out, page.Records...)
		if page.Next < since {
			return out, pages, fmt.Errorf("pull cursor went backwards: %d after %d", page.Next, since)
		}
		since = page.Next
		if !page.More {
			return out, pages, nil
		}
	}
}
