package auth

import (
	"strings"

	qrcode "github.com/skip2/go-qrcode"
)

// QRSize is the most QRPNG's image measures, in pixels.
const QRSize = 320

// QRPNG renders s (the app's address, or a join link) as a PNG QR code
// with medium error correction (15 %: survives a glare spot on a laptop
// screen), quiet zone included. Every module is the same whole number of
// pixels, so the image is at most QRSize square and sharp when scaled up
// with CSS image-rendering: pixelated.
func QRPNG(s string) ([]byte, error) {
	q, err := qrcode.New(s, qrcode.Medium)
	if err != nil {
		return nil, err
	}
	ppm := max(1, QRSize/len(q.Bitmap()))
	return q.PNG(-ppm)
}

// QRTerminal renders s as a QR code for the hub's console, two modules per
// character cell with half blocks. Light modules are drawn, dark ones left
// blank, so it reads correctly on the usual dark terminal background
// (quiet zone included). Low error correction keeps it small.
func QRTerminal(s string) string {
	q, err := qrcode.New(s, qrcode.Low)
	if err != nil {
		return ""
	}
	return renderHalfBlocks(q.Bitmap())
}

// renderHalfBlocks draws a bitmap (true = dark module) two rows per line.
func renderHalfBlocks(bm [][]bool) string {
	var b strings.Builder
	light := func(y, x int) bool { return y >= len(bm) || !bm[y][x] }
	for y := 0; y < len(bm); y += 2 {
		for x := range bm[y] {
			top, bottom := light(y, x), light(y+1, x)
			switch {
			case top && bottom:
				b.WriteString("█")
			case top:
				b.WriteString("▀")
			case bottom:
				b.WriteString("▄")
			default:
				b.WriteByte(' ')
			}
		}
		b.WriteByte('\n')
	}
	return b.String()
}
