package units

import (
	"context"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

// TestSuffixesAgainstNgspice reads the same resistor values with ngspice (the reference
// SPICE implementation available on Debian) and with Parse, and checks they agree. Values
// where capcycle deliberately refuses SPICE's reading ("M" followed by unit letters) are
// checked to be refused, and ngspice's reading is asserted so that the reason stays true.
func TestSuffixesAgainstNgspice(t *testing.T) {
	ngspice, err := exec.LookPath("ngspice")
	if err != nil {
		t.Skip("ngspice not installed (CI installs it with apt-get install ngspice)")
	}
	agree := []string{"4.7MEGohm", "2.2kohm", "1M", "1m", "47", "4700u", "4700U", "10K", "1meg", "2G",
		"1T", "100n", "22p", "5f", "1e3", "1.5e-3k", "33ohm", "68MEG"}
	refused := map[string]float64{"10Mohm": 0.01, "1MV": 1e-3} // what SPICE makes of them: milli
	all := append(append([]string{}, agree...), "10Mohm", "1MV")

	var deck strings.Builder
	fmt.Fprintln(&deck, "suffix check")
	fmt.Fprintln(&deck, "V1 1 0 DC 1")
	for i, v := range all {
		fmt.Fprintf(&deck, "R%d 1 0 %s\n", i+1, v)
	}
	fmt.Fprintln(&deck, ".control\nop\nshow r : resistance\n.endc\n.end")
	dir := t.TempDir()
	path := filepath.Join(dir, "suffix.cir")
	if err := os.WriteFile(path, []byte(deck.String()), 0o644); err != nil {
		t.Fatal(err)
	}
	ctx, cancel := context.WithTimeout(context.Background(), 30*time.Second)
	defer cancel()
	// ngspice -b exits 1 when the deck has no .print line even though the control block
	// ran; the table itself is the result, so only its absence is a failure.
	out, runErr := exec.CommandContext(ctx, ngspice, "-b", path).CombinedOutput()
	got := parseShowTable(string(out))
	if len(got) == 0 {
		t.Fatalf("ngspice printed no resistances (%v):\n%s", runErr, out)
	}

	for i, v := range all {
		name := "r" + strconv.Itoa(i+1)
		ref, ok := got[name]
		if !ok {
			t.Fatalf("ngspice printed no resistance for %s (%s):\n%s", name, v, out)
		}
		if want, isRefused := refused[v]; isRefused {
			if !close(ref, want, 1e-6) {
				t.Errorf("ngspice reads %s as %g, the docs say %g", v, ref, want)
			}
			if _, err := Parse(v, Ohm); err == nil {
				t.Errorf("Parse(%q) accepted a value SPICE reads as milli", v)
			}
			continue
		}
		mine, err := Parse(v, Ohm)
		if err != nil {
			t.Errorf("Parse(%q): %v", v, err)
			continue
		}
		if !close(mine, ref, 1e-6) { // ngspice prints 6 significant digits or fewer
			t.Errorf("%s: Parse = %g, ngspice = %g", v, mine, ref)
		}
	}
}

// parseShowTable reads the "device ... / resistance ..." blocks of ngspice's "show"
// output into a map from device name to value.
func parseShowTable(out string) map[string]float64 {
	res := map[string]float64{}
	var names []string
	ws := regexp.MustCompile(`\s+`)
	for _, line := range strings.Split(out, "\n") {
		f := ws.Split(strings.TrimSpace(line), -1)
		if len(f) < 2 {
			continue
		}
		switch f[0] {
		case "device":
			names = f[1:]
		case "resistance":
			for i, s := range f[1:] {
				if i < len(names) {
					if v, err := strconv.ParseFloat(s, 64); err == nil {
						res[names[i]] = v
					}
				}
			}
		}
	}
	return res
}
