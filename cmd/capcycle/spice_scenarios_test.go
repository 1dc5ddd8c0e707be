package main

// ngspice as the source of a generated capture: the same kind of circuit as the model's,
// run by a general reference simulator (ngspice, https://ngspice.sourceforge.io, batch mode
// "ngspice -b"), then sampled and read like a board reads it. The netlist follows
// analyze/model/spice_test.go: the cell as a photocurrent source with a diode (N = n·Ns for
// Ns cells in series) and its series resistance, the capacitor with its initial voltage and
// a leakage resistor, the probe divider, and the trigger as ngspice's voltage-controlled
// switch with hysteresis (on above VT+VH, off below VT−VH, ngspice manual, "Switches")
// into the load resistor.

import (
	"fmt"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"

	"capcycle/analyze/model"
	"capcycle/analyze/model/spicetest"
)

// spiceTrace is ngspice's node voltage at its own time points.
type spiceTrace struct{ ts, v []float64 }

// runNgspice simulates c (a voltage trigger with fixed release, a resistor load, no
// supervisor draw, an ideal-switch drop of zero) under constant irradiance g for durS
// seconds from startV. It skips the test when ngspice is not installed.
func runNgspice(t *testing.T, c *model.Circuit, g, durS, startV float64) *spiceTrace {
	t.Helper()
	bin, err := exec.LookPath("ngspice")
	if err != nil {
		t.Skip("ngspice not installed (apt install ngspice): the ngspice-generated scenario is skipped")
	}
	if c.Trigger.Kind != model.TriggerVoltage || c.Load.Kind != model.LoadResistor || c.Switch.DropV != 0 ||
		c.Supervisor.QuiescentA != 0 || c.Storage.Branch2F != 0 || c.Cell.RshOhm != 0 {
		t.Fatalf("the netlist does not carry this circuit: %+v", c)
	}
	dir := t.TempDir()
	out := filepath.Join(dir, "out.txt")
	cell := c.Cell
	ref := cell.RefWm2
	if ref == 0 {
		ref = model.RefIrradianceWm2
	}
	tc := 25.0
	if cell.TempK > 0 {
		tc = cell.TempK - 273.15
	}
	var b strings.Builder
	fmt.Fprintf(&b, "* capcycle generated scenario\n")
	fmt.Fprintf(&b, "Iph 0 a DC %.12g\n", cell.IphA*g/ref)
	fmt.Fprintf(&b, "D1 a 0 DCELL\n.model DCELL D(IS=%.12g N=%.12g)\n", cell.I0A, cell.N*float64(max(cell.Cells, 1)))
	fmt.Fprintf(&b, "Rs a v %.12g\n", math.Max(cell.RsOhm, 1e-6))
	fmt.Fprintf(&b, "C1 v 0 %.12g IC=%.12g\n", c.Storage.CapF, startV)
	if c.Storage.LeakOhm > 0 {
		fmt.Fprintf(&b, "Rleak v 0 %.12g\n", c.Storage.LeakOhm)
	}
	if c.ProbeOhm > 0 {
		fmt.Fprintf(&b, "Rprobe v 0 %.12g\n", c.ProbeOhm)
	}
	vt := (c.Trigger.OnV + c.Trigger.OffV) / 2
	vh := (c.Trigger.OnV - c.Trigger.OffV) / 2
	fmt.Fprintf(&b, "S1 v l v 0 SWV\n.model SWV SW(VT=%.12g VH=%.12g RON=%.12g ROFF=1e12)\n", vt, vh, math.Max(c.Switch.OnOhm, 1e-3))
	fmt.Fprintf(&b, "Rload l 0 %.12g\n", c.Load.Ohm)
	fmt.Fprintf(&b, ".options TEMP=%.6g TNOM=%.6g RELTOL=1e-6\n", tc, tc)
	// A 1 ms step bound: the switch changes state on ngspice's time steps, so its fires
	// lag by at most that, well under the 20 ms between the samples taken from it.
	fmt.Fprintf(&b, ".control\nset wr_singlescale\ntran 1m %.12g 0 1m uic\nwrdata %s v(v)\nquit\n.endc\n.end\n", durS, out)
	cir := filepath.Join(dir, "c.cir")
	if err := os.WriteFile(cir, []byte(b.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(bin, "-b", cir)
	cmd.Dir = dir
	if msg, err := cmd.CombinedOutput(); err != nil {
		t.Fatalf("ngspice: %v\n%s", err, msg)
	}
	f, err := os.Open(out)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	ts, vs, err := spicetest.ReadWrdata(f)
	if err != nil {
		t.Fatal(err)
	}
	tr := &spiceTrace{ts: ts, v: vs}
	if len(tr.ts) < 100 {
		t.Fatalf("ngspice wrote %d points", len(tr.ts))
	}
	return tr
}

// at interpolates the trace linearly.
func (s *spiceTrace) at(t float64) float64 {
	i := sortSearch(s.ts, t)
	switch {
	case i <= 0:
		return s.v[0]
	case i >= len(s.ts):
		return s.v[len(s.v)-1]
	}
	u := (t - s.ts[i-1]) / (s.ts[i] - s.ts[i-1])
	return s.v[i-1] + u*(s.v[i]-s.v[i-1])
}

func sortSearch(x []float64, t float64) int {
	lo, hi := 0, len(x)
	for lo < hi {
		m := (lo + hi) / 2
		if x[m] < t {
			lo = m + 1
		} else {
			hi = m
		}
	}
	return lo
}

// sample reads the ngspice trace the way a board does: at rateHz, through b.
func (s *spiceTrace) sample(rateHz float64, b board) *genRun {
	rd := newReader(b)
	r := &genRun{}
	end := s.ts[len(s.ts)-1]
	for k := 0; ; k++ {
		ts := float64(k) / rateHz
		if ts > end {
			break
		}
		r.t = append(r.t, ts)
		r.v = append(r.v, rd.read(s.at(ts)))
	}
	return r
}

// fires returns the instants where the ngspice trace starts a fast fall from near onV (the
// switch closing): the first point of each stretch above onV − 1 % that is followed by a
// fall below offV + 10 % of the swing.
func (s *spiceTrace) fires(onV, offV float64) []float64 {
	var out []float64
	armed := true
	hi := onV - 0.01*onV
	lo := offV + 0.1*(onV-offV)
	for i, v := range s.v {
		switch {
		case armed && v >= hi:
			// the peak: the last point before the voltage drops
			j := i
			for j+1 < len(s.v) && s.v[j+1] >= s.v[j] {
				j++
			}
			out = append(out, s.ts[j])
			armed = false
		case !armed && v <= lo:
			armed = true
		}
	}
	// A fire whose fall is not complete at the end is not a cycle.
	if n := len(out); n > 0 && s.v[len(s.v)-1] > lo && !armed {
		out = out[:n-1]
	}
	return out
}
