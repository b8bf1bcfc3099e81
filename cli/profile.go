package cli

import (
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"sort"
	"strings"
	"time"

	"github.com/spf13/cobra"

	"bitsift/ingest"
	"bitsift/kafka"
	"bitsift/model"
	"bitsift/profile"
	"bitsift/report"
	"bitsift/sanitize"
)

// profileFlags are the flags of commands that write a profile.
type profileFlags struct {
	out    string
	sketch int
}

func (f *profileFlags) register(cmd *cobra.Command) {
	cmd.Flags().StringVar(&f.out, "profile-out", "", "also write the count profile (bitsift.profile/1, zstd) to FILE, for bitsift merge")
	cmd.Flags().IntVar(&f.sketch, "sketch-size", 1<<16, "values an identifier's summary keeps in a profile (bottom-k); merges are exact while an identifier has no more distinct values")
}

// readRedactKey reads --redact-key.
func readRedactKey(path string) ([]byte, error) {
	if path == "" {
		return nil, nil
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, &ExitError{Code: ExitUsage, Err: fmt.Errorf("--redact-key: %v", err)}
	}
	if len(b) < ingest.MinRedactKey {
		return nil, &ExitError{Code: ExitUsage, Err: fmt.Errorf("--redact-key %s: the key must be at least %d bytes (e.g. head -c 32 /dev/urandom > %s)", path, ingest.MinRedactKey, path)}
	}
	return b, nil
}

// redactionOf describes the run's redaction for a profile; a run's random
// key gets an id of its own, so its profile adds to no other.
func redactionOf(cfg ingest.Config) *profile.Redaction {
	if !cfg.Redact && len(cfg.RedactFields) == 0 {
		return nil
	}
	id := ingest.RedactKeyID(cfg.RedactKey)
	if id == "" {
		b := make([]byte, 8)
		rand.Read(b)
		id = "run-" + hex.EncodeToString(b)
	}
	return &profile.Redaction{Fields: cfg.RedactFields, KeyID: id}
}

// writeLogProfile writes the profile of what in has read from paths.
func writeLogProfile(in *ingest.Ingester, cfg ingest.Config, paths []string, pf profileFlags) error {
	snap := in.Snapshot(model.SnapshotOptions{TopValues: -1})
	ct := in.Model().Counts(model.CountOptions{SketchK: pf.sketch, Times: true})
	p := profile.New(ct, snap.Input)
	p.Redaction = redactionOf(cfg)
	for _, path := range paths {
		c := profile.Coverage{Kind: "file", Source: path}
		if path == "-" {
			c.Source = "stdin"
		} else if fi, err := os.Stat(path); err == nil {
			c.To = fi.Size()
			if abs, err := filepath.Abs(path); err == nil {
				c.Source = abs
			}
		}
		p.Coverage = append(p.Coverage, c)
	}
	if err := profile.WriteFile(pf.out, p); err != nil {
		return &ExitError{Code: ExitUnreadable, Err: fmt.Errorf("--profile-out: %v", err)}
	}
	return nil
}

// profileInputs says whether args name profiles (files, or folders for
// merge) rather than logs; a mix is a usage error.
func profileInputs(args []string) (bool, error) {
	var prof, logs []string
	for _, a := range args {
		if a != "-" && profile.IsProfile(a) {
			prof = append(prof, a)
		} else {
			logs = append(logs, a)
		}
	}
	if len(prof) > 0 && len(logs) > 0 {
		return false, usage("%s is a profile and %s is not: give logs or profiles, not both", prof[0], logs[0])
	}
	return len(prof) > 0, nil
}

// loadProfiles reads profiles; a folder stands for the profiles in it
// (other files in it are skipped).
func loadProfiles(args []string) ([]*profile.Profile, error) {
	var paths []string
	for _, a := range args {
		fi, err := os.Stat(a)
		if err != nil {
			return nil, &ExitError{Code: ExitUnreadable, Err: err}
		}
		if !fi.IsDir() {
			paths = append(paths, a)
			continue
		}
		ents, err := os.ReadDir(a)
		if err != nil {
			return nil, &ExitError{Code: ExitUnreadable, Err: err}
		}
		var in []string
		for _, e := range ents {
			p := filepath.Join(a, e.Name())
			if e.Type().IsRegular() && profile.IsProfile(p) {
				in = append(in, p)
			}
		}
		if len(in) == 0 {
			return nil, &ExitError{Code: ExitUnreadable, Err: fmt.Errorf("%s holds no bitsift profile", a)}
		}
		sort.Strings(in)
		paths = append(paths, in...)
	}
	var ps []*profile.Profile
	for _, p := range paths {
		pr, err := profile.ReadFile(p)
		if err != nil {
			return nil, &ExitError{Code: ExitUnreadable, Err: err}
		}
		ps = append(ps, pr)
	}
	return ps, nil
}

// mergedProfile reads and adds the profiles args name.
// A topic's profiles are chained by offset first (merge_topic.go): repeats
// are left out, said on std.Err, and gaps become faults (missingError).
func mergedProfile(std IO, args []string) (*profile.Profile, error) {
	ps, err := loadProfiles(args)
	if err != nil {
		return nil, err
	}
	return mergeProfiles(std, ps)
}

