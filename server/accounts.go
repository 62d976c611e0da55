package server

import (
	"fmt"
	"net"
	"net/http"
	"strings"
	"time"

	"github.com/gorilla/mux"

	"cornerbook/server/auth"
	devsync "cornerbook/sync"
)

// Me tells a screen who it is talking as and what the hub needs.
type Me struct {
	Role          string `json:"role"`
	Device        string `json:"device,omitempty"`
	DeviceName    string `json:"deviceName,omitempty"`
	Athlete       string `json:"athlete,omitempty"`
	Laptop        bool   `json:"laptop"`        // the coach's own screen on the hub laptop
	Paired        bool   `json:"paired"`        // a device token was accepted
	PassphraseSet bool   `json:"passphraseSet"` // false: the laptop must set one first
	Fingerprint   string `json:"fingerprint,omitempty"`
	AppURL        string `json:"appURL,omitempty"`
	JoinURL       string `json:"joinURL,omitempty"` // the join page as phones reach it, port included
	Secure        bool   `json:"secure"`            // the hub serves HTTPS to the LAN
}

func (s *Server) routeAccounts(api *mux.Router) {
	api.HandleFunc("/me", s.serve(s.handleMe)).Methods(http.MethodGet)
	api.HandleFunc("/setup", s.serve(s.handleSetup)).Methods(http.MethodPost)
	api.HandleFunc("/login", s.serve(s.handleLogin)).Methods(http.MethodPost)
	api.HandleFunc("/join", s.serve(s.handleJoin)).Methods(http.MethodPost)
	api.HandleFunc("/joins", s.serve(s.handleNewJoin)).Methods(http.MethodPost)
	api.HandleFunc("/joins/qr.png", s.serve(s.handleJoinQR)).Methods(http.MethodGet)
	api.HandleFunc("/devices", s.serve(s.handleDevices)).Methods(http.MethodGet)
	api.HandleFunc("/devices/{id}/revoke", s.serve(s.handleRevoke)).Methods(http.MethodPost)
	api.HandleFunc("/backup", s.serve(s.handleBackup)).Methods(http.MethodGet)
}

func (s *Server) needAuth() error {
	if s.cfg.Auth == nil {
		return userError(CodeNotFound, "", "this hub runs without pairing")
	}
	return nil
}

func (s *Server) handleMe(w http.ResponseWriter, r *http.Request) error {
	me := Me{Laptop: s.cfg.Auth == nil || auth.FromLaptop(r), Secure: s.cfg.Certs != nil, AppURL: s.cfg.AppURL, JoinURL: s.cfg.JoinURL}
	if s.cfg.Certs != nil {
		me.Fingerprint = s.cfg.Certs.Fingerprint()
	}
	if s.cfg.Auth != nil {
		me.PassphraseSet = s.cfg.Auth.HasPassphrase()
	}
	if me.Laptop {
		me.Role = string(auth.RoleCoach)
		writeJSON(w, http.StatusOK, me)
		return nil
	}
	if tok := auth.BearerToken(r); tok != "" {
		dev, err := s.cfg.Auth.Authenticate(tok, s.now())
		if err != nil {
			return authError(err)
		}
		me.Role, me.Device, me.DeviceName, me.Athlete, me.Paired = string(dev.Role), dev.ID, dev.Name, dev.Athlete, true
	}
	writeJSON(w, http.StatusOK, me)
	return nil
}

type passphraseReq struct {
	Passphrase string `json:"passphrase"`
	Code       string `json:"code,omitempty"` // the setup code printed in the hub's console
	Name       string `json:"name,omitempty"` // device name for a login
}

func (s *Server) handleSetup(w http.ResponseWriter, r *http.Request) error {
	if err := s.needAuth(); err != nil {
		return err
	}
	var req passphraseReq
	if err := decodeStrict(w, r, 4<<10, &req); err != nil {
		return err
	}
	var err error
	if auth.FromLaptop(r) && req.Code == "" {
		err = s.cfg.Auth.SetPassphrase(req.Passphrase)
	} else {
		err = s.cfg.Auth.SetupWithCodeFrom(req.Code, req.Passphrase, attemptSource(r))
	}
	if err != nil {
		return authError(err)
	}
	s.logf("the coach's passphrase was set")
	writeJSON(w, http.StatusOK, map[string]bool{"passphraseSet": true})
	return nil
}

// Paired is the answer to a login or a join: the token is shown to the
// device once and kept only as a hash on the hub.
type Paired struct {
	Token   string      `json:"token"`
	Device  auth.Device `json:"device"`
	Message string      `json:"message"`
}

func (s *Server) handleLogin(w http.ResponseWriter, r *http.Request) error {
	if err := s.needAuth(); err != nil {
		return err
	}
	var req passphraseReq
	if err := decodeStrict(w, r, 4<<10, &req); err != nil {
		return err
	}
	dev, tok, err := s.cfg.Auth.LoginFrom(req.Passphrase, attemptSource(r))
	if err != nil {
		return authError(err)
	}
	if req.Name != "" {
		if err := s.cfg.Auth.Rename(dev.ID, req.Name); err == nil {
			dev.Name = req.Name
		}
	}
	s.logf("coach signed in on a new device %s", dev.ID)
	writeJSON(w, http.StatusOK, Paired{Token: tok, Device: dev, Message: "Signed in as the coach on this device."})
	return nil
}

