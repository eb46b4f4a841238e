package examples_test

import (
	"bytes"
	"flag"
	"os"
	"strings"
	"testing"

	"enough/designs"
	"enough/designs/report"
	"enough/designs/review"
	"enough/examples"
)

var updateReadme = flag.Bool("update-readme", false, "rewrite the excerpt of README's worked example of enough review from the review's output")

// excerptSections are the sections of the review README's worked example
// shows, with the title and subtitle before them.
var excerptSections = []string{"Conclusion", "The stated figures against the recomputation", "Where the difference may come from", "Requests to the investigators"}

// excerptOf cuts the README's excerpt out of a review in Markdown: the
// title, the subtitle and the sections of excerptSections, "..." between
// them.
func excerptOf(md string) string {
	parts := strings.Split(md, "\n## ")
	var out []string
	for _, p := range parts[1:] {
		heading, _, _ := strings.Cut(p, "\n")
		for _, h := range excerptSections {
			if heading == h {
				out = append(out, "## "+strings.TrimSpace(p))
			}
		}
	}
	return strings.TrimSpace(parts[0]) + "\n\n" + strings.Join(out, "\n\n...\n\n")
}

// readmeSection returns the README's section under heading (up to the
// next section of the same level outside a code block).
func readmeSection(t *testing.T, heading string) string {
	t.Helper()
	readme, err := os.ReadFile("../README.md")
	if err != nil {
		t.Fatal(err)
	}
	_, section, ok := strings.Cut(string(readme), "\n"+heading+"\n")
	if !ok {
		t.Fatalf("README has no section %q", heading)
	}
	lines := strings.Split(section, "\n")
	code := false
	for i, l := range lines {
		if strings.HasPrefix(l, "```") {
			code = !code
		}
		if !code && strings.HasPrefix(l, "## ") {
			return strings.Join(lines[:i], "\n")
		}
	}
	return section
}

// TestReadmeReview checks the README's section "Rechecking a protocol": it
// documents every slip of the diagnosis and every verdict, and its worked
// example is real output of the example it names, line for line
// (regenerate it with go test ./examples -run TestReadmeReview
// -update-readme, and review the diff).
func TestReadmeReview(t *testing.T) {
	section := readmeSection(t, "## Rechecking a protocol")
	for _, s := range review.Slips {
		if !strings.Contains(section, "| `"+s.ID+"` |") {
			t.Errorf("slip %s is not in README's table of slips", s.ID)
		}
	}
	for _, v := range []string{review.Consistent, review.UnderPowered, review.LargerThanNeeded, review.Incomplete} {
		if !strings.Contains(section, "| `"+v+"` |") {
			t.Errorf("verdict %s is not in README's table of verdicts", v)
		}
	}

	const name = "review-under-powered-wound-dressing.yaml"
	_, excerpt, ok := strings.Cut(section, "```markdown\n")
	if !ok {
		t.Fatal("README's worked example has no ```markdown excerpt")
	}
	excerpt, _, _ = strings.Cut(excerpt, "\n```")
	data, _ := examples.Files.ReadFile(name)
	in, err := designs.ParseReview("examples/"+name, data, nil)
	if err != nil {
		t.Fatal(err)
	}
	rep, err := review.Run(in)
	if err != nil {
		t.Fatal(err)
	}
	var b bytes.Buffer
	if err := report.WriteReview(&b, rep, in, report.ReviewSource{File: "examples/" + name, Data: data}, "markdown"); err != nil {
		t.Fatal(err)
	}
	if *updateReadme {
		readme, err := os.ReadFile("../README.md")
		if err != nil {
			t.Fatal(err)
		}
		doc := string(readme)
		start := strings.Index(doc, "```markdown\n# Sample-size recheck")
		end := strings.Index(doc[start+1:], "\n```\n")
		if start < 0 || end < 0 {
			t.Fatal("README has no excerpt to update")
		}
		doc = doc[:start] + "```markdown\n" + excerptOf(b.String()) + doc[start+1+end:]
		if err := os.WriteFile("../README.md", []byte(doc), 0o644); err != nil {
			t.Fatal(err)
		}
		return
	}
	out := "\n" + b.String() + "\n"
	lines := 0
	for _, l := range strings.Split(excerpt, "\n") {
		if l == "" || l == "..." {
			continue
		}
		lines++
		if !strings.Contains(out, "\n"+l+"\n") {
			t.Errorf("README's worked example has a line the review of %s does not write: %q", name, l)
		}
	}
	if lines < 10 {
		t.Errorf("README's worked example has only %d lines", lines)
	}
	// The worked example's specification is the example's, as written.
	_, yamlBlock, _ := strings.Cut(section, "```yaml\n")
	yamlBlock, _, _ = strings.Cut(yamlBlock, "```")
	if !strings.HasSuffix(string(data), yamlBlock) {
		t.Errorf("README's worked example is not the end of examples/%s", name)
	}
}
