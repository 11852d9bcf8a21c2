package report

import (
	"bytes"
	"io"
	"regexp"
	"strings"
	"unicode/utf8"
)

// ansiEscape matches the SGR escape sequences terminal colour uses.
var ansiEscape = regexp.MustCompile("\x1b\\[[0-9;]*m")

// VisibleWidth is the width of s on a terminal: its runes, not counting
// colour escape sequences. (Every rune biaslint prints is one column
// wide: ASCII, µ, Ω.)
func VisibleWidth(s string) int {
	return utf8.RuneCountInString(ansiEscape.ReplaceAllString(s, ""))
}

// TabWriter aligns tab-separated cells into columns, as text/tabwriter
// does with a padding of 2 and no minimum width, but measuring each cell
// by VisibleWidth, so that coloured cells line up with plain ones. Every
// cell that a tab ends is padded to its column's width plus 2; the last
// cell of a line is not padded. Write buffers; Flush writes the table.
type TabWriter struct {
	w   io.Writer
	buf bytes.Buffer
}

// NewTabWriter returns a TabWriter writing to w.
func NewTabWriter(w io.Writer) *TabWriter { return &TabWriter{w: w} }

// Write buffers p.
func (t *TabWriter) Write(p []byte) (int, error) { return t.buf.Write(p) }

// Flush aligns the buffered lines and writes them.
func (t *TabWriter) Flush() error {
	text := t.buf.String()
	t.buf.Reset()
	lines := strings.SplitAfter(text, "\n")
	var width []int
	cells := make([][]string, len(lines))
	for i, ln := range lines {
		cells[i] = strings.Split(strings.TrimSuffix(ln, "\n"), "\t")
		for j, c := range cells[i][:len(cells[i])-1] {
			if j >= len(width) {
				width = append(width, 0)
			}
			width[j] = max(width[j], VisibleWidth(c))
		}
	}
	var out strings.Builder
	for i, ln := range lines {
		if ln == "" {
			continue
		}
		row := cells[i]
		for j, c := range row {
			out.WriteString(c)
			if j < len(row)-1 {
				out.WriteString(strings.Repeat(" ", width[j]-VisibleWidth(c)+2))
			}
		}
		if strings.HasSuffix(ln, "\n") {
			out.WriteByte('\n')
		}
	}
	_, err := io.WriteString(t.w, out.String())
	return err
}
