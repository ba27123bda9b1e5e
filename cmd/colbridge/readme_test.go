package main

import (
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// TestREADMERecipes runs every shell block of the README's "Recipes" section, as written,
// in a fresh directory per recipe with the command on PATH as `colbridge`: the docs stay
// true (issue 7). The recipes use small meshes so this takes a few seconds.
func TestREADMERecipes(t *testing.T) {
	if testing.Short() {
		t.Skip("builds the command and runs the recipes")
	}
	bash, err := exec.LookPath("bash")
	if err != nil {
		t.Skip("bash is not installed")
	}
	readme, err := os.ReadFile("../../README.md")
	if err != nil {
		t.Fatal(err)
	}
	text := string(readme)
	start := strings.Index(text, "## Recipes")
	end := strings.Index(text[start+1:], "\n## ")
	if start < 0 || end < 0 {
		t.Fatal("README has no Recipes section")
	}
	section := text[start : start+1+end]
	bin := t.TempDir()
	build := exec.Command("go", "build", "-o", filepath.Join(bin, "colbridge"), ".")
	if out, err := build.CombinedOutput(); err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	// Recipes are "### " subsections; blocks of one recipe share a directory.
	recipes := strings.Split(section, "\n### ")[1:]
	block := regexp.MustCompile("(?s)```sh\n(.*?)```")
	if len(recipes) < 3 {
		t.Fatalf("found %d recipes, want the three tasks", len(recipes))
	}
	for _, r := range recipes {
		title := strings.SplitN(r, "\n", 2)[0]
		dir := t.TempDir()
		for i, m := range block.FindAllStringSubmatch(r, -1) {
			cmd := exec.Command(bash, "-e", "-o", "pipefail", "-c", m[1])
			cmd.Dir = dir
			cmd.Env = append(os.Environ(), "PATH="+bin+string(os.PathListSeparator)+os.Getenv("PATH"))
			if out, err := cmd.CombinedOutput(); err != nil {
				t.Errorf("recipe %q, block %d failed: %v\n%s\n--- block ---\n%s", title, i+1, err, out, m[1])
			}
		}
	}
}
