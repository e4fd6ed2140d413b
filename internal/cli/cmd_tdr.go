package cli

import (
	"context"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"strings"
	"text/tabwriter"

	"matchbench/rfmath/tdr"
	"matchbench/rfmath/touchstone"
	"matchbench/rfmath/units"
)

// tdrReport is what `matchbench tdr --json` prints. Keys are part of the
// command-line contract; add, never rename.
type tdrReport struct {
	File           string     `json:"file"`
	Mode           string     `json:"mode"`
	Window         string     `json:"window"`
	VelocityFactor float64    `json:"velocity_factor"`
	Z0Ohm          float64    `json:"z0_ohm"`
	DeltaFHz       float64    `json:"delta_f_hz"`
	RangeS         float64    `json:"range_s"`
	RangeM         float64    `json:"range_m"`
	ResolutionS    float64    `json:"resolution_s"`
	ResolutionM    float64    `json:"resolution_m"`
	Resampled      bool       `json:"resampled"`
	DCExtrapolated bool       `json:"dc_extrapolated"`
	Peaks          []peakJSON `json:"peaks"`
	TimeS          []float64  `json:"time_s"`
	DistanceM      []float64  `json:"distance_m"`
	Impulse        []float64  `json:"impulse"`
	Step           []float64  `json:"step,omitempty"`
	ImpedanceOhm   []jsonNum  `json:"impedance_ohm,omitempty"`
}

type peakJSON struct {
	TimeS     float64 `json:"time_s"`
	DistanceM float64 `json:"distance_m"`
	Impulse   float64 `json:"impulse"`
	// ZAfterOhm is the impedance profile two resolution cells after the
	// peak (low-pass mode only).
	ZAfterOhm *jsonNum `json:"z_after_ohm,omitempty"`
}

const tdrUsage = "FILE [--vf 0.66] [--window kaiser:6] [--mode lowpass|bandpass] [--pad N] [--port N] [--min 0.02] [--json] [--gate CENTRE:SPAN [--gate-shape hann] [--notch] --out OUT]"

func runTDR(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("tdr", tdrUsage, stderr)
	vf := fs.Float64("vf", 1, "velocity `factor` of the feed, for distances (0.66 for solid PE coax)")
	win := fs.String("window", "kaiser:6", "spectrum `window`: rect, hann or kaiser:β")
	mode := fs.String("mode", "lowpass", "transform `mode`: lowpass (step and impedance) or bandpass (any band, magnitude only)")
	pad := fs.Int("pad", 4, "zero-padding `factor`")
	port := fs.Int("port", 1, "transform the reflection S(N,N) of this `port`")
	minPeak := fs.Float64("min", 0.02, "list reflections whose impulse magnitude reaches this `level`")
	asJSON := fs.Bool("json", false, "print one JSON object with the whole response")
	gate := fs.String("gate", "", "gate the sweep in time: `CENTRE:SPAN` round trip (0:1.5ns), written to --out")
	gateShape := fs.String("gate-shape", "hann", "`shape` of the gate's edges: rect, hann or kaiser:β")
	notch := fs.Bool("notch", false, "remove what the gate holds instead of keeping it")
	out := fs.String("out", "", "write the gated sweep to this `file` (.sNp, .ts or .csv)")
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("want one sweep file, got %d arguments", len(pos))
	}
	if !(*vf > 0 && *vf <= 1) {
		return usagef("--vf %g: a velocity factor is above 0 and at most 1", *vf)
	}
	w, err := tdr.ParseWindow(*win)
	if err != nil {
		return usagef("--window: %v", err)
	}
	set := &tdr.Settings{Window: w, Pad: *pad}
	switch strings.ToLower(*mode) {
	case "lowpass", "low-pass":
	case "bandpass", "band-pass":
		set.Mode = tdr.BandPass
	default:
		return usagef("--mode %q: lowpass or bandpass", *mode)
	}
	if *pad < 1 || *pad > 64 {
		return usagef("--pad %d: use 1 to 64", *pad)
	}
	if (*gate == "") != (*out == "") {
		return usagef("--gate and --out go together")
	}
	var g tdr.Gate
	if *gate != "" {
		c, sp, ok := strings.Cut(*gate, ":")
		if !ok {
			return usagef("--gate %q: want CENTRE:SPAN, such as 0:1.5ns", *gate)
		}
		if g.CentreS, err = units.ParseValue(c, "s"); err != nil {
			return usagef("--gate: centre: %v", err)
		}
		if g.SpanS, err = units.ParseValue(sp, "s"); err != nil || !(g.SpanS > 0) {
			return usagef("--gate %q: the span must be a positive time", *gate)
		}
		if g.Shape, err = tdr.ParseWindow(*gateShape); err != nil {
			return usagef("--gate-shape: %v", err)
		}
		g.Notch = *notch
	}

	ls, err := loadSweep(pos[0])
	if err != nil {
		return err
	}
	s := ls.Sweep
	if *port < 1 || *port > s.Ports {
		return usagef("--port %d: %s has %d port(s)", *port, pos[0], s.Ports)
	}
	gamma := s.Param(nil, *port-1, *port-1)
	if *gate != "" {
		gated, err := tdr.GateSweep(s, g, set)
		if err != nil {
			return err
		}
		kind := "kept"
		if g.Notch {
			kind = "removed"
		}
		comment := fmt.Sprintf(" time-gated by matchbench from %s: %s %s to %s round trip (%s edges, %s spectrum window)",
			filepath.Base(pos[0]), kind, units.Format(g.CentreS-g.SpanS/2, "s", 4), units.Format(g.CentreS+g.SpanS/2, "s", 4), g.Shape, w)
		if err := writeSweepFile(*out, gated, touchstone.WriteOptions{Comments: []string{comment}}); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "wrote %s (%d points): reflections between %s and %s round trip %s\n", *out, gated.Len(),
			units.Format(g.CentreS-g.SpanS/2, "s", 4), units.Format(g.CentreS+g.SpanS/2, "s", 4), kind)
		return nil
	}
	r, err := tdr.Transform(s.FreqHz, gamma, set)
	if err != nil {
		return err
	}
	rep := tdrReportOf(pos[0], r, *vf, s.Z0[*port-1], *minPeak)
	if *asJSON {
		enc := json.NewEncoder(stdout)
		return enc.Encode(rep)
	}
	printTDR(stdout, rep)
	return nil
}

