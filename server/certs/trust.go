package certs

// Platform is one family of devices and the steps that make it trust the
// camp authority, in the words the bootstrap page shows.
type Platform struct {
	ID    string   // "android", "ios"
	Name  string   // shown as the heading
	Steps []string // in order
	Notes []string // what will look alarming but is expected
}

// TrustSteps are the steps for each platform (ENGINEERING.md §1.5, §1.9).
// caURL is where the bootstrap page serves the authority, fingerprint
// its Fingerprint(); appURL is the HTTPS address to open afterwards.
func TrustSteps(caURL, fingerprint, appURL string) []Platform {
	return []Platform{
		{
			ID:   "android",
			Name: "Android phone or tablet (Chrome)",
			Steps: []string{
				"Join the camp Wi-Fi. If Android says the network has no internet, choose \"Stay connected\" (or turn mobile data off for the camp).",
				"Open " + caURL + " in Chrome and download the certificate.",
				"Open Settings → Security (or Security & privacy) → More security settings → Encryption & credentials → Install a certificate → CA certificate. The names vary a little by make.",
				"Choose \"Install anyway\", then pick the downloaded file. Android asks for a screen lock if the phone has none.",
				"Check that the fingerprint shown under the certificate's details matches the one on the coach's screen: " + fingerprint + ".",
				"Open " + appURL + " in Chrome.",
			},
			Notes: []string{
				"Android then shows \"Network may be monitored\". That is expected for a camp certificate: it only lets this phone trust the hub laptop.",
			},
		},
		{
			ID:   "ios",
			Name: "iPhone or iPad (Safari)",
			Steps: []string{
				"Join the camp Wi-Fi.",
				"Open " + caURL + " in Safari (not another browser) and tap Allow to download the profile.",
				"Open Settings → Profile Downloaded (or General → VPN & Device Management), tap the camp profile and Install. \"Not Verified\" is normal for it.",
				"Then Settings → General → About → Certificate Trust Settings: turn on full trust for the camp authority. Without this last switch the app will not open securely.",
				"Check that the fingerprint in the profile's details matches the one on the coach's screen: " + fingerprint + ".",
				"Open " + appURL + " in Safari, then Share → Add to Home Screen.",
			},
			Notes: []string{
				"The profile only lets this device trust the hub laptop; remove it after camp under General → VPN & Device Management.",
			},
		},
	}
}
