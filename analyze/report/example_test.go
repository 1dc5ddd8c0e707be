package report_test

import (
	"fmt"

	"capcycle/analyze/analysis"
	"capcycle/analyze/report"
)

func ExampleMinMax() {
	// A flat line with a one-sample spike: decimated to four points, the spike stays.
	x := []float64{0, 1, 2, 3, 4, 5, 6, 7}
	y := []float64{1, 1, 1, 9, 1, 1, 1, 1}
	dx, dy := report.MinMax(x, y, 4)
	fmt.Println(dx, dy)
	// Output:
	// [0 3 4] [1 9 1]
}

func ExampleVerdict() {
	on, off := 2.7132, 1.5207
	charge := 41.0
	r := &analysis.Result{Samples: 36000, DurationS: 3600,
		Cycles: []analysis.Cycle{{Index: 0, Kind: "full"}, {Index: 1, Kind: "full", ChargeS: &charge}},
		Fit: analysis.Fit{Trigger: analysis.TriggerFit{
			OnV:     &analysis.Estimate{Value: on},
			OffV:    &analysis.Estimate{Value: off},
			PeriodS: &analysis.Estimate{Value: 41.3},
		}}}
	v := report.Verdict(r)
	fmt.Println(v)
	for _, p := range v.Parts {
		if p.Path != "" {
			fmt.Printf("%s = %g\n", p.Path, p.Value)
		}
	}
	// Output:
	// Works: 2 full cycles in 60.0 min, one every 41.3 s on average, firing at 2.71 V and resetting at 1.52 V.
	// count(cycles.kind=full) = 2
	// duration_s = 3600
	// fit.trigger.period_s.value = 41.3
	// fit.trigger.on_v.value = 2.7132
	// fit.trigger.off_v.value = 1.5207
}