// attemptSource is whom a passphrase attempt counts against: the laptop's
// own screen (never limited), else the peer's address.
func attemptSource(r *http.Request) string {
	if auth.FromLaptop(r) {
		return auth.SourceLaptop
	}
	host, _, err := net.SplitHostPort(r.RemoteAddr)
	if err != nil {
		return r.RemoteAddr
	}
	return host
}

type joinReq struct {
	Code string `json:"code"`
	Name string `json:"name"`
}

func (s *Server) handleJoin(w http.ResponseWriter, r *http.Request) error {
	if err := s.needAuth(); err != nil {
		return err
	}
	var req joinReq
	if err := decodeStrict(w, r, 4<<10, &req); err != nil {
		return err
	}
	from := r.RemoteAddr
	if i := strings.LastIndex(from, ":"); i > 0 {
		from = from[:i]
	}
	dev, tok, err := s.cfg.Auth.Redeem(req.Code, req.Name, from, s.now())
	if err != nil {
		return authError(err)
	}
	s.logf("device %s (%s, %s) joined the camp", dev.ID, dev.Name, dev.Role)
	writeJSON(w, http.StatusOK, Paired{Token: tok, Device: dev, Message: "This device has joined the camp."})
	return nil
}

type newJoinReq struct {
	Role    string `json:"role"`
	Athlete string `json:"athlete,omitempty"`
}

// JoinCode is a fresh join code for the coach's screen.
type JoinCode struct {
	Code    string    `json:"code"` // as typed: e.g. "K7QM-3XPA"
	Role    string    `json:"role"`
	Athlete string    `json:"athlete,omitempty"`
	Expires time.Time `json:"expires"`
	URL     string    `json:"url"` // the app address with the code, for the QR
}

func (s *Server) handleNewJoin(w http.ResponseWriter, r *http.Request) error {
	if err := s.needAuth(); err != nil {
		return err
	}
	who, err := s.authorize(r, accessCoach)
	if err != nil {
		return err
	}
	var req newJoinReq
	if err := decodeStrict(w, r, 4<<10, &req); err != nil {
		return err
	}
	if req.Athlete != "" {
		a, err := s.store.Get(req.Athlete)
		if err != nil || a.Deleted || a.Kind != "athlete" {
			return userError(devsync.CodeBadRequest, "athlete", "no athlete with this id in the camp")
		}
	}
	by := "the coach's laptop"
	if who.DeviceID != "" {
		by = who.DeviceID
	}
	j, err := s.cfg.Auth.NewJoin(auth.Role(req.Role), req.Athlete, by, s.now())
	if err != nil {
		return authError(err)
	}
	code := auth.FormatCode(j.Code)
	writeJSON(w, http.StatusOK, JoinCode{Code: code, Role: string(j.Role), Athlete: j.Athlete, Expires: j.Expires, URL: s.joinURL(code)})
	return nil
}

func (s *Server) joinURL(code string) string {
	base := s.cfg.AppURL
	if base == "" {
		base = s.URL()
	}
	return strings.TrimSuffix(base, "/") + "/join?code=" + code
}

// handleJoinQR draws the QR of a join link (coach only: the code is a key).
func (s *Server) handleJoinQR(w http.ResponseWriter, r *http.Request) error {
	if _, err := s.authorize(r, accessCoach); err != nil {
		return err
	}
	code := r.URL.Query().Get("code")
	if code == "" || len(code) > 32 {
		return userError(devsync.CodeBadRequest, "code", "is required")
	}
	png, err := auth.QRPNG(s.joinURL(code))
	if err != nil {
		return err
	}
	w.Header().Set("Content-Type", "image/png")
	w.Header().Set("Cache-Control", "no-store")
	_, err = w.Write(png)
	return err
}

func (s *Server) handleDevices(w http.ResponseWriter, r *http.Request) error {
	if err := s.needAuth(); err != nil {
		return err
	}
	if _, err := s.authorize(r, accessCoach); err != nil {
		return err
	}
	devs, err := s.cfg.Auth.Devices()
	if err != nil {
		return err
	}
	if devs == nil {
		devs = []auth.Device{}
	}
	writeJSON(w, http.StatusOK, map[string]any{"devices": devs})
	return nil
}

func (s *Server) handleRevoke(w http.ResponseWriter, r *http.Request) error {
	if err := s.needAuth(); err != nil {
		return err
	}
	if _, err := s.authorize(r, accessCoach); err != nil {
		return err
	}
	id := mux.Vars(r)["id"]
	if err := s.cfg.Auth.Revoke(id); err != nil {
		return authError(err)
	}
	s.hub.CloseAll(false) // a revoked device's open websocket goes too; the others reconnect
	s.logf("device %s was revoked", id)
	writeJSON(w, http.StatusOK, map[string]string{"revoked": id})
	return nil
}

// handleBackup streams a consistent hot copy of the database.
func (s *Server) handleBackup(w http.ResponseWriter, r *http.Request) error {
	if _, err := s.authorize(r, accessCoach); err != nil {
		return err
	}
	name := fmt.Sprintf("cornerbook-backup-%s.db", s.now().Format("2006-01-02-1504"))
	w.Header().Set("Content-Type", "application/octet-stream")
	w.Header().Set("Content-Disposition", `attachment; filename="`+name+`"`)
	w.Header().Set("Cache-Control", "no-store")
	_, err := s.store.WriteTo(w)
	if err != nil {
		s.logf("backup download: %v", err)
	}
	return nil
}
