package cli

import (
	"context"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strconv"
	"strings"

	"matchbench/rfmath/deembed"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
)

const deembedUsage = "IN OUT [--fixture F.s2p [--fixture-port 1|2]] [--fixture2 F.s2p [--fixture2-port 1|2]] [--delay 1.26ns] [--loss DB] [--auto-open OPEN.s1p | --auto-short SHORT.s1p] [--port N] [--z0 OHMS]"

// delaySE writes the standard error of a fitted delay to two significant
// digits; below 1 fs, far finer than any analyser resolves (a fit to exact
// data), as "< 1 fs".
func delaySE(se float64) string {
	if se < 0.5e-15 {
		return "< 1 fs"
	}
	return units.Format(se, "s", 2)
}

// asciiPlusMinus is plusMinus in ASCII, for the steps that also go into a
// Touchstone header, which holds printable ASCII only: "+ 0.0000",
// "- 0.0123".
func asciiPlusMinus(v float64, digits int) string {
	return strings.Replace(plusMinus(v, digits), "−", "-", 1)
}

// deembedSteps records what was done, for the report and the file header.
type deembedSteps []string

func (d *deembedSteps) add(format string, a ...any) { *d = append(*d, fmt.Sprintf(format, a...)) }

// deembedFixtures reads the fixture files of ports 1 and 2 (each with the
// port that faces the analyser), noting each in steps.
func deembedFixtures(ports int, fix1 string, fix1Port int, fix2 string, fix2Port int, steps *deembedSteps) ([]deembed.Fixture, error) {
	if fix1 == "" && fix2 == "" {
		return nil, nil
	}
	fix := make([]deembed.Fixture, ports)
	for i, f := range []struct {
		path string
		at   int
	}{{fix1, fix1Port}, {fix2, fix2Port}} {
		if f.path == "" {
			continue
		}
		fl, err := loadSweep(f.path)
		if err != nil {
			return nil, err
		}
		fix[i] = deembed.Fixture{S: fl.Sweep, AnalyserPort: f.at}
		steps.add("removed fixture %s from port %d (its port %d at the analyser)", filepath.Base(f.path), i+1, f.at)
	}
	return fix, nil
}

// fitDeembedExtension fits the port extension to the sweep of the open (or
// shorted) end, noting the fit in steps.
func fitDeembedExtension(autoOpen, autoShort string, steps *deembedSteps) (deembed.Extension, error) {
	path, std := autoOpen, deembed.Open
	if autoShort != "" {
		path, std = autoShort, deembed.Short
	}
	ol, err := loadSweep(path)
	if err != nil {
		return deembed.Extension{}, err
	}
	fit, err := deembed.FitExtension(ol.Sweep, std, nil)
	if err != nil {
		return deembed.Extension{}, fmt.Errorf("%s: %w", path, err)
	}
	ext := fit.Extension
	steps.add("fitted on the %s end %s: delay %s (+/- %s), loss %s dB at %s (sqrt f) %s dB flat; residual %s deg, %s dB rms; offset %s deg",
		std, filepath.Base(path), units.Format(ext.DelayS, "s", 6), delaySE(fit.DelaySE), fmtNum(ext.LossDB, 4), units.FormatFrequency(ext.LossRefHz, 4),
		asciiPlusMinus(ext.FlatLossDB, 4), fmtNum(fit.PhaseRMSDeg, 2), fmtNum(fit.MagRMSDB, 3), fmtNum(fit.OffsetDeg, 2))

	return ext, nil
}

