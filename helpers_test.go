package coilkick

import (
	"errors"
	"testing"
)

func errorsIs(err, target error) bool { return errors.Is(err, target) }

// modelFromText parses and builds a scenario given as text (a demo with
// keys replaced), failing the test on an error.
func modelFromText(t testing.TB, text, name string) *Model {
	t.Helper()
	s, err := Parse([]byte(text), name)
	if err != nil {
		t.Fatal(err)
	}
	md, err := Build(s)
	if err != nil {
		t.Fatal(err)
	}
	return md
}
