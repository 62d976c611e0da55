package pwa

import "testing"

// BenchmarkBuild: the app bundle the hub builds once at start (the
// vocabulary generated, scripts minified, every file compressed), against
// the same without the minifying, in the same run.
//
//	go test ./pwa -run '^$' -bench Build -benchtime 10x
func BenchmarkBuild(b *testing.B) {
	fsys, err := withGenerated(app)
	if err != nil {
		b.Fatal(err)
	}
	for _, m := range []struct {
		name string
		on   bool
	}{{"minified", true}, {"as-written", false}} {
		b.Run(m.name, func(b *testing.B) {
			keep := minifyScripts
			minifyScripts = m.on
			defer func() { minifyScripts = keep }()
			for i := 0; i < b.N; i++ {
				if _, err := build(fsys, swTemplate); err != nil {
					b.Fatal(err)
				}
			}
		})
	}
}
