package pwatest

import (
	"context"
	"fmt"
	"strings"
	"time"

	"github.com/chromedp/cdproto/cdp"
	"github.com/chromedp/cdproto/serviceworker"
	"github.com/chromedp/chromedp"
)

// DispatchBackgroundSync fires the service worker's Background Sync event
// (tag "outbox") for the app at origin (e.g. "http://127.0.0.1:8080"), as
// Chromium does when connectivity returns. It works with no page of the app
// open: the tab may have navigated elsewhere.
func DispatchBackgroundSync(ctx context.Context, origin string) error {
	origin = strings.TrimSuffix(origin, "/")
	regs := make(chan serviceworker.Registration, 16)
	lctx, stop := context.WithCancel(ctx)
	defer stop()
	if err := chromedp.Listen(lctx, func(ev any) {
		if e, ok := ev.(*serviceworker.EventWorkerRegistrationUpdated); ok {
			for _, r := range e.Registrations {
				if r != nil {
					select {
					case regs <- *r:
					default:
					}
				}
			}
		}
	}); err != nil {
		return err
	}
	if _, err := chromedp.Call(ctx, serviceworker.Enable, cdp.Empty{}); err != nil {
		return fmt.Errorf("enable service worker domain: %w", err)
	}
	defer chromedp.Call(ctx, serviceworker.Disable, cdp.Empty{})
	timeout := time.After(10 * time.Second)
	for {
		select {
		case r := <-regs:
			if r.IsDeleted || strings.TrimSuffix(r.ScopeURL, "/") != origin {
				continue
			}
			_, err := chromedp.Call(ctx, serviceworker.DispatchSyncEvent, serviceworker.DispatchSyncEventParams{
				Origin: origin, RegistrationID: r.RegistrationID, Tag: "outbox", LastChance: false,
			})
			if err != nil {
				return fmt.Errorf("dispatch sync event: %w", err)
			}
			return nil
		case <-timeout:
			return fmt.Errorf("no service worker registration for %s", origin)
		case <-ctx.Done():
			return ctx.Err()
		}
	}
}