func tdrReportOf(path string, r *tdr.Response, vf, z0, minPeak float64) *tdrReport {
	rep := &tdrReport{
		File: path, Mode: r.Mode.String(), Window: r.Window.String(), VelocityFactor: vf, Z0Ohm: z0,
		DeltaFHz: r.DeltaFHz, RangeS: r.RangeS(), RangeM: tdr.Distance(r.RangeS(), vf),
		ResolutionS: r.ResolutionS(), ResolutionM: tdr.Distance(r.ResolutionS(), vf),
		Resampled: r.Resampled, DCExtrapolated: r.DCExtrapolated,
		TimeS: r.TimeS, DistanceM: r.DistanceTo(nil, vf), Impulse: r.Impulse, Step: r.Step,
		Peaks: []peakJSON{},
	}
	var z []float64
	if r.Step != nil {
		z = r.ImpedanceTo(nil, z0)
		rep.ImpedanceOhm = make([]jsonNum, len(z))
		for i, v := range z {
			rep.ImpedanceOhm[i] = jsonNum(v)
		}
	}
	// The 20 largest reflections, in time order (tdr.Response.Peaks).
	h := r.Impulse
	idx := r.Peaks(minPeak, 20)
	for _, i := range idx {
		p := peakJSON{TimeS: r.TimeS[i], DistanceM: rep.DistanceM[i], Impulse: h[i]}
		if z != nil {
			zi := jsonNum(z[r.Index(r.TimeS[i]+2*r.ResolutionS())])
			p.ZAfterOhm = &zi
		}
		rep.Peaks = append(rep.Peaks, p)
	}
	return rep
}

func printTDR(w io.Writer, rep *tdrReport) {
	fmt.Fprintf(w, "%s: %s, %s window, Δf %s, VF %g\n", rep.File, rep.Mode, rep.Window, units.FormatFrequency(rep.DeltaFHz, 6), rep.VelocityFactor)
	fmt.Fprintf(w, "range %s round trip (%s one way), resolution %s (%s)\n",
		units.Format(rep.RangeS, "s", 4), units.Format(rep.RangeM, "m", 4), units.Format(rep.ResolutionS, "s", 3), units.Format(rep.ResolutionM, "m", 3))
	var notes []string
	if rep.Resampled {
		notes = append(notes, "the sweep was resampled onto a uniform grid")
	}
	if rep.DCExtrapolated {
		notes = append(notes, "the value at DC was extrapolated")
	}
	if len(notes) > 0 {
		fmt.Fprintf(w, "note: %s\n", strings.Join(notes, "; "))
	}
	fmt.Fprintln(w)
	if len(rep.Peaks) == 0 {
		fmt.Fprintln(w, "no reflection reaches the --min level")
		return
	}
	tw := tabwriter.NewWriter(w, 2, 4, 2, ' ', 0)
	if rep.Step != nil {
		fmt.Fprintln(tw, "  time\tdistance\timpulse\tZ after\t")
	} else {
		fmt.Fprintln(tw, "  time\tdistance\t|impulse|\t")
	}
	for _, p := range rep.Peaks {
		fmt.Fprintf(tw, "  %s\t%s\t%+.4f\t", units.Format(p.TimeS, "s", 4), units.Format(p.DistanceM, "m", 4), p.Impulse)
		if p.ZAfterOhm != nil {
			z := float64(*p.ZAfterOhm)
			if math.IsInf(z, 0) || z < 0 || z > 1e4 {
				fmt.Fprint(tw, "open\t")
			} else {
				fmt.Fprintf(tw, "%.1f Ω\t", z)
			}
		}
		fmt.Fprintln(tw)
	}
	tw.Flush()
}
