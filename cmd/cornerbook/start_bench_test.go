package main

import (
	"bufio"
	"context"
	"net/http"
	"os/exec"
	"path/filepath"
	"regexp"
	"testing"
	"time"
)

// BenchmarkStart measures a real hub process from exec to the first
// answered request: on an empty data folder (target < 200 ms) and with
// --demo on a fresh folder, which first builds the invented camp
// (README promise: serving within 2 s of start).
func BenchmarkStart(b *testing.B) {
	bin := filepath.Join(b.TempDir(), "cornerbook")
	if out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput(); err != nil {
		b.Fatalf("build: %v\n%s", err, out)
	}
	for _, mode := range []string{"empty", "demo"} {
		b.Run(mode, func(b *testing.B) {
			var total time.Duration
			for i := 0; i < b.N; i++ {
				total += startOnce(b, bin, mode == "demo")
			}
			b.ReportMetric(float64(total.Milliseconds())/float64(b.N), "ms-to-first-answer")
		})
	}
}

var laptopURL = regexp.MustCompile(`http://localhost:(\d+)/`)

func startOnce(b *testing.B, bin string, demo bool) time.Duration {
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	args := []string{"--data", b.TempDir(), "--addr", "127.0.0.1:0", "--http-addr", "127.0.0.1:0"}
	if demo {
		args = append(args, "--demo")
	}
	cmd := exec.CommandContext(ctx, bin, args...)
	stdout, _ := cmd.StdoutPipe()
	t0 := time.Now()
	if err := cmd.Start(); err != nil {
		b.Fatal(err)
	}
	defer func() { cmd.Process.Kill(); cmd.Wait() }()
	sc := bufio.NewScanner(stdout)
	port := ""
	for sc.Scan() {
		if m := laptopURL.FindStringSubmatch(sc.Text()); m != nil {
			port = m[1]
			break
		}
	}
	if port == "" {
		b.Fatal("the hub printed no address")
	}
	go func() {
		for sc.Scan() {
		}
	}()
	for {
		resp, err := http.Get("http://127.0.0.1:" + port + "/api/status")
		if err == nil {
			resp.Body.Close()
			if resp.StatusCode == 200 {
				return time.Since(t0)
			}
		}
		if ctx.Err() != nil {
			b.Fatal("the hub never answered")
		}
		time.Sleep(2 * time.Millisecond)
	}
}
