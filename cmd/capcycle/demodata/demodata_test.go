package demodata

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"
)

// TestSameAsTestdata checks that the built-in copies are byte for byte the profiles in
// testdata/profiles, which the rest of the repository's tests use.
func TestSameAsTestdata(t *testing.T) {
	for _, name := range Names() {
		got, err := Profile(name)
		if err != nil {
			t.Fatal(err)
		}
		want, err := os.ReadFile(filepath.Join("..", "..", "..", "testdata", "profiles", name+".toml"))
		if err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(got, want) {
			t.Errorf("cmd/capcycle/demodata/%s.toml differs from testdata/profiles/%s.toml; copy it again", name, name)
		}
	}
}

func TestUnknownScenario(t *testing.T) {
	if _, err := Profile("nosuch"); err == nil {
		t.Error("an unknown scenario gave no error")
	}
}
