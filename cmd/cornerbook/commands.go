package main

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"net/http"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"time"

	"cornerbook/server"
	"cornerbook/server/dataio"
	"cornerbook/server/flags"
	"cornerbook/server/records"
	"cornerbook/storage"
)

func dataFlag(fs *flag.FlagSet) *string {
	return fs.String("data", DefaultDataDir, "data folder")
}

func runImport(args []string, stdin io.Reader, stdout, stderr io.Writer) error {
	fs := flag.NewFlagSet("import", flag.ContinueOnError)
	fs.SetOutput(stderr)
	data := dataFlag(fs)
	if err := parseInterleaved(fs, args); err != nil {
		return errUsage
	}
	if fs.NArg() != 1 {
		fmt.Fprintln(stderr, "import takes one FILE of JSON Lines (- reads standard input)")
		return errUsage
	}
	in := stdin
	if name := fs.Arg(0); name != "-" {
		f, err := os.Open(name)
		if err != nil {
			return err
		}
		defer f.Close()
		in = f
	}
	db, err := openData(*data, time.Now)
	if err != nil {
		return err
	}
	defer db.Close()
	last := time.Time{}
	res, err := dataio.ImportJSONL(db, in, records.PrepareAt(time.Now()), func(done, total int) {
		if time.Since(last) > 200*time.Millisecond || done == total {
			fmt.Fprintf(stderr, "\rimporting: %d of %d records (%d%%)", done, total, done*100/max(total, 1))
			last = time.Now()
		}
	})
	if res.Lines > 0 {
		fmt.Fprintln(stderr)
	}
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "imported %d records: %d stored, %d already up to date\n", res.Lines, res.Applied, res.Unchanged)
	return nil
}

func runExport(args []string, stdout io.Writer) error {
	fs := flag.NewFlagSet("export", flag.ContinueOnError)
	data := dataFlag(fs)
	kind := fs.String("kind", "", "only this record kind ("+strings.Join(records.Kinds, ", ")+")")
	asCSV := fs.Bool("csv", false, "CSV of one kind (RFC 4180, units in the header) instead of JSON Lines")
	if err := parseInterleaved(fs, args); err != nil || fs.NArg() != 0 {
		return errUsage
	}
	if *kind != "" && !slices.Contains(records.Kinds, *kind) {
		return fmt.Errorf("--kind %q is not a record kind (one of %s)", *kind, strings.Join(records.Kinds, ", "))
	}
	if *asCSV && *kind == "" {
		return errors.New("--csv needs --kind K: CSV holds one kind per file")
	}
	db, err := openData(*data, time.Now)
	if err != nil {
		return err
	}
	defer db.Close()
	if *asCSV {
		return dataio.ExportCSV(db, stdout, *kind)
	}
	return dataio.ExportJSONL(db, stdout, *kind)
}

func runFlags(args []string, stdout io.Writer) error {
	fs := flag.NewFlagSet("flags", flag.ContinueOnError)
	data := dataFlag(fs)
	day := fs.String("day", "", "the day, YYYY-MM-DD (required)")
	athlete := fs.String("athlete", "", "only this athlete id")
	asJSON := fs.Bool("json", false, "JSON list instead of one line per flag")
	if err := parseInterleaved(fs, args); err != nil || fs.NArg() != 0 {
		return errUsage
	}
	if _, err := time.Parse("2006-01-02", *day); err != nil {
		return fmt.Errorf("--day must be a calendar day YYYY-MM-DD; got %q", *day)
	}
	srv, done, err := openHub(*data)
	if err != nil {
		return err
	}
	defer done()
	fl, err := srv.Flags(*day, *athlete)
	if err != nil {
		return err
	}
	if *asJSON {
		if fl == nil {
			return writeJSON(stdout, []any{})
		}
		return writeJSON(stdout, fl)
	}
	writeFlagsText(stdout, fl, srv.AthleteNames())
	return nil
}

// levelWords names a flag's standing as the screens do: a stand-down in
// force first, then the levels in a coach's words.
func levelWords(f *flags.Flag) string {
	switch {
	case f.Restriction != nil:
		return "Stand-down"
	case f.Status == flags.StatusForming:
		return "Not enough data yet"
	case f.Level == flags.LevelAlert:
		return "Act today"
	case f.Level == flags.LevelWatch:
		return "Keep an eye on"
	}
	return "Worth knowing"
}

