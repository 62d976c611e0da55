// Command cornerbook is the camp hub: it serves the app and the sync
// endpoints, and its subcommands import, export, compute flags, print a
// fighter's camp plan, back up and restore the data folder. Every subcommand works while the hub is
// stopped; while a hub holds the folder, it says so instead of hanging.
package main

import (
	"context"
	"fmt"
	"io"
	"os"
	"os/signal"
	"syscall"
)

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	defer stop()
	os.Exit(Run(ctx, os.Args[1:], os.Stdin, os.Stdout, os.Stderr))
}

// Run dispatches a command line and returns the exit code.
func Run(ctx context.Context, args []string, stdin io.Reader, stdout, stderr io.Writer) int {
	cmd := "serve"
	if len(args) > 0 && len(args[0]) > 0 && args[0][0] != '-' {
		cmd, args = args[0], args[1:]
	}
	var err error
	switch cmd {
	case "serve":
		err = runServe(ctx, args, stdout, stderr)
	case "import":
		err = runImport(args, stdin, stdout, stderr)
	case "export":
		err = runExport(args, stdout)
	case "flags":
		err = runFlags(args, stdout)
	case "fightweek":
		err = runFightWeek(args, stdout)
	case "plan":
		err = runPlan(args, stdout)
	case "tests":
		err = runTests(args, stdout)
	case "backup":
		err = runBackup(args, stdout)
	case "restore":
		err = runRestore(args, stdout)
	case "help", "-h", "--help":
		fmt.Fprint(stdout, usage)
		return 0
	default:
		fmt.Fprintf(stderr, "cornerbook: %q is not a command\n\n%s", cmd, usage)
		return 2
	}
	if err != nil {
		if err == errUsage {
			fmt.Fprintf(stderr, "cornerbook %s: the command line is not complete or has extra words\n\n%s", cmd, usage)
			return 2
		}
		fmt.Fprintf(stderr, "cornerbook %s: %v\n", cmd, err)
		return 1
	}
	return 0
}

const usage = `Usage:
  cornerbook [serve] [--data DIR] [--addr ADDR] [--http-addr ADDR] [--demo] [--announce]
  cornerbook import  --data DIR FILE        (JSON Lines; - reads standard input)
  cornerbook export  --data DIR [--kind K] [--csv]
  cornerbook flags   --data DIR --day YYYY-MM-DD [--athlete ID] [--json]
  cornerbook plan    --data DIR --athlete ID [--day YYYY-MM-DD] [--json]
  cornerbook tests   --data DIR --athlete ID [--day YYYY-MM-DD] [--json]
  cornerbook fightweek --data DIR --athlete ID [--day YYYY-MM-DD] [--json]
  cornerbook backup  --data DIR FILE        (also while the hub runs: it asks the hub)
  cornerbook restore --data DIR FILE        (with the hub stopped)

serve:
  --data DIR        data folder (default ./cornerbook-data; ./cornerbook-demo with --demo)
  --addr ADDR       HTTPS address of the app on the camp Wi-Fi (default :8443)
  --http-addr ADDR  plain-HTTP address: the join page for phones and the coach's
                    screen on this laptop (default :8080)
  --demo            serve the invented demo camp from its own folder
  --announce        answer for the camp's name (cornerbook-HOST.local) on the Wi-Fi
                    with --demo too; always on otherwise, never on loopback
`
