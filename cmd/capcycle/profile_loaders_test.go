package main

import (
	"bytes"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"capcycle/analyze/model"
	"capcycle/analyze/profile"
	"capcycle/firmware-protocol/wire"
	"capcycle/logger"
)

// The profile's ADC input limit is the board's.
func TestProfileADCInputsAreTheBoards(t *testing.T) {
	if profile.MaxADCInputs != wire.MaxChannels {
		t.Errorf("profile.MaxADCInputs %d, wire.MaxChannels %d", profile.MaxADCInputs, wire.MaxChannels)
	}
}

// profileSeeds are the ready profiles, the templates, and the profiles of the faults
// "profile check" used to pass that other commands then refused.
func profileSeeds(t testing.TB) []string {
	var out []string
	for _, p := range []string{"../../testdata/profiles/wren.toml", "../../testdata/profiles/fern.toml"} {
		b, err := os.ReadFile(p)
		if err != nil {
			t.Fatal(err)
		}
		out = append(out, string(b))
	}
	for _, k := range profile.TemplateKinds {
		out = append(out, profile.Template(k))
	}
	base := profile.Template("voltage")
	for _, r := range [][2]string{
		{`cap_f = "4700u"`, `cap_f = 1e308`},
		{`hold_f = "2.2u"`, `hold_f = 1e-300`},
		{`adc = 1`, `adc = 9`},
		{`bottom_ohm = "1meg"`, `bottom_ohm = 0`},
		{`reference_v = 5.0`, `reference_v = 500`},
		{`top_ohm = "1meg"`, `top_ohm = "1M"`},
		{"node = \"vcap\"\nadc = 0", "node = \"vcap\"\nadc = 1"},
		{"# [[channel]]\n# node = \"iload\"\n# adc = 2\n# shunt_ohm = 1", "[[channel]]\nnode = \"iload\"\nadc = 2\nshunt_ohm = 1"},
		{`# series_ohm = "10k"`, `pin_f = "100n"`},
	} {
		out = append(out, strings.Replace(base, r[0], r[1], 1))
	}
	return out
}

// checkThenLoad runs "profile check" on text and, when it passes, every command's loader:
// the circuit model (simulate, whatif), the recorder's channel set-up (record, demo) and,
// with a [light] table, the virtual robot (robot, demo). What check passes, each accepts.
func checkThenLoad(t *testing.T, dir, text string) bool {
	path := filepath.Join(dir, "p.toml")
	if err := os.WriteFile(path, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	var out, errb bytes.Buffer
	code := run(t.Context(), []string{"profile", "check", path}, &env{stdin: strings.NewReader(""), stdout: &out, stderr: &errb})
	if code != exitOK {
		if code != exitUsage || !strings.Contains(errb.String(), path) {
			t.Fatalf("profile check: exit %d, stderr %q", code, errb.String())
		}
		return false
	}
	if strings.Contains(out.String(), "NaN") {
		t.Fatalf("profile check prints NaN:\n%s", out.String())
	}
	p, err := profile.Load(path)
	if err != nil {
		t.Fatalf("check passed, Load refused: %v", err)
	}
	if _, _, err := model.FromProfile(p); err != nil {
		t.Fatalf("check passed, the circuit model refused: %v\n%s", err, text)
	}
	if err := recordFromProfile(&logger.Config{}, p, false); err != nil {
		t.Fatalf("check passed, record refused: %v\n%s", err, text)
	}
	if p.Light != nil {
		if _, err := model.RigFromProfile(p, wire.MaxChannels); err != nil {
			t.Fatalf("check passed, the virtual robot refused: %v\n%s", err, text)
		}
	}
	return true
}

func TestProfileCheckPassesWhatEveryCommandAccepts(t *testing.T) {
	dir := t.TempDir()
	passed := 0
	for _, s := range profileSeeds(t) {
		if checkThenLoad(t, dir, s) {
			passed++
		}
	}
	// The ready profiles, the three templates, the iload channel and the pin capacitor.
	if passed != 7 {
		t.Errorf("%d of the seeds passed check, want 7", passed)
	}
}

// FuzzProfileCommands: any text that "profile check" passes, every command's loader
// accepts.
func FuzzProfileCommands(f *testing.F) {
	for _, s := range profileSeeds(f) {
		f.Add(s)
	}
	f.Fuzz(func(t *testing.T, text string) {
		checkThenLoad(t, t.TempDir(), text)
	})
}

// 15.9: check says when the [light] table's constant light can never fire the circuit,
// shows a declared pin capacitor, and refuses a divider resistor typed as "1M" (1 mΩ).
func TestProfileCheckLightAndPin(t *testing.T) {
	dir := t.TempDir()
	fern, _ := os.ReadFile("../../testdata/profiles/fern.toml")
	wren, _ := os.ReadFile("../../testdata/profiles/wren.toml")
	constant := func(b []byte, g string) string {
		s := string(b)
		return s[:strings.Index(s, "[light]")] + "[light]\nkind = \"constant\"\nirradiance_w_m2 = " + g + "\n"
	}
	cases := []struct {
		name, text string
		code       int
		want, not  []string
	}{
		{"Fern at 4 W/m²", constant(fern, "4"), exitOK,
			[]string{"at 4 W/m² (the [light] table) this never fires: the cell gives at most 0 A at on_v 4.00 V", "its shunt resistance alone takes 1.00 mA", "the drains at on_v take 9.61 µA"}, nil},
		{"Wren at 300 W/m²", constant(wren, "300"), exitOK,
			[]string{"constant 300 W/m²: cell open-circuit voltage about 3.97 V, at most 5.39 mA at on_v"}, []string{"never fires"}},
		{"Wren's windowsill", string(wren), exitOK, []string{"a windowsill day, 2026-06-21 at 48.1°, the window facing 180°: brightest "}, []string{"never fires"}},
		{"Fern's windowsill", string(fern), exitOK, []string{"even at the windowsill day's brightest", "this never fires: the cell gives at most 0 A at on_v 4.00 V"}, nil},
		{"a pin capacitor", strings.Replace(string(wren), "adc = 0\n", "adc = 0\npin_f = \"100n\"\n", 1), exitOK,
			[]string{"pin capacitor 100 nF (the pin follows with τ 50.0 ms)", "channel[1] (vcell): the ADC pin sees 500 kΩ"}, []string{"channel[0] (vcap): the ADC pin sees"}},
		{"a small pin capacitor", strings.Replace(string(wren), "adc = 0\n", "adc = 0\npin_f = \"1n\"\n", 1), exitOK,
			[]string{"pin_f 1.00 nF is small against the converter's sampling capacitor"}, nil},
		{"1M for 1 megohm", strings.Replace(string(wren), `top_ohm = "1meg"`, `top_ohm = "1M"`, 1), exitUsage,
			[]string{`channel[0].top_ohm: 1.00 mΩ is below the plausible range 1.00 Ω to 1.00 GΩ (a bare "M" is milli, as in SPICE: write "1meg" for mega)`}, nil},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(dir, "p.toml")
			if err := os.WriteFile(path, []byte(tc.text), 0o644); err != nil {
				t.Fatal(err)
			}
			code, out, errs := runCmd(t, "profile", "check", path)
			if code != tc.code {
				t.Fatalf("exit %d, want %d; stderr %q", code, tc.code, errs)
			}
			all := out + errs
			for _, w := range tc.want {
				if !strings.Contains(all, w) {
					t.Errorf("output lacks %q:\n%s", w, all)
				}
			}
			for _, w := range tc.not {
				if strings.Contains(all, w) {
					t.Errorf("output has %q:\n%s", w, all)
				}
			}
		})
	}
}