// writeFlagsText writes one day's flags in words: per flag its standing,
// the athlete's name, the title and the reason; a stand-down's rule and
// end; a decision with who recorded it. Ids stay in --json.
func writeFlagsText(w io.Writer, fl []flags.Flag, names map[string]string) {
	if len(fl) == 0 {
		fmt.Fprintln(w, "No flags for this day.")
		return
	}
	for i := range fl {
		f := &fl[i]
		name := names[f.Athlete]
		if name == "" {
			name = "(athlete without a name)"
		}
		fmt.Fprintf(w, "%-19s  %s — %s\n", levelWords(f), name, f.Title)
		fmt.Fprintf(w, "%-19s  %s\n", "", f.Reason)
		if r := f.Restriction; r != nil {
			end := "no earliest end: only a clearance ends it"
			if r.EarliestEnd != "" {
				end = "not before " + r.EarliestEnd
			}
			fmt.Fprintf(w, "%-19s  Since %s. %s; %s; until %s.\n", "", r.StartedDay, r.Rule, end, r.Until)
			if r.RTS != nil {
				fmt.Fprintf(w, "%-19s  %s\n", "", r.RTS.Words)
			}
		}
		if d := f.Decision; d != nil {
			who := ""
			if d.By != "" {
				who = " (" + d.By + ")"
			}
			what := "Decision"
			if d.Scope == flags.ScopeDay {
				what = "Decision for the whole day"
			}
			fmt.Fprintf(w, "%-19s  %s%s: %s\n", "", what, who, d.Note)
		}
	}
}

func runTests(args []string, stdout io.Writer) error {
	return runAthleteReport(args, stdout, "tests", "as of this day, YYYY-MM-DD (default today)",
		func(srv *server.Server, athlete, day string) (any, func(io.Writer), error) {
			rep, err := srv.Tests(athlete, day)
			return rep, func(w io.Writer) { writeTestsText(w, rep) }, err
		})
}

func writeTestsText(w io.Writer, rep server.TestsReport) {
	fmt.Fprintf(w, "%s — tests up to %s\n", rep.Name, rep.Day)
	for _, e := range rep.Tests {
		line := fmt.Sprintf("%s  %-20s %s", e.Day, e.Label, e.Summary)
		if c := e.Change; c != nil {
			line += "; " + server.ChangeWords(e, *c)
		}
		fmt.Fprintln(w, line)
	}
	if len(rep.Tests) == 0 {
		fmt.Fprintln(w, "no tests recorded")
	}
}

func runBackup(args []string, stdout io.Writer) error {
	fs := flag.NewFlagSet("backup", flag.ContinueOnError)
	data := dataFlag(fs)
	if err := parseInterleaved(fs, args); err != nil || fs.NArg() != 1 {
		return errUsage
	}
	db, err := openData(*data, time.Now)
	if errors.Is(err, storage.ErrLocked) {
		return backupFromHub(*data, fs.Arg(0), stdout)
	}
	if err != nil {
		return err
	}
	defer db.Close()
	n, err := storage.BackupFile(db, fs.Arg(0))
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "backup written: %s (%d KiB)\n", fs.Arg(0), n>>10)
	return nil
}

func runRestore(args []string, stdout io.Writer) error {
	fs := flag.NewFlagSet("restore", flag.ContinueOnError)
	data := dataFlag(fs)
	if err := parseInterleaved(fs, args); err != nil || fs.NArg() != 1 {
		return errUsage
	}
	if err := os.MkdirAll(*data, 0o700); err != nil {
		return err
	}
	res, err := storage.Restore(fs.Arg(0), dataPath(*data))
	if err != nil {
		return err
	}
	fmt.Fprintf(stdout, "Restored the camp's entries from %s into %s: %d records.\n", fs.Arg(0), *data, res.Records)
	if res.KeptAccess {
		fmt.Fprintln(stdout, "Kept as they were: the paired devices, the devices removed since, and the coach's passphrase.")
	} else {
		fmt.Fprintln(stdout, "The paired devices and the coach's passphrase come from the backup (there was no camp here before).")
	}
	fmt.Fprintln(stdout, "Each device sends again the entries it wrote and then takes the restored camp (new epoch "+res.Epoch+").")
	if res.Aside != "" {
		fmt.Fprintf(stdout, "The replaced data is kept at %s.\n", res.Aside)
	}
	return nil
}