// mergeProfiles adds ps, chaining a topic's profiles by offset first.
func mergeProfiles(std IO, ps []*profile.Profile) (*profile.Profile, error) {
	m, notes, err := kafka.Merge(ps)
	for _, n := range notes {
		fmt.Fprintln(std.Err, "bitsift: merge:", n)
	}
	if err != nil {
		return nil, &ExitError{Code: ExitUsage, Err: err}
	}
	return m, nil
}

// reportProfile prints the report of a profile and writes it on with
// --profile-out.
func reportProfile(std IO, p *profile.Profile, output, out string) error {
	if out != "" {
		if err := profile.WriteFile(out, p); err != nil {
			return &ExitError{Code: ExitUnreadable, Err: fmt.Errorf("--profile-out: %v", err)}
		}
	}
	if output == "" {
		return nil
	}
	snap := p.Snapshot(model.SnapshotOptions{Profile: true})
	if err := report.Write(std.Out, report.Build(snap), output); err != nil {
		return writeError(err)
	}
	return nil
}

type mergeCmd struct {
	output       string
	out          string
	since, until string
}

func newMergeCmd(std IO) *cobra.Command {
	c := &mergeCmd{}
	cmd := &cobra.Command{
		Use:   "merge [flags] PROFILE...|DIR",
		Short: "Add count profiles of shards and print the report of all of them",
		Long: `merge reads count profiles (written by report --profile-out, or by sql,
or by workers), adds their counts and prints the report of all their records
together, as one run over every input would have printed it; with
--profile-out it writes the added profile instead (add -o to print the report
too). A folder stands for the profiles in it.

Profiles add only when they make their companion fields alike and share
their redaction key (--redact-key FILE); inputs covered twice are refused.`,
		Example: `  bitsift report --profile-out mon.bsp /var/log/app/mon.log
  bitsift merge mon.bsp tue.bsp
  bitsift merge --profile-out week.bsp profiles/`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			if !cmd.Flags().Changed("output") && c.out != "" {
				c.output = ""
			}
			return c.run(std, args)
		},
	}
	cmd.Flags().StringVarP(&c.output, "output", "o", "text", "output format: "+strings.Join(report.Formats, ", "))
	cmd.Flags().StringVar(&c.out, "profile-out", "", "write the added profile to FILE")
	cmd.Flags().StringVar(&c.since, "since", "", "add only the profiles whose records all came at or after this time (RFC 3339, 2006-01-02, or a duration ago: 24h)")
	cmd.Flags().StringVar(&c.until, "until", "", "add only the profiles whose records all came before this time")
	return cmd
}

func (c *mergeCmd) run(std IO, args []string) error {
	if c.output != "" && !validOutput(c.output) {
		return usage("merge: unknown output format %q (use one of %s)", c.output, strings.Join(report.Formats, ", "))
	}
	now := time.Now()
	since, err := parseWhen(c.since, now)
	if err != nil {
		return usage("merge: --since %v", err)
	}
	until, err := parseWhen(c.until, now)
	if err != nil {
		return usage("merge: --until %v", err)
	}
	ps, err := loadProfiles(args)
	if err != nil {
		return err
	}
	if !since.IsZero() || !until.IsZero() {
		ps = c.within(std, ps, args, since, until)
		if len(ps) == 0 {
			return &ExitError{Code: ExitUnreadable, Err: errors.New("merge: no profile lies within --since/--until")}
		}
	}
	p, err := mergeProfiles(std, ps)
	if err != nil {
		return err
	}
	if err := reportProfile(std, p, c.output, c.out); err != nil {
		return err
	}
	return missingError(p)
}

// within keeps the profiles whose records all lie in [since, until): a
// profile's counts cannot be cut, so one that straddles a bound is left
// out, and said so on standard error.
func (c *mergeCmd) within(std IO, ps []*profile.Profile, args []string, since, until time.Time) []*profile.Profile {
	var out []*profile.Profile
	for _, p := range ps {
		lo, hi := p.Counts.Oldest, p.Counts.Newest
		switch {
		case lo == 0:
			fmt.Fprintf(std.Err, "bitsift merge: left out a profile of %s: its records have no times\n", coverageOf(p))
		case (!since.IsZero() && hi < since.UnixNano()) || (!until.IsZero() && lo >= until.UnixNano()):
			// wholly outside: nothing to say
		case (!since.IsZero() && lo < since.UnixNano()) || (!until.IsZero() && hi >= until.UnixNano()):
			fmt.Fprintf(std.Err, "bitsift merge: left out a profile of %s: it spans %s to %s, across the bounds\n",
				coverageOf(p), time.Unix(0, lo).UTC().Format(time.RFC3339), time.Unix(0, hi).UTC().Format(time.RFC3339))
		default:
			out = append(out, p)
		}
	}
	return out
}

func coverageOf(p *profile.Profile) string {
	if len(p.Coverage) == 0 {
		return "(no coverage)"
	}
	s := p.Coverage[0].String()
	if len(p.Coverage) > 1 {
		s += fmt.Sprintf(" and %d more", len(p.Coverage)-1)
	}
	return sanitize.String(s)
}

// unusedWithProfiles lists the flags that mean nothing for a profile and
// were given.
func unusedWithProfiles(cmd *cobra.Command, names ...string) error {
	for _, n := range names {
		if cmd.Flags().Changed(n) {
			return usage("--%s reads logs; a profile holds counts already (drop --%s)", n, n)
		}
	}
	return nil
}
