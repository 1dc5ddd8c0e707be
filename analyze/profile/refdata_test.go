package profile

import (
	"bufio"
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"strings"
	"testing"
)

// readRefCSV reads the data rows (after the "#" comments) of a reference file in testdata.
func readRefCSV(t *testing.T, name string) []map[string]string {
	t.Helper()
	f, err := os.Open("../../testdata/" + name)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var lines []string
	sc := bufio.NewScanner(f)
	for sc.Scan() {
		if l := sc.Text(); !strings.HasPrefix(l, "#") && strings.TrimSpace(l) != "" {
			lines = append(lines, l)
		}
	}
	r := csv.NewReader(strings.NewReader(strings.Join(lines, "\n")))
	r.FieldsPerRecord = -1
	r.LazyQuotes = true
	recs, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	var rows []map[string]string
	for _, rec := range recs[1:] {
		m := map[string]string{}
		for i, h := range recs[0] {
			if i < len(rec) {
				m[h] = rec[i]
			}
		}
		rows = append(rows, m)
	}
	return rows
}

// TestToleranceCodesAgainstTable checks every letter of
// testdata/capacitance_tolerance_codes.csv (a copy of the IEC 60062 letter table compiled
// from secondary sources, named in the file): letters with a percentage are accepted with
// exactly those percentages; letters with only an absolute pF meaning are refused.
func TestToleranceCodesAgainstTable(t *testing.T) {
	rows := readRefCSV(t, "capacitance_tolerance_codes.csv")
	if len(rows) < 10 {
		t.Fatalf("only %d rows read", len(rows))
	}
	seen := 0
	for _, row := range rows {
		code := row["code"]
		minus, plus := row["tolerance_minus_percent"], row["tolerance_plus_percent"]
		got, err := LookupTolerance(code)
		if minus == "" {
			if err == nil {
				t.Errorf("%s (%s only) accepted as %v", code, row["absolute_alternative"], got)
			}
			continue
		}
		if err != nil {
			t.Errorf("%s: %v", code, err)
			continue
		}
		wantMinus, _ := strconv.ParseFloat(minus, 64)
		wantPlus, _ := strconv.ParseFloat(plus, 64)
		if got.MinusPct != wantMinus || got.PlusPct != wantPlus {
			t.Errorf("%s = -%g/+%g %%, table says -%g/+%g %%", code, got.MinusPct, got.PlusPct, wantMinus, wantPlus)
		}
		seen++
	}
	if seen != len(toleranceCodes) {
		t.Errorf("table has %d percentage letters, the code %d", seen, len(toleranceCodes))
	}
	for _, bad := range []string{"A", "E", "Q", "X", "MM", ""} {
		if _, err := LookupTolerance(bad); err == nil {
			t.Errorf("LookupTolerance(%q) accepted", bad)
		}
	}
}

// TestLeakLimitWorkedValues checks ElectrolyticLeakLimitA against the worked values in
// testdata/al_electrolytic_leakage_spec.txt (inputs from a datasheet, a manufacturer FAQ
// and a Q&A answer, as that file names them; C in µF, V rated, I in µA).
func TestLeakLimitWorkedValues(t *testing.T) {
	rows := readRefCSV(t, "al_electrolytic_leakage_spec.txt")
	if len(rows) < 4 {
		t.Fatalf("only %d worked values read", len(rows))
	}
	for _, row := range rows {
		c, _ := strconv.ParseFloat(row["C_uF"], 64)
		v, _ := strconv.ParseFloat(row["V_rated"], 64)
		want, _ := strconv.ParseFloat(row["I_max_uA"], 64)
		got, rule := ElectrolyticLeakLimitA(c*1e-6, v)
		if math.Abs(got*1e6-want) > 1e-9*want {
			t.Errorf("C=%g µF V=%g: limit %g µA, reference %g µA (%s)", c, v, got*1e6, want, row["source_of_inputs"])
		}
		if !strings.Contains(rule, "2 min") {
			t.Errorf("rule text %q does not say when the limit applies", rule)
		}
	}
	// The high-voltage series rule from the same datasheet: 0.06·C·V + 10 µA.
	if got, _ := ElectrolyticLeakLimitA(100e-6, 200); math.Abs(got-1210e-6) > 1e-12 {
		t.Errorf("100 µF 200 V: %g A, want 1210 µA (0.06·100·200 + 10)", got)
	}
	if got, _ := ElectrolyticLeakLimitA(100e-6, 120); !math.IsNaN(got) {
		t.Errorf("120 V is outside both rules, got %g", got)
	}
}