// backupFromHub asks the hub that holds the folder, over loopback, for a
// hot copy (the coach's backup download), checks it whole and puts it in
// place; a copy that fails the check is not kept.
func backupFromHub(dir, path string, stdout io.Writer) error {
	raw, err := os.ReadFile(filepath.Join(dir, hubAddressFile))
	if err != nil {
		return fmt.Errorf("%s is in use by a running hub, which could not be asked for a copy (%v); use Camp set-up's backup on the laptop's screen, or stop the hub first", dir, err)
	}
	base := strings.TrimSpace(string(raw))
	client := &http.Client{Timeout: 10 * time.Minute}
	resp, err := client.Get(base + "api/backup")
	if err != nil {
		return fmt.Errorf("%s is in use by a running hub, which did not answer at %s: %v", dir, base, err)
	}
	defer resp.Body.Close()
	if resp.StatusCode != http.StatusOK {
		b, _ := io.ReadAll(io.LimitReader(resp.Body, 4<<10))
		return fmt.Errorf("the running hub refused the copy (%s): %s", resp.Status, strings.TrimSpace(string(b)))
	}
	tmp, err := os.CreateTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	defer os.Remove(tmp.Name())
	n, err := io.Copy(tmp, resp.Body)
	if err == nil {
		err = tmp.Sync()
	}
	if cerr := tmp.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("copy from the running hub: %w", err)
	}
	if err := storage.VerifyFile(tmp.Name()); err != nil {
		return fmt.Errorf("the copy from the running hub failed its check: %w", err)
	}
	if err := os.Rename(tmp.Name(), path); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "backup written from the running hub: %s (%d KiB)\n", path, n>>10)
	return nil
}

// openHub opens the data folder and the hub's computations over it, for
// the commands that only read (flags, plan, tests, fightweek); done
// closes the folder.
func openHub(data string) (srv *server.Server, done func(), err error) {
	db, err := openData(data, time.Now)
	if err != nil {
		return nil, nil, err
	}
	srv, err = server.New(server.Config{Store: db})
	if err != nil {
		db.Close()
		return nil, nil, err
	}
	return srv, func() { srv.Close(); db.Close() }, nil
}

// runAthleteReport runs a command that reads one athlete's report
// (plan, tests, fightweek): --data, --athlete (required), --day and
// --json, then the report in words or as JSON.
func runAthleteReport(args []string, stdout io.Writer, name, dayHelp string,
	get func(srv *server.Server, athlete, day string) (v any, text func(io.Writer), err error)) error {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	data := dataFlag(fs)
	athlete := fs.String("athlete", "", "the athlete id (required)")
	day := fs.String("day", "", dayHelp)
	asJSON := fs.Bool("json", false, "JSON instead of words")
	if err := parseInterleaved(fs, args); err != nil || fs.NArg() != 0 {
		return errUsage
	}
	if *athlete == "" {
		return errors.New("--athlete ID is required: the athlete whose " + name + " to show")
	}
	if err := checkDay(*day); err != nil {
		return err
	}
	srv, done, err := openHub(*data)
	if err != nil {
		return err
	}
	defer done()
	v, text, err := get(srv, *athlete, *day)
	if err != nil {
		return err
	}
	if *asJSON {
		return writeJSON(stdout, v)
	}
	text(stdout)
	return nil
}

// checkDay refuses a --day that is given but is not a calendar day.
func checkDay(day string) error {
	if day == "" {
		return nil
	}
	if _, err := time.Parse(time.DateOnly, day); err != nil {
		return fmt.Errorf("--day must be a calendar day YYYY-MM-DD; got %q", day)
	}
	return nil
}

// writeJSON writes v as indented JSON, as every --json answer is.
func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}
