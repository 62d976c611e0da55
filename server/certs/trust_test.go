package certs

import (
	"strings"
	"testing"

	"github.com/stretchr/testify/assert"
)

func TestTrustSteps(t *testing.T) {
	const ca, fp, app = "http://192.168.50.10:8080/ca.crt", "AB:CD", "https://192.168.50.10:8443/"
	ps := TrustSteps(ca, fp, app)
	byID := map[string]Platform{}
	for _, p := range ps {
		byID[p.ID] = p
		all := strings.Join(p.Steps, "\n")
		assert.Contains(t, all, ca, p.ID)
		assert.Contains(t, all, fp, p.ID+": the fingerprint is there to compare")
		assert.Contains(t, p.Steps[len(p.Steps)-1], app, p.ID+": the app's address comes last")
	}
	// The step people miss on iOS (ENGINEERING.md §1.5): full trust.
	assert.Contains(t, strings.Join(byID["ios"].Steps, "\n"), "Certificate Trust Settings")
	// Android 11+ installs CA certificates only from Settings.
	assert.Contains(t, strings.Join(byID["android"].Steps, "\n"), "Install a certificate → CA certificate")
	assert.Contains(t, strings.Join(byID["android"].Notes, "\n"), "Network may be monitored")
}
