package coilkick

import (
	"errors"
	"strings"
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

// errorHas reports a test error unless err is an error whose message
// contains every part of want; label names the case. It returns whether
// err was an error at all.
func errorHas(t testing.TB, label string, err error, want []string) bool {
	t.Helper()
	if err == nil {
		t.Errorf("%s: accepted", label)
		return false
	}
	for _, w := range want {
		if !strings.Contains(err.Error(), w) {
			t.Errorf("%s: error lacks %q:\n%v", label, w, err)
		}
	}
	return true
}
