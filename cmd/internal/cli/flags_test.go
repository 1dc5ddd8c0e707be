package cli

import "testing"

func TestEditDistance(t *testing.T) {
	for _, tc := range []struct {
		a, b string
		d    int
	}{
		{"", "", 0}, {"a", "", 1}, {"", "abc", 3},
		{"kitten", "sitting", 3}, // the textbook Levenshtein example
		{"profle", "profile", 1}, {"jsno", "json", 1}, {"ca", "abc", 3},
		{"wärme", "warme", 1},
	} {
		if got := EditDistance(tc.a, tc.b); got != tc.d {
			t.Errorf("EditDistance(%q, %q) = %d; want %d", tc.a, tc.b, got, tc.d)
		}
		if got := EditDistance(tc.b, tc.a); got != tc.d {
			t.Errorf("EditDistance(%q, %q) = %d; want %d", tc.b, tc.a, got, tc.d)
		}
	}
}
