package match

import (
	"context"
	"testing"
	"time"

	"matchbench/internal/demo"
	"matchbench/rfmath/amp"
	"matchbench/rfmath/parts"
)

// BenchmarkSearchStageDemo is the demo's stage search (the invented LNA
// transistor, demo.LNAStage: two typical 0402 parts a side, E24), with the
// number of one-side searches and stages it judged, and its time against
// one source-side search of the same settings (vs-one-side).
func BenchmarkSearchStageDemo(b *testing.B) {
	d := demo.Devices()[0]
	spec := demo.LNAStage
	bands := []amp.StageBand{{LoHz: spec.Band.LoHz, HiHz: spec.Band.HiHz, StageRequirement: amp.StageRequirement{
		MinGainDB: spec.MinGainDB, MaxNFdB: spec.MaxNFdB, MinInputRLdB: spec.MinInputRLdB, MinOutputRLdB: spec.MinOutputRLdB}}}
	set := &StageSettings{Settings: Settings{Model: parts.Typical0402, MaxParts: spec.PartsPerSide}}
	in, _, err := StageLoads(d.Sweep, d.Noise, 50, nil, nil)
	if err != nil {
		b.Fatal(err)
	}
	side := Settings{Model: parts.Typical0402, MaxParts: spec.PartsPerSide, Top: 64}
	t0 := time.Now()
	if _, err := Search(context.Background(), in, []Band{{LoHz: spec.Band.LoHz, HiHz: spec.Band.HiHz, MinReturnLossDB: spec.MinInputRLdB}}, &side); err != nil {
		b.Fatal(err)
	}
	one := time.Since(t0)
	var res *StageResult
	b.ResetTimer()
	for b.Loop() {
		if res, err = SearchStage(context.Background(), d.Sweep, d.Noise, 50, bands, set); err != nil {
			b.Fatal(err)
		}
	}
	if !res.Designs[0].Meets() {
		b.Fatalf("the demo stage misses: %+v", res.Designs[0].StageMetrics)
	}
	per := b.Elapsed() / time.Duration(b.N)
	b.ReportMetric(float64(per.Microseconds())/1000, "stage-ms")
	b.ReportMetric(float64(res.Searches), "searches")
	b.ReportMetric(float64(res.Stages), "stages")
	b.ReportMetric(float64(per)/float64(one), "vs-one-side")
}
