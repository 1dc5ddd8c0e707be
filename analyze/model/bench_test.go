package model

import "testing"

// BenchmarkWrenDay simulates 24 hours of the sunny-sill rover.
func BenchmarkWrenDay(b *testing.B) {
	sc, err := Scenario("wren")
	if err != nil {
		b.Fatal(err)
	}
	var res *Result
	for b.Loop() {
		res, err = Simulate(sc.Circuit, sc.Light, &Options{DurationS: 86400})
		if err != nil {
			b.Fatal(err)
		}
	}
	b.ReportMetric(float64(len(res.Cycles)), "cycles")
	b.ReportMetric(float64(res.Evals), "evals")
}
