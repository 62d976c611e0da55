package storage_test

import (
	"bufio"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"cornerbook/storage"
	"cornerbook/storage/storagetest"
	devsync "cornerbook/sync"
)

// crashWriterEnv switches the test binary into the writer subprocess of
// TestCrashKeepsAcknowledgedPushes.
const crashWriterEnv = "CORNERBOOK_CRASH_WRITER"

func init() {
	// The writer runs before any test: it never returns, it is killed.
	if path := os.Getenv(crashWriterEnv); path != "" {
		crashWriter(path)
	}
}

// crashWriter opens the store and pushes from several goroutines, one per
// device, forever. After each Push returns it prints
// "ack device n id ackedThrough" for every mutation the push carried.
// Each device resumes from the counter the store holds, so earlier runs'
// acknowledgements stay valid.
func crashWriter(path string) {
	db, err := storage.Open(path, storage.Options{Timeout: 5 * time.Second})
	if err != nil {
		fmt.Println("open error:", err)
		os.Exit(2)
	}
	run, _ := strconv.ParseUint(os.Getenv("CORNERBOOK_CRASH_RUN"), 10, 64)
	var out sync.Mutex
	w := bufio.NewWriter(os.Stdout)
	fmt.Fprintln(w, "ready")
	w.Flush()
	for d := 0; d < 4; d++ {
		go func() {
			dev := fmt.Sprintf("dev-%d", d)
			st, _ := db.Device(dev)
			n := st.LastN + 1
			g := storagetest.NewGen(run*100+uint64(d), dev)
			athlete := g.ID()
			var mine []devsync.Record
			for day := 0; ; day++ {
				batch := make([]devsync.Record, 0, 8)
				var fresh []string // ids this batch creates
				for range 1 + day%8 {
					if len(mine) > 0 && day%3 == 0 {
						// Edits of this run's records exercise the index and feed.
						batch = append(batch, g.Edit(mine[len(mine)-1]))
						mine = mine[:len(mine)-1]
						continue
					}
					r := g.Checkin(athlete, storagetest.Day(day%300))
					mine = append(mine, r)
					batch = append(batch, r)
					fresh = append(fresh, r.ID)
				}
				muts := storagetest.Mutations(n, batch...)
				out.Lock()
				fmt.Fprintf(w, "try %s %d %d %s\n", dev, muts[0].N, muts[len(muts)-1].N, strings.Join(append([]string{"-"}, fresh...), ","))
				w.Flush()
				out.Unlock()
				res, err := db.Push(devsync.PushRequest{Device: dev, Mutations: muts}, nil)
				out.Lock()
				if err != nil {
					fmt.Fprintln(w, "push error:", err)
					w.Flush()
					os.Exit(3)
				}
				for _, m := range muts {
					fmt.Fprintf(w, "ack %s %d %s %d\n", dev, m.N, m.Record.ID, res.AckedThrough)
				}
				w.Flush()
				out.Unlock()
				n += uint64(len(muts))
			}
		}()
	}
	select {}
}

type ack struct {
	device string
	n      uint64
}

// TestCrashKeepsAcknowledgedPushes kills a writer process with SIGKILL at
// random moments, over and over, and checks after each kill that the file
// passes Check and holds every acknowledged mutation's record exactly
// once, with the device counters at or above every acknowledged n (bbolt
// README: a nil return from Update means the transaction is on disk;
// ENGINEERING.md §9.2).
func TestCrashKeepsAcknowledgedPushes(t *testing.T) {
	kills := 20
	if testing.Short() {
		kills = 6
	}
	exe, err := os.Executable()
	if err != nil {
		t.Fatal(err)
	}
	path := filepath.Join(t.TempDir(), "crash.db")
	rnd := rand.New(rand.NewPCG(7, 7))
	acked := map[string]ack{} // record id → its latest acknowledgement
	lastN := map[string]uint64{}
	inFlight := 0
	deadline := time.Now().Add(40 * time.Second) // only a badly overloaded machine hits this
	for run := 0; run < kills && time.Now().Before(deadline); run++ {
		runAcks, open := killWriterOnce(t, exe, path, run, rnd, func(device string, n uint64, id string) {
			acked[id] = ack{device: device, n: n}
			lastN[device] = max(lastN[device], n)
		})
		stored := verifyAfterCrash(t, path, run, acked, lastN, open)
		t.Logf("kill %d: %d acknowledged this run, %d records acknowledged in all, %d stored; %d pushes in flight at the kill", run, runAcks, len(acked), stored, len(open))
		inFlight += len(open)
	}
	if len(acked) == 0 || inFlight == 0 {
		t.Fatalf("the writers acknowledged %d records and were killed with %d pushes in flight: the test saw too little", len(acked), inFlight)
	}
}

