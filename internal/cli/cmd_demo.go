package cli

import (
	"context"
	"fmt"
	"io"
	"os"
	"path/filepath"

	"matchbench/internal/demo"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/touchstone"
)

func runDemo(_ context.Context, args []string, stdout, stderr io.Writer) error {
	fs := newFlagSet("demo", "DIR", stderr)
	pos, err := parseArgs(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("want the folder to write to, got %d arguments", len(pos))
	}
	dir := pos[0]
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	if err := writeDemoDevices(dir, stdout); err != nil {
		return err
	}
	for _, f := range demo.Generate() {
		path := filepath.Join(dir, filepath.FromSlash(f.Name))
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			return err
		}
		if err := writeDemoFile(path, f); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "wrote %s\n", path)
	}
	name, text := demo.LimitFile()
	if err := os.WriteFile(filepath.Join(dir, name), []byte(text), 0o644); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "wrote %s\n", filepath.Join(dir, name))
	b, err := demoNetworkFile()
	if err != nil {
		return err
	}
	path := filepath.Join(dir, demoNetworkFileName)
	if err := os.WriteFile(path, b, 0o644); err != nil {
		return err
	}
	fmt.Fprintf(stdout, "wrote %s\n", path)
	return nil
}

// demoNetworkFileName is the network file of the Fieldnode design with its
// first board's layout as declared, beside the demo sweeps.
const demoNetworkFileName = "fieldnode-network.json"

// demoFieldnodeNetwork returns the demo's Fieldnode design (internal/demo)
// as a design network of E24 values and typical 0402 parts, with the first
// board's layout as the engineer declares it.
func demoFieldnodeNetwork() (match.Network, match.Layout) {
	n := make(match.Network, len(demo.FieldnodeDesign))
	for i, p := range demo.FieldnodeDesign {
		n[i] = match.Part{Kind: p.Kind, Value: p.Value, Series: "E24", Model: parts.Typical0402}
	}
	lay := match.Layout{Footprint: match.Footprint{Name: "0402", PadCF: demo.FieldnodeDeclaredPadCF},
		Traces: []match.Trace{{Gap: demo.FieldnodeTraceGap, LengthM: demo.FieldnodeDeclaredTraceM, Z0Ohm: demo.FieldnodeTraceZ0Ohm, EpsEff: demo.FieldnodeTraceEpsEff}}}
	return n, lay
}

// demoNetworkFile returns the network file shipped as
// testdata/demo/fieldnode-network.json.
func demoNetworkFile() ([]byte, error) {
	n, lay := demoFieldnodeNetwork()
	return match.MarshalNetwork(n, lay)
}

// writeDemoFile writes one demo sweep as Touchstone 1.1 with its notes.
func writeDemoFile(path string, f demo.File) error {
	comments := make([]string, len(f.Note))
	for i, n := range f.Note {
		comments[i] = " " + n
	}
	return writeSweepFile(path, f.Sweep, touchstone.WriteOptions{Version: 1, Format: "RI", FreqUnit: "MHz", Digits: 10, Comments: comments})
}

// writeDemoDevices writes the demo's 2-port devices (Touchstone 1.1, the
// same layout as writeDemoFile) with their noise parameters.
func writeDemoDevices(dir string, stdout io.Writer) error {
	for _, d := range demo.Devices() {
		comments := make([]string, len(d.Note))
		for i, n := range d.Note {
			comments[i] = " " + n
		}
		path := filepath.Join(dir, d.Name)
		if err := writeSweepFile(path, d.Sweep, touchstone.WriteOptions{Version: 1, Format: "RI", FreqUnit: "MHz", Digits: 10, Comments: comments, Noise: d.Noise}); err != nil {
			return err
		}
		fmt.Fprintf(stdout, "wrote %s\n", path)
	}
	return nil
}
