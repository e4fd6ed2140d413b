package cli

import (
	"bytes"
	"context"
	"fmt"
	"strings"

	"matchbench/internal/demo"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/match"
	"matchbench/rfmath/parts"
	"matchbench/rfmath/touchstone"
	"matchbench/sessions"
)

// stageDemoName names the third demo session.
const stageDemoName = "Demo · Wristtag LNA stage (invented data)"

// seedStageDemo creates the third demo session: the invented LNA
// transistor of Wristtag's receiver with its noise parameters, its
// stability, gain and noise circles at 2.44 GHz, and a stage whose source
// and load networks (typical 0402 parts of E24 values) the stage search
// designed for the demo's requirement (demo.LNAStage), its designs stored
// in the session and the best one in place.
func seedStageDemo(ctx context.Context, st *sessions.Store) error {
	d := demo.Devices()[0]
	var b bytes.Buffer
	comments := make([]string, len(d.Note))
	for i, n := range d.Note {
		comments[i] = " " + n
	}
	if err := touchstone.Write(&b, d.Sweep, touchstone.WriteOptions{Version: 1, Format: "RI", FreqUnit: "MHz", Digits: 10, Comments: comments, Noise: d.Noise}); err != nil {
		return err
	}
	// The session and the search read the same numbers: the file as written.
	tf, err := touchstone.Read(bytes.NewReader(b.Bytes()), d.Name, touchstone.Limits{})
	if err != nil {
		return err
	}
	se, err := st.Create(ctx, stageDemoName)
	if err != nil {
		return err
	}
	apply := func(ch sessions.Change) (sessions.Event, error) { return st.Apply(ctx, se.ID, ch) }
	ev, err := apply(sessions.Change{Op: sessions.OpSweepAdd, Name: strings.TrimSuffix(d.Name, ".s2p"), FileName: d.Name, Raw: b.Bytes(), Sweep: tf.Sweep})
	if err != nil {
		return err
	}
	dev := ev.SweepID
	spec := demo.LNAStage
	ev, err = apply(sessions.Change{Op: sessions.OpBandSet, Name: spec.Band.Name, LoHz: spec.Band.LoHz, HiHz: spec.Band.HiHz, MinReturnLossDB: spec.Band.MinReturnLossDB})
	if err != nil {
		return err
	}
	band := ev.BandID
	const atHz = 2.44e9
	if _, err := apply(sessions.Change{Op: sessions.OpMarkerAdd, SweepID: dev, Port: 1, FreqHz: atHz}); err != nil {
		return err
	}
	gain, nf := []float64{1, 2, 3}, []float64{0.25, 0.5, 1}
	if _, err := apply(sessions.Change{Op: sessions.OpAmpSet, SweepID: dev, FreqHz: atHz, AmpChange: sessions.AmpChange{GainStepsDB: &gain, NFStepsDB: &nf}}); err != nil {
		return err
	}
	req := sessions.StageReq{BandID: band, MinGainDB: spec.MinGainDB, MaxNFdB: spec.MaxNFdB, MinInputRLdB: spec.MinInputRLdB, MinOutputRLdB: spec.MinOutputRLdB}
	if _, err := apply(sessions.Change{Op: sessions.OpStageSet, SweepID: dev, AmpChange: sessions.AmpChange{StageReqs: []sessions.StageReq{req}}}); err != nil {
		return err
	}
	bands := []amp.StageBand{{LoHz: spec.Band.LoHz, HiHz: spec.Band.HiHz, StageRequirement: amp.StageRequirement{
		MinGainDB: spec.MinGainDB, MaxNFdB: spec.MaxNFdB, MinInputRLdB: spec.MinInputRLdB, MinOutputRLdB: spec.MinOutputRLdB}}}
	res, err := match.SearchStage(ctx, tf.Sweep, tf.Noise, 50, bands, &match.StageSettings{Settings: match.Settings{Model: parts.Typical0402, MaxParts: spec.PartsPerSide}})
	if err != nil {
		return err
	}
	out := &sessions.StageSearchResult{Settings: fmt.Sprintf("up to %d parts a side, L from E24, C from E24, typical 0402 parts, best found", spec.PartsPerSide), SidesExact: res.SidesExact}
	conv := func(n match.Network) []sessions.Part {
		ps := []sessions.Part{}
		for _, p := range n {
			ps = append(ps, sessions.Part{Kind: p.Kind, Value: p.Value, ESeries: p.Series, Model: "0402"})
		}
		return ps
	}
	for _, dd := range res.Designs {
		out.Designs = append(out.Designs, sessions.StageDesign{Source: conv(dd.Source), Load: conv(dd.Load), MarginDB: dd.MarginDB})
	}
	if _, err := apply(sessions.Change{Op: sessions.OpStageStore, AmpChange: sessions.AmpChange{StageSearch: out}}); err != nil {
		return err
	}
	zero := 0
	if _, err := apply(sessions.Change{Op: sessions.OpStageUse, Index: &zero}); err != nil {
		return err
	}
	// The terminations at 2.44 GHz are the ones the design presents.
	stg, err := match.StageOf(tf.Sweep, tf.Noise, 50, res.Designs[0].Source, res.Designs[0].Load)
	if err != nil {
		return err
	}
	p, err := stg.At(atHz)
	if err != nil {
		return err
	}
	for _, t := range []struct {
		plane string
		g     complex128
	}{{"source", p.GammaS}, {"load", p.GammaL}} {
		if _, err := apply(sessions.Change{Op: sessions.OpAmpPoint, AmpChange: sessions.AmpChange{Plane: t.plane}, Gamma: &sessions.Point{Re: real(t.g), Im: imag(t.g)}}); err != nil {
			return err
		}
	}
	return nil
}