// killWriterOnce starts the writer, kills it after a random delay or right
// after a random number of acknowledgements (while other writers are
// mid-transaction), and reports every acknowledgement it printed and the
// pushes it started but never acknowledged.
func killWriterOnce(t *testing.T, exe, path string, run int, rnd *rand.Rand, onAck func(device string, n uint64, id string)) (int, []try) {
	t.Helper()
	cmd := exec.Command(exe, "-test.run=^$")
	cmd.Env = append(os.Environ(), crashWriterEnv+"="+path, fmt.Sprintf("CORNERBOOK_CRASH_RUN=%d", run+1))
	stdout, err := cmd.StdoutPipe()
	if err != nil {
		t.Fatal(err)
	}
	cmd.Stderr = os.Stderr
	if err := cmd.Start(); err != nil {
		t.Fatal(err)
	}
	defer cmd.Wait()
	lines := make(chan string, 1024)
	go func() {
		sc := bufio.NewScanner(stdout)
		for sc.Scan() {
			lines <- sc.Text()
		}
		close(lines)
	}()
	started := time.Now()
	if l := <-lines; l != "ready" {
		cmd.Process.Kill()
		t.Fatalf("writer run %d: %q", run, l)
	}
	acks := 0
	var tries []try
	acked := map[string]bool{} // "device n"
	record := func(l string) {
		f := strings.Fields(l)
		if len(f) == 5 && f[0] == "try" {
			first, _ := strconv.ParseUint(f[2], 10, 64)
			last, _ := strconv.ParseUint(f[3], 10, 64)
			tries = append(tries, try{device: f[1], first: first, last: last, ids: strings.Split(f[4], ",")[1:]})
			return
		}
		if len(f) != 5 || f[0] != "ack" {
			cmd.Process.Kill()
			t.Fatalf("writer run %d said %q", run, l)
		}
		n, _ := strconv.ParseUint(f[2], 10, 64)
		onAck(f[1], n, f[3])
		acked[f[1]+" "+f[2]] = true
		acks++
	}
	if run < 3 {
		t.Logf("writer run %d ready after %v", run, time.Since(started))
	}
	if run%2 == 0 {
		time.Sleep(time.Duration(5+rnd.IntN(150)) * time.Millisecond)
	} else {
		safety := time.After(2 * time.Second)
	wait:
		for want := 1 + rnd.IntN(16); acks < want; {
			select {
			case l, ok := <-lines:
				if !ok {
					t.Fatalf("writer run %d ended by itself", run)
				}
				record(l)
			case <-safety:
				break wait
			}
		}
	}
	if err := cmd.Process.Signal(syscall.SIGKILL); err != nil {
		t.Fatal(err)
	}
	for l := range lines {
		record(l)
	}
	var open []try
	for _, tr := range tries {
		if !acked[fmt.Sprintf("%s %d", tr.device, tr.first)] {
			open = append(open, tr)
		}
	}
	return acks, open
}

// try is a push the writer started: counters first..last, creating ids.
type try struct {
	device      string
	first, last uint64
	ids         []string
}

// verifyAfterCrash reopens the killed writer's file and checks it.
func verifyAfterCrash(t *testing.T, path string, run int, acked map[string]ack, lastN map[string]uint64, open []try) int {
	t.Helper()
	db, err := storage.Open(path, storage.Options{Timeout: 5 * time.Second})
	if err != nil {
		t.Fatalf("reopen after kill %d: %v", run, err)
	}
	defer db.Close()
	if err := db.Check(); err != nil {
		t.Fatalf("check after kill %d: %v", run, err)
	}
	for id, a := range acked {
		if _, err := db.Get(id); err != nil {
			t.Fatalf("after kill %d: acknowledged record %s (%s n %d) is missing: %v", run, id, a.device, a.n, err)
		}
	}
	for dev, n := range lastN {
		st, err := db.Device(dev)
		if err != nil || st.LastN < n {
			t.Fatalf("after kill %d: %s counter %d (err %v) is below acknowledged n %d", run, dev, st.LastN, err, n)
		}
	}
	// A push the writer never acknowledged is on disk whole or not at all.
	for _, tr := range open {
		present := 0
		for _, id := range tr.ids {
			if _, err := db.Get(id); err == nil {
				present++
			}
		}
		st, _ := db.Device(tr.device)
		committed := st.LastN >= tr.last
		if present != 0 && present != len(tr.ids) || committed != (st.LastN >= tr.first) ||
			len(tr.ids) > 0 && committed != (present == len(tr.ids)) {
			t.Fatalf("after kill %d: unacknowledged push %s n %d–%d half applied: %d of %d new records, counter %d",
				run, tr.device, tr.first, tr.last, present, len(tr.ids), st.LastN)
		}
	}
	seen := map[string]bool{}
	err = db.All(true, func(r devsync.Record) error {
		if seen[r.ID] {
			return fmt.Errorf("record %s is stored twice", r.ID)
		}
		seen[r.ID] = true
		return nil
	})
	if err != nil {
		t.Fatalf("after kill %d: %v", run, err)
	}
	if len(seen) < len(acked) {
		t.Fatalf("after kill %d: %d records stored, %d acknowledged", run, len(seen), len(acked))
	}
	return len(seen)
}
