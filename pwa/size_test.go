package pwa

import (
	"testing"

	"github.com/stretchr/testify/assert"
)

// The app shell a phone downloads on first load stays within 150 KB
// compressed (gzip, as served): the service worker's install list and the
// worker itself. The lazy files (the coach's screens, uPlot, the 512 px
// icons) are fetched when a screen asks for them and counted apart. The whole first load on
// the wire is measured in a real browser (server: TestE2EFirstLoad...).
func TestShellSizeBudget(t *testing.T) {
	b := load()
	var shell, charts, raw int
	lazy := map[string]bool{}
	for _, p := range Lazy() {
		lazy[p] = true
	}
	for _, p := range append(Files(), Lazy()...) {
		a := b.assets[p]
		n := len(a.body)
		if a.gz != nil {
			n = len(a.gz)
		}
		raw += len(a.body)
		if lazy[p] {
			charts += n
			continue
		}
		shell += n
	}
	sw := len(b.sw.body)
	if b.sw.gz != nil {
		sw = len(b.sw.gz)
	}
	shell += sw
	t.Logf("shell %.1f KB gzip (incl. sw.js), lazy files %.1f KB gzip, all precached files %.1f KB raw", float64(shell)/1024, float64(charts)/1024, float64(raw)/1024)
	assert.LessOrEqual(t, shell, 150*1024)
}
