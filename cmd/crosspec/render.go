package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"strings"

	"github.com/olekukonko/tablewriter"
	"github.com/olekukonko/tablewriter/renderer"
	"github.com/olekukonko/tablewriter/tw"
)

// Output formats of the --format flag.
const (
	formatTable    = "table"
	formatCSV      = "csv"
	formatJSON     = "json"
	formatLaTeX    = "latex"
	formatMarkdown = "markdown"
)

var formats = []string{formatTable, formatCSV, formatJSON, formatLaTeX, formatMarkdown}

func checkFormat(f string) error {
	for _, g := range formats {
		if f == g {
			return nil
		}
	}
	return usagef("--format %q: expected one of %s", f, strings.Join(formats, ", "))
}

// grid is a table of strings with a header, rendered in any of the text
// formats.
type grid struct {
	header []string
	rows   [][]string
}

func (g *grid) add(cells ...string) { g.rows = append(g.rows, cells) }

// render writes the grid in format (table, csv, markdown or latex).
func (g *grid) render(w io.Writer, format string) error {
	switch format {
	case formatCSV:
		cw := csv.NewWriter(w)
		if err := cw.Write(g.header); err != nil {
			return err
		}
		if err := cw.WriteAll(g.rows); err != nil {
			return err
		}
		cw.Flush()
		return cw.Error()
	case formatLaTeX:
		return g.renderLaTeX(w)
	case formatMarkdown:
		escape := func(cells []string) []string {
			out := make([]string, len(cells))
			for i, c := range cells {
				out[i] = strings.ReplaceAll(c, "|", `\|`)
			}
			return out
		}
		t := tablewriter.NewTable(w,
			tablewriter.WithRenderer(renderer.NewMarkdown()),
			tablewriter.WithHeaderAutoFormat(tw.Off),
			tablewriter.WithHeaderAlignment(tw.AlignLeft),
			tablewriter.WithRowAlignment(tw.AlignLeft),
		)
		t.Header(escape(g.header))
		for _, r := range g.rows {
			if err := t.Append(escape(r)); err != nil {
				return err
			}
		}
		return t.Render()
	default:
		t := tablewriter.NewTable(w,
			tablewriter.WithHeaderAutoFormat(tw.Off),
			tablewriter.WithHeaderAlignment(tw.AlignLeft),
			tablewriter.WithRowAlignment(tw.AlignLeft),
		)
		t.Header(g.header)
		for _, r := range g.rows {
			if err := t.Append(r); err != nil {
				return err
			}
		}
		return t.Render()
	}
}

// latexEscaper escapes the characters that TeX treats specially.
var latexEscaper = strings.NewReplacer(`\`, `\textbackslash{}`, "&", `\&`, "%", `\%`, "$", `\$`, "#", `\#`, "_", `\_`, "{", `\{`, "}", `\}`, "~", `\textasciitilde{}`, "^", `\textasciicircum{}`)

func (g *grid) renderLaTeX(w io.Writer) error {
	var b strings.Builder
	fmt.Fprintf(&b, "\\begin{tabular}{%s}\n\\hline\n", strings.Repeat("l", len(g.header)))
	row := func(cells []string) {
		esc := make([]string, len(cells))
		for i, c := range cells {
			esc[i] = latexEscaper.Replace(c)
		}
		fmt.Fprintf(&b, "%s \\\\\n", strings.Join(esc, " & "))
	}
	row(g.header)
	b.WriteString("\\hline\n")
	for _, r := range g.rows {
		row(r)
	}
	b.WriteString("\\hline\n\\end{tabular}\n")
	_, err := io.WriteString(w, b.String())
	return err
}

// writeJSON writes v as one indented JSON document.
// estimatesNote ends every report with error bars: how to take them.
const estimatesNote = "Error bars are estimates from the observed convergence, not rigorous bounds; value(error) gives the error in the last digits shown: 1.234(5) is 1.234 ± 0.005."

// writeNotes writes the lines under a report's tables, then estimatesNote
// (writeLines).
func writeNotes(w io.Writer, format string, lines []string) {
	writeLines(w, format, append(lines, estimatesNote))
}

// writeLines writes the lines under a report's tables: as they are in a
// table, as a Markdown list (a line indented by two spaces nested under
// the one before), as LaTeX comments; nothing in CSV.
func writeLines(w io.Writer, format string, lines []string) {
	switch format {
	case formatCSV:
		return
	case formatLaTeX:
		for _, l := range lines {
			fmt.Fprintln(w, "% "+l)
		}
	case formatMarkdown:
		fmt.Fprintln(w)
		for _, l := range lines {
			if rest, nested := strings.CutPrefix(l, "  "); nested {
				fmt.Fprintln(w, "  - "+strings.TrimLeft(rest, " "))
			} else {
				fmt.Fprintln(w, "- "+l)
			}
		}
	default:
		for _, l := range lines {
			fmt.Fprintln(w, l)
		}
	}
}

func writeJSON(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(v)
}
