// Command mkicons draws the app's icons: a calm teal tile with a cream
// corner bracket and a warm dot. Run from the repository root:
//
//	go run ./pwa/mkicons
package main

import (
	"fmt"
	"image"
	"image/color"
	"image/png"
	"os"
	"path/filepath"
)

var (
	tile  = color.RGBA{0x1f, 0x4b, 0x4f, 0xff} // deep teal
	cream = color.RGBA{0xf3, 0xec, 0xdc, 0xff}
	warm  = color.RGBA{0xe0, 0x8a, 0x5b, 0xff}
)

// Draw renders the mark at size×size. A maskable icon fills the whole
// square and keeps the mark inside the central 80 % safe zone; the plain
// icon is a rounded tile.
func Draw(size int, maskable bool) *image.RGBA {
	const ss = 4 // supersampling per axis
	img := image.NewRGBA(image.Rect(0, 0, size, size))
	for y := 0; y < size; y++ {
		for x := 0; x < size; x++ {
			var r, g, b, a float64
			for sy := 0; sy < ss; sy++ {
				for sx := 0; sx < ss; sx++ {
					u := (float64(x) + (float64(sx)+0.5)/ss) / float64(size)
					v := (float64(y) + (float64(sy)+0.5)/ss) / float64(size)
					c, ok := sample(u, v, maskable)
					if !ok {
						continue
					}
					r += float64(c.R)
					g += float64(c.G)
					b += float64(c.B)
					a += 255
				}
			}
			n := float64(ss * ss)
			if a == 0 {
				continue
			}
			// premultiplied: colour sums already weighted by coverage
			img.SetRGBA(x, y, color.RGBA{uint8(r / n), uint8(g / n), uint8(b / n), uint8(a / n)})
		}
	}
	return img
}

// sample returns the colour at (u, v) in [0,1]², and false outside the tile.
func sample(u, v float64, maskable bool) (color.RGBA, bool) {
	scale, off := 1.0, 0.0
	if maskable {
		scale, off = 0.8, 0.1 // mark inside the safe zone
	} else if !inRounded(u, v, 0.22) {
		return color.RGBA{}, false
	}
	// mark coordinates
	mu, mv := (u-off)/scale, (v-off)/scale
	// corner bracket: vertical and horizontal bars meeting bottom-left
	const x0, y1, w, long = 0.24, 0.76, 0.13, 0.52
	if mu >= x0 && mu <= x0+w && mv >= y1-long && mv <= y1 {
		return cream, true
	}
	if mv >= y1-w && mv <= y1 && mu >= x0 && mu <= x0+long {
		return cream, true
	}
	// warm dot in the open quarter
	du, dv := mu-0.64, mv-0.36
	if du*du+dv*dv <= 0.11*0.11 {
		return warm, true
	}
	return tile, true
}

func inRounded(u, v, r float64) bool {
	cu := min(max(u, r), 1-r)
	cv := min(max(v, r), 1-r)
	du, dv := u-cu, v-cv
	return du*du+dv*dv <= r*r
}

func main() {
	dir := filepath.Join("pwa", "icons")
	if len(os.Args) > 1 {
		dir = os.Args[1]
	}
	for _, ic := range []struct {
		name     string
		size     int
		maskable bool
	}{
		{"icon-192.png", 192, false},
		{"icon-512.png", 512, false},
		{"maskable-512.png", 512, true},
		{"apple-touch-180.png", 180, true},
	} {
		f, err := os.Create(filepath.Join(dir, ic.name))
		if err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		enc := png.Encoder{CompressionLevel: png.BestCompression}
		if err := enc.Encode(f, Draw(ic.size, ic.maskable)); err != nil {
			fmt.Fprintln(os.Stderr, err)
			os.Exit(1)
		}
		f.Close()
	}
}
