package analysis

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"os"
)

// ErrNotAnalysis is returned (wrapped) by ReadFile for a file that is not an analysis
// JSON of this schema.
var ErrNotAnalysis = errors.New("not an analysis JSON")

// ReadFile reads a saved analysis JSON ("capcycle analyze --json") and checks its schema.
// A syntax error names the file and the line; a file that cannot be read is returned as
// the *os.PathError.
func ReadFile(path string) (*Result, error) {
	raw, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var r Result
	if err := json.NewDecoder(bytes.NewReader(raw)).Decode(&r); err != nil {
		var se *json.SyntaxError
		if errors.As(err, &se) {
			line := 1 + bytes.Count(raw[:min(int(se.Offset), len(raw))], []byte("\n"))
			return nil, fmt.Errorf("%s:%d: %w: %w", path, line, ErrNotAnalysis, err)
		}
		return nil, fmt.Errorf("%s: %w: %w", path, ErrNotAnalysis, err)
	}
	if r.Schema != Schema {
		return nil, fmt.Errorf("%s: %w: schema is %q, want %q", path, ErrNotAnalysis, r.Schema, Schema)
	}
	return &r, nil
}
