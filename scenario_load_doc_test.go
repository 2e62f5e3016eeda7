package coilkick

import (
	"flag"
	"fmt"
	"os"
	"slices"
	"strings"
	"testing"
)

var updateKeys = flag.Bool("update-keys", false, "rewrite the key reference in README.md and in Parse's doc comment from the key specifications")

// keyComment is the comment of key k in the key reference: optional and
// its default, the modes or types it is for, and its doc.
func keyComment(k *keySpec) string {
	var parts []string
	switch k.need {
	case optional:
		parts = append(parts, "optional, default "+k.defText)
	case whenGiven:
		parts = append(parts, "optional")
	}
	if k.only != nil {
		parts = append(parts, "for "+strings.Join(k.only, ", "))
	}
	if k.doc != "" {
		parts = append(parts, k.doc)
	}
	return strings.Join(parts, "; ")
}

// keyReference is every section and key of the specs as YAML: the key, an
// example value and a comment (keyComment) from column 43.
func keyReference() []string {
	var lines []string
	var walk func(sec *sectionSpec, indent string)
	walk = func(sec *sectionSpec, indent string) {
		for _, k := range sec.keys {
			line := indent + k.name + ":"
			if k.kind != keySection {
				line += " " + k.example
			}
			if c := keyComment(k); c != "" {
				line += strings.Repeat(" ", max(1, 42-len([]rune(line)))) + "# " + c
			}
			lines = append(lines, line)
			if k.sub != nil {
				walk(k.sub, indent+"  ")
			}
		}
	}
	walk(topSection, "")
	return lines
}

// rangeTable is the README's table of ranges: a row for every key with a
// range (and its variants), in the order of the key reference.
func rangeTable() []string {
	lines := []string{"| key | accepted range | note |", "|---|---|---|"}
	row := func(path string, k *keySpec) {
		text := k.rng.text
		if k.rng.whole {
			text = "whole number " + text
		}
		lines = append(lines, fmt.Sprintf("| `%s` | %s | %s |", k.rangeKey(path), text, k.rng.note))
	}
	walkSpecs(topSection, func(sec *sectionSpec) {
		for _, k := range sec.keys {
			if k.rng.text == "" {
				continue
			}
			row(sec.path, k)
			for _, v := range sec.variants {
				if v.name == k.name {
					row(sec.path, v)
				}
			}
		}
	})
	return lines
}

// generated is one generated region of a file: the lines after the line
// that starts with begin, up to the line that starts with end (or, with end
// "", the first line without prefix). Each generated line is prefix + line.
type generated struct {
	file, begin, end, prefix string
	lines                    []string
}

// check compares the region with its lines, or rewrites it (-update-keys).
func (g generated) check(t *testing.T) {
	t.Helper()
	data, err := os.ReadFile(g.file)
	if err != nil {
		t.Fatal(err)
	}
	all := strings.SplitAfter(string(data), "\n")
	from := slices.IndexFunc(all, func(l string) bool { return strings.HasPrefix(l, g.begin) })
	if from < 0 {
		t.Fatalf("%s: no line starting with %q", g.file, g.begin)
	}
	from++
	to := from
	for to < len(all) && (g.end == "" && strings.HasPrefix(all[to], g.prefix) || g.end != "" && !strings.HasPrefix(all[to], g.end)) {
		to++
	}
	if g.end != "" && to == len(all) {
		t.Fatalf("%s: no line starting with %q after %q", g.file, g.end, g.begin)
	}
	want := make([]string, len(g.lines))
	for i, l := range g.lines {
		want[i] = strings.TrimRight(g.prefix+l, " \t") + "\n"
	}
	if slices.Equal(all[from:to], want) {
		return
	}
	if *updateKeys {
		out := slices.Concat(all[:from], want, all[to:])
		if err := os.WriteFile(g.file, []byte(strings.Join(out, "")), 0o644); err != nil {
			t.Fatal(err)
		}
		t.Logf("%s: rewrote %d lines after %q", g.file, len(want), g.begin)
		return
	}
	got := all[from:to]
	for i := 0; i < max(len(got), len(want)); i++ {
		var g1, w1 string
		if i < len(got) {
			g1 = got[i]
		}
		if i < len(want) {
			w1 = want[i]
		}
		if g1 != w1 {
			t.Errorf("%s, line %d after %q:\n got %q\nwant %q", g.file, i+1, g.begin, g1, w1)
			break
		}
	}
	t.Errorf("%s: the key reference after %q differs from the key specifications (%d lines, want %d): "+
		"regenerate it with go test -run TestScenarioKeyReference -update-keys .", g.file, g.begin, len(got), len(want))
}

// TestScenarioKeyReference: the README's key reference and range table and
// the key list in Parse's doc comment are those the key specifications
// give, so that a key added, renamed or removed in a spec (or in the text
// alone) fails here until they are regenerated (-update-keys).
func TestScenarioKeyReference(t *testing.T) {
	keys := keyReference()
	for _, g := range []generated{
		{file: "README.md", begin: "<!-- key reference:", end: "<!-- end of key reference", prefix: "",
			lines: slices.Concat([]string{"```yaml"}, keys, []string{"```"})},
		{file: "README.md", begin: "<!-- range table:", end: "<!-- end of range table", prefix: "", lines: rangeTable()},
		{file: "scenario_load.go", begin: "// the same list and the ranges):", end: "func Parse(", prefix: "//\t",
			lines: slices.Concat([]string{""}, keys)},
	} {
		g.check(t)
	}
}

// Parse's doc comment names every section of the scenario file (the
// generated list above holds each as "section:" at the start of a line).
func TestParseDocSections(t *testing.T) {
	t.Parallel()
	data, err := os.ReadFile("scenario_load.go")
	if err != nil {
		t.Fatal(err)
	}
	for _, k := range topSection.keys {
		if k.kind == keySection && !strings.Contains(string(data), "\n//\t"+k.name+":") {
			t.Errorf("Parse's doc comment does not list the section %q", k.name)
		}
	}
}
