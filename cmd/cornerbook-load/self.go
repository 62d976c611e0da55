package main

import (
	"errors"
	"fmt"
	"io"
	"log"
	"os"
	"path/filepath"
	"time"

	"cornerbook/server"
	"cornerbook/server/auth"
	"cornerbook/server/certs"
	"cornerbook/storage"
)

// selfHub is a hub started in-process on 127.0.0.1 for --self runs and
// tests: the real store, pairing and (with TLS) the camp certificate.
type selfHub struct {
	Dir    string
	Store  *storage.DB
	Server *server.Server
	Certs  *certs.Bundle
	URL    string
	tmp    bool
}

// startSelf opens a hub on dir ("" means a fresh temporary folder) and
// listens on 127.0.0.1 on a free port.
func startSelf(dir string, withTLS bool, logw io.Writer) (*selfHub, error) {
	h := &selfHub{Dir: dir}
	if dir == "" {
		d, err := os.MkdirTemp("", "cornerbook-load-")
		if err != nil {
			return nil, err
		}
		h.Dir, h.tmp = d, true
	}
	if logw == nil {
		logw = io.Discard
	}
	db, err := server.OpenStore(filepath.Join(h.Dir, "cornerbook.db"), time.Now)
	if err != nil {
		h.Close()
		return nil, err
	}
	h.Store = db
	accounts, err := auth.Open(db.Bolt(), auth.Options{})
	if err != nil {
		h.Close()
		return nil, err
	}
	if withTLS {
		if h.Certs, err = certs.Ensure(filepath.Join(h.Dir, "tls"), certs.Names{Host: "load"}, time.Now()); err != nil {
			h.Close()
			return nil, err
		}
	}
	srv, err := server.New(server.Config{Store: db, Auth: accounts, Certs: h.Certs, Log: log.New(logw, "hub: ", log.LstdFlags)})
	if err != nil {
		h.Close()
		return nil, err
	}
	if err := srv.Open("127.0.0.1:0"); err != nil {
		h.Close()
		return nil, err
	}
	h.Server, h.URL = srv, srv.URL()
	return h, nil
}

// CAPEM is the authority a client must trust ("" for plain HTTP).
func (h *selfHub) CAPEM() []byte {
	if h.Certs == nil {
		return nil
	}
	return h.Certs.CAPEM()
}

// Close stops the hub, checks the store's invariants, closes it and
// removes a temporary folder.
func (h *selfHub) Close() error {
	var errs []error
	if h.Server != nil {
		errs = append(errs, h.Server.Close())
	}
	if h.Store != nil {
		if err := h.Store.Check(); err != nil {
			errs = append(errs, fmt.Errorf("store check: %w", err))
		}
		errs = append(errs, h.Store.Close())
	}
	if h.tmp {
		errs = append(errs, os.RemoveAll(h.Dir))
	}
	return errors.Join(errs...)
}
