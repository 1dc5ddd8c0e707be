package profile

import (
	"errors"
	"os"
	"strings"
	"testing"
)

// FuzzParse checks that Parse never panics on any text, that every failure is an *Error
// naming the file with a line inside the text (or 0), and that every success derives.
func FuzzParse(f *testing.F) {
	for _, kind := range TemplateKinds {
		f.Add(Template(kind))
	}
	if b, err := os.ReadFile("../model/scenarios/fern.toml"); err == nil {
		f.Add(string(b))
	}
	base := Template("voltage")
	for _, tt := range badProfiles {
		if tt.old != "" {
			f.Add(strings.ReplaceAll(strings.Replace(base, tt.old, tt.new, 1), "§", ""))
		}
	}
	f.Add("[[channel]\nnode = \"vcap\"\n[storage\n")
	f.Add("a = \"\"\"\nb = 1\n\"\"\"\n[x]\n")
	f.Fuzz(func(t *testing.T, text string) {
		p, err := Parse("fuzz.toml", []byte(text))
		if err != nil {
			var pe *Error
			if !errors.As(err, &pe) {
				t.Fatalf("error %v is not a *profile.Error", err)
			}
			if pe.File != "fuzz.toml" || pe.Line < 0 || pe.Line > strings.Count(text, "\n")+1 {
				t.Fatalf("error %v: file %q line %d outside the text", err, pe.File, pe.Line)
			}
			return
		}
		Derive(p)
	})
}