func runDeembed(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("deembed", deembedUsage, stderr)
	fix1 := fs.String("fixture", "", "2-port `file` of the fixture at port 1 to remove")
	fix1Port := fs.Int("fixture-port", 1, "the fixture's `port` (1 or 2) that faces the analyser")
	fix2 := fs.String("fixture2", "", "2-port `file` of the fixture at port 2 of a 2-port sweep")
	fix2Port := fs.Int("fixture2-port", 1, "the port-2 fixture's `port` (1 or 2) that faces the analyser")
	delay := fs.String("delay", "", "port extension: one-way `delay` to remove (1.26ns)")
	loss := fs.Float64("loss", 0, "port extension: one-way loss in `dB` at --loss-ref, scaling with √f")
	lossRef := fs.String("loss-ref", "1GHz", "`frequency` at which --loss holds")
	flat := fs.Float64("flat-loss", 0, "port extension: one-way loss in `dB` at every frequency")
	autoOpen := fs.String("auto-open", "", "fit the port extension to this sweep of the open end (`file`) and remove it")
	autoShort := fs.String("auto-short", "", "fit the port extension to this sweep of the shorted end (`file`) and remove it")
	port := fs.Int("port", 0, "apply the port extension to this `port` only (default: every port)")
	z0 := fs.Float64("z0", 0, "write the result against this reference `impedance` in ohms (default: the input's)")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 2 {
		return usagef("want IN and OUT, got %d arguments", len(pos))
	}
	in, out := pos[0], pos[1]
	if *fix1Port != 1 && *fix1Port != 2 || *fix2Port != 1 && *fix2Port != 2 {
		return usagef("--fixture-port and --fixture2-port are 1 or 2")
	}
	if *autoOpen != "" && *autoShort != "" {
		return usagef("give --auto-open or --auto-short, not both")
	}
	if (*autoOpen != "" || *autoShort != "") && (*delay != "" || *loss != 0 || *flat != 0) {
		return usagef("--auto-open/--auto-short fit the delay and loss; do not give --delay or --loss too")
	}
	var ext deembed.Extension
	if *delay != "" {
		d, err := units.ParseValue(*delay, "s")
		if err != nil {
			return usagef("--delay: %v", err)
		}
		ext.DelayS = d
	}
	if math.IsNaN(*loss) || math.IsInf(*loss, 0) || math.IsNaN(*flat) || math.IsInf(*flat, 0) {
		return usagef("--loss and --flat-loss must be finite")
	}
	ext.LossDB, ext.FlatLossDB = *loss, *flat
	if ext.LossRefHz, err = units.ParseFrequency(*lossRef); err != nil || ext.LossRefHz == 0 {
		return usagef("--loss-ref %q: want a frequency above 0", *lossRef)
	}
	if *z0 < 0 || math.IsNaN(*z0) || math.IsInf(*z0, 0) {
		return usagef("--z0 %g: the reference impedance must be positive", *z0)
	}
	if *fix1 == "" && *fix2 == "" && ext == (deembed.Extension{LossRefHz: ext.LossRefHz}) && *autoOpen == "" && *autoShort == "" && *z0 == 0 {
		return usagef("nothing to do: give --fixture, --delay, --auto-open, --auto-short or --z0")
	}

	ls, err := loadSweep(in)
	if err != nil {
		return err
	}
	s := ls.Sweep
	if *port < 0 || *port > s.Ports {
		return usagef("--port %d: %s has %d port(s)", *port, in, s.Ports)
	}
	if *fix2 != "" && s.Ports != 2 {
		return usagef("--fixture2 needs a 2-port sweep; %s has %d port(s)", in, s.Ports)
	}
	var steps deembedSteps
	var plane deembed.Plane // the steps, taken in their order by plane.Apply

	// 1. Fixtures.
	if plane.Fixtures, err = deembedFixtures(s.Ports, *fix1, *fix1Port, *fix2, *fix2Port, &steps); err != nil {
		return err
	}

	// 2. Port extension, given or fitted.
	if *autoOpen != "" || *autoShort != "" {
		if ext, err = fitDeembedExtension(*autoOpen, *autoShort, &steps); err != nil {
			return err
		}
	}
	if ext.DelayS != 0 || ext.LossDB != 0 || ext.FlatLossDB != 0 {
		exts := make([]deembed.Extension, s.Ports)
		for i := range exts {
			if *port == 0 || *port == i+1 {
				exts[i] = ext
			}
		}
		plane.Extensions = exts
		where := "every port"
		if *port != 0 {
			where = fmt.Sprintf("port %d", *port)
		}
		steps.add("port extension at %s: delay %s, loss %s dB at %s %s dB flat", where, units.Format(ext.DelayS, "s", 6), fmtNum(ext.LossDB, 4), units.FormatFrequency(ext.LossRefHz, 4), asciiPlusMinus(ext.FlatLossDB, 4))
	}

	// 3. Reference.
	if *z0 > 0 {
		plane.RenormOhm = *z0
		steps.add("renormalised to %s ohm", strconv.FormatFloat(*z0, 'g', -1, 64))
	}
	if s, err = plane.Apply(s); err != nil {
		return err
	}

	comments := []string{" de-embedded by matchbench from " + filepath.Base(in)}
	for _, st := range steps {
		comments = append(comments, " "+st)
	}
	if err := writeSweepFile(out, s, touchstone.WriteOptions{Comments: comments}); err != nil {
		return err
	}
	for _, st := range steps {
		fmt.Fprintln(stdout, st)
	}
	fmt.Fprintf(stdout, "wrote %s (%d points, %d-port)\n", out, s.Len(), s.Ports)
	return nil
}
