package main

import (
	"bytes"
	"context"
	"os"
	"path/filepath"
	"strings"
	"testing"
)

func runCmdline(t *testing.T, args ...string) (code int, stdout, stderr string) {
	t.Helper()
	var out, errb bytes.Buffer
	env := &runEnv{stdout: &out, stderr: &errb, stdin: strings.NewReader(""), argv: append([]string{"fgauge"}, args...)}
	code = run(context.Background(), env, args)
	return code, out.String(), errb.String()
}

func writeTestInput(t *testing.T, dir, name, text string) string {
	t.Helper()
	p := filepath.Join(dir, name)
	if err := os.WriteFile(p, []byte(text), 0o644); err != nil {
		t.Fatal(err)
	}
	return p
}

// Pedigree F of a sire-daughter mating is 1/4 and full sibs have
// coancestry 1/4 (common practice).
func TestPedigreeCommand(t *testing.T) {
	dir := t.TempDir()
	ped := writeTestInput(t, dir, "herd.tsv", "id\tsire\tdam\tsex\nkid\tbuck\tdoe2\tF\ndoe2\tbuck\tdoe1\tF\nsib\tbuck\tdoe1\tM\n")
	pairs := writeTestInput(t, dir, "pairs.tsv", "doe2\tsib\nkid\tkid\n")
	out := filepath.Join(dir, "f.tsv")
	code, _, errText := runCmdline(t, "pedigree", ped, "-o", out, "--pairs", pairs)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errText)
	}
	got, _ := os.ReadFile(out)
	want := "id\tsire\tdam\tf_pedigree\n" +
		"buck\tNA\tNA\t0\n" + "doe1\tNA\tNA\t0\n" +
		"kid\tbuck\tdoe2\t0.25\n" + "doe2\tbuck\tdoe1\t0\n" + "sib\tbuck\tdoe1\t0\n"
	if string(got) != want {
		t.Errorf("table:\n%s\nwant:\n%s", got, want)
	}
	co, _ := os.ReadFile(filepath.Join(dir, "f_coancestry.tsv"))
	// kid with itself: (1 + F)/2 = 0.625.
	if wantCo := "id_a\tid_b\tcoancestry\ndoe2\tsib\t0.25\nkid\tkid\t0.625\n"; string(co) != wantCo {
		t.Errorf("coancestry:\n%s\nwant:\n%s", co, wantCo)
	}
}

func TestPedigreeCommandErrors(t *testing.T) {
	dir := t.TempDir()
	tests := []struct {
		name, text string
		wantCode   int
		wantMsg    string
	}{
		{"loop", "a\tb\t0\nb\ta\t0\n", exitBadInput, "loop.tsv:"},
		{"duplicate", "a\t0\t0\na\t0\t0\n", exitBadInput, "dup.tsv:2: duplicate id"},
	}
	for _, tc := range tests {
		t.Run(tc.name, func(t *testing.T) {
			file := "loop.tsv"
			if tc.name == "duplicate" {
				file = "dup.tsv"
			}
			p := writeTestInput(t, dir, file, tc.text)
			code, _, errText := runCmdline(t, "pedigree", p)
			if code != tc.wantCode || !strings.Contains(errText, tc.wantMsg) {
				t.Errorf("exit %d, stderr %q; want exit %d containing %q", code, errText, tc.wantCode, tc.wantMsg)
			}
		})
	}
	if code, _, _ := runCmdline(t, "pedigree"); code != exitBadInput {
		t.Errorf("no argument: exit %d", code)
	}
	if code, _, _ := runCmdline(t, "pedigree", "--help"); code != exitOK {
		t.Errorf("--help: exit %d", code)
	}
}

func TestPedigreeCommandSexWarning(t *testing.T) {
	dir := t.TempDir()
	ped := writeTestInput(t, dir, "sex.tsv", "b\t0\t0\tF\nd\t0\t0\tF\nk\tb\td\tM\n")
	code, out, errText := runCmdline(t, "pedigree", ped)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errText)
	}
	if !strings.Contains(errText, `warning: `+ped+`:3: sire "b" of "k" is recorded as female`) {
		t.Errorf("stderr lacks the sex warning: %q", errText)
	}
	if !strings.HasPrefix(out, "id\tsire\tdam\tf_pedigree\n") {
		t.Errorf("stdout = %q", out)
	}
}
