package layering

import (
	"bufio"
	"fmt"
	"os"
	"os/exec"
	"slices"
	"strings"
	"testing"
)

const (
	module     = "huesolve"
	guide      = "../../DEVELOPERS.md"
	beginMark  = "<!-- layering:begin -->"
	endMark    = "<!-- layering:end -->"
	noImports  = "nothing"
	tableLabel = "DEVELOPERS.md's import table"
)

// row is one line of the table: a package and the project packages it may
// import directly.
type row struct {
	pkg     string
	allowed []string
	line    int
}

// readTable reads the rows between the layering markers of DEVELOPERS.md.
// Each row is "| `pkg` | `a`, `b` | why |" or "| `pkg` | nothing | why |",
// with package paths relative to the module; rows are ordered bottom-up,
// so a package may only import packages of earlier rows.
func readTable(t *testing.T) []row {
	t.Helper()
	f, err := os.Open(guide)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	var rows []row
	in := false
	sc := bufio.NewScanner(f)
	for n := 1; sc.Scan(); n++ {
		line := strings.TrimSpace(sc.Text())
		switch {
		case line == beginMark:
			in = true
			continue
		case line == endMark:
			in = false
			continue
		}
		if !in || !strings.HasPrefix(line, "|") || strings.HasPrefix(line, "| package") || strings.HasPrefix(line, "| ---") {
			continue
		}
		cells := strings.Split(strings.Trim(line, "|"), "|")
		if len(cells) < 2 {
			t.Fatalf("%s:%d: a row needs the package and what it may import", guide, n)
		}
		pkgs := ticked(cells[0])
		if len(pkgs) != 1 {
			t.Fatalf("%s:%d: the first cell must name one package in backquotes, not %q", guide, n, cells[0])
		}
		r := row{pkg: pkgs[0], line: n}
		if strings.TrimSpace(cells[1]) != noImports {
			r.allowed = ticked(cells[1])
			if len(r.allowed) == 0 {
				t.Fatalf("%s:%d: the second cell lists packages in backquotes or says %q", guide, n, noImports)
			}
		}
		rows = append(rows, r)
	}
	if err := sc.Err(); err != nil {
		t.Fatal(err)
	}
	if len(rows) == 0 {
		t.Fatalf("%s: no import table between %q and %q", guide, beginMark, endMark)
	}
	return rows
}

// ticked returns the `quoted` words of s.
func ticked(s string) []string {
	parts := strings.Split(s, "`")
	var out []string
	for i := 1; i < len(parts); i += 2 {
		out = append(out, parts[i])
	}
	return out
}

// goList runs `go list` from the module root with the given arguments and
// returns its output lines.
func goList(t *testing.T, args ...string) []string {
	t.Helper()
	gobin, err := exec.LookPath("go")
	if err != nil {
		t.Fatalf("the layering test runs `go list`: %v", err)
	}
	cmd := exec.Command(gobin, append([]string{"list"}, args...)...)
	cmd.Dir = "../.."
	out, err := cmd.Output()
	if err != nil {
		if ee, ok := err.(*exec.ExitError); ok {
			t.Fatalf("go list %s: %v\n%s", strings.Join(args, " "), err, ee.Stderr)
		}
		t.Fatalf("go list %s: %v", strings.Join(args, " "), err)
	}
	return strings.Fields(string(out))
}

// local turns "huesolve/x/y" into "x/y"; other paths give "".
func local(path string) string {
	if rest, ok := strings.CutPrefix(path, module+"/"); ok {
		return rest
	}
	return ""
}

// graph is what `go list` says of the module: each package (relative to
// the module) with its direct project imports and its project dependencies.
type graph struct {
	pkgs    []string
	imports map[string][]string
	deps    map[string][]string
}

// readGraph asks `go list` for the module's packages and their imports.
func readGraph(t *testing.T) graph {
	t.Helper()
	g := graph{imports: map[string][]string{}, deps: map[string][]string{}}
	for _, full := range goList(t, "./...") {
		pkg := local(full)
		g.pkgs = append(g.pkgs, pkg)
		for _, imp := range goList(t, "-f", `{{join .Imports " "}}`, full) {
			if l := local(imp); l != "" {
				g.imports[pkg] = append(g.imports[pkg], l)
			}
		}
		for _, dep := range goList(t, "-deps", full) {
			if l := local(dep); l != "" && l != pkg {
				g.deps[pkg] = append(g.deps[pkg], l)
			}
		}
	}
	return g
}

// violations compares the graph with the table: every package has a row;
// it imports directly only what its row allows; a row allows only
// packages of rows above it (so the graph runs one way); and everything
// `go list -deps` gives stays inside what the table allows transitively.
func violations(rows []row, g graph) []string {
	var bad []string
	byPkg := map[string]row{}
	order := map[string]int{}
	for i, r := range rows {
		if _, dup := byPkg[r.pkg]; dup {
			bad = append(bad, fmt.Sprintf("line %d: %s has two rows", r.line, r.pkg))
		}
		byPkg[r.pkg] = r
		order[r.pkg] = i
	}
	for _, r := range rows {
		for _, a := range r.allowed {
			j, ok := order[a]
			switch {
			case !ok:
				bad = append(bad, fmt.Sprintf("line %d: %s may import %s, which has no row", r.line, r.pkg, a))
			case j >= order[r.pkg]:
				bad = append(bad, fmt.Sprintf("line %d: %s may import %s, which stands below it: rows go bottom-up", r.line, r.pkg, a))
			}
		}
		if !slices.Contains(g.pkgs, r.pkg) {
			bad = append(bad, fmt.Sprintf("line %d: %s is not a package of the module", r.line, r.pkg))
		}
	}
	closure := func(pkg string) map[string]bool {
		seen := map[string]bool{}
		var walk func(string)
		walk = func(p string) {
			for _, a := range byPkg[p].allowed {
				if !seen[a] {
					seen[a] = true
					walk(a)
				}
			}
		}
		walk(pkg)
		return seen
	}
	for _, pkg := range g.pkgs {
		r, ok := byPkg[pkg]
		if !ok {
			bad = append(bad, fmt.Sprintf("%s has no row", pkg))
			continue
		}
		for _, imp := range g.imports[pkg] {
			if !slices.Contains(r.allowed, imp) {
				bad = append(bad, fmt.Sprintf("%s imports %s; its row (line %d) does not allow it", pkg, imp, r.line))
			}
		}
		within := closure(pkg)
		for _, dep := range g.deps[pkg] {
			if !within[dep] {
				bad = append(bad, fmt.Sprintf("%s depends on %s (go list -deps), outside what the table allows it", pkg, dep))
			}
		}
	}
	return bad
}

// TestImportsFollowTable checks the module against DEVELOPERS.md's table.
func TestImportsFollowTable(t *testing.T) {
	for _, v := range violations(readTable(t), readGraph(t)) {
		t.Errorf("%s: %s", tableLabel, v)
	}
}

// TestViolationsSeen checks that the comparison catches each kind of
// drift on a small made-up module.
func TestViolationsSeen(t *testing.T) {
	rows := []row{
		{pkg: "low", line: 1},
		{pkg: "mid", allowed: []string{"low"}, line: 2},
		{pkg: "top", allowed: []string{"mid"}, line: 3},
	}
	ok := graph{
		pkgs:    []string{"low", "mid", "top"},
		imports: map[string][]string{"mid": {"low"}, "top": {"mid"}},
		deps:    map[string][]string{"mid": {"low"}, "top": {"mid", "low"}},
	}
	if v := violations(rows, ok); len(v) != 0 {
		t.Fatalf("a graph that follows the table: %q", v)
	}
	cases := map[string]struct {
		rows []row
		g    graph
		want string
	}{
		"upward import":          {rows, graph{pkgs: ok.pkgs, imports: map[string][]string{"low": {"top"}}, deps: map[string][]string{"low": {"top", "mid"}}}, "low imports top"},
		"skipped layer":          {rows, graph{pkgs: ok.pkgs, imports: map[string][]string{"top": {"low"}}, deps: map[string][]string{"top": {"low"}}}, "top imports low"},
		"package without row":    {rows, graph{pkgs: append(slices.Clone(ok.pkgs), "new")}, "new has no row"},
		"row without package":    {rows, graph{pkgs: []string{"low", "mid"}}, "top is not a package"},
		"row allows a later row": {[]row{{pkg: "a", allowed: []string{"b"}, line: 1}, {pkg: "b", line: 2}}, graph{pkgs: []string{"a", "b"}}, "stands below it"},
		"indirect dependency":    {rows, graph{pkgs: ok.pkgs, deps: map[string][]string{"low": {"mid"}}}, "low depends on mid"},
	}
	for name, c := range cases {
		v := violations(c.rows, c.g)
		if !slices.ContainsFunc(v, func(s string) bool { return strings.Contains(s, c.want) }) {
			t.Errorf("%s: want a violation containing %q, got %q", name, c.want, v)
		}
	}
}
