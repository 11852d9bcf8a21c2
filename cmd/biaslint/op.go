package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"math"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rules/report"
)

func opCommand() *cli.Command {
	return &cli.Command{
		Name:      "op",
		Usage:     "solve and print the DC operating point of every BJT",
		ArgsUsage: "FILE...",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "format", Aliases: []string{"f"}, Value: "text", Usage: formatFlagUsage + ": text or json"},
			tempFlag, includeDirFlag,
			&cli.BoolFlag{Name: "thermal", Usage: "solve each transistor at its junction temperature T + P*RthJA (ratings from the parts library and *@part annotations)"},
			colorFlag,
			outputFlag,
			demoFlag,
		},
		Action: runOp,
	}
}

// opFile is one file's operating point in the shape `op --format json` prints.
type opFile struct {
	File        string             `json:"file"`
	Title       string             `json:"title"`
	Temperature float64            `json:"temperature"`
	Method      string             `json:"method"`
	Iterations  int                `json:"iterations"`
	Nodes       map[string]float64 `json:"nodes"`
	Sources     map[string]float64 `json:"sources"`
	BJTs        []opBJT            `json:"bjts"`

	nodeOrder []string
}

// opBJT is one transistor's raw terminal quantities (SI units).
type opBJT struct {
	Name     string  `json:"name"`
	Model    string  `json:"model"`
	Polarity string  `json:"polarity"`
	VBE      float64 `json:"vbe"`
	VBC      float64 `json:"vbc"`
	VCE      float64 `json:"vce"`
	IC       float64 `json:"ic"`
	IB       float64 `json:"ib"`
	IE       float64 `json:"ie"`
	Power    float64 `json:"power"`
	Region   string  `json:"region"`
	// Tj is the junction temperature T + P*RthJA, C (null when RthJA is
	// not known).
	Tj  *float64 `json:"tj"`
	Pos string   `json:"position"`
}

func runOp(c *cli.Context) error {
	format := c.String("format")
	if format != "text" && format != "json" {
		return badInput(fmt.Errorf("biaslint: --format must be text or json, not %q", format))
	}
	inputs, err := inputsOf(c)
	if err != nil {
		return err
	}
	var results []opFile
	var problems []string
	for _, in := range inputs {
		circ, err := in.read()
		if err != nil {
			problems = append(problems, err.Error())
			continue
		}
		r, err := solveOp(c, circ)
		if err != nil {
			problems = append(problems, err.Error())
			continue
		}
		results = append(results, r)
	}
	if len(problems) > 0 {
		return badInput(fmt.Errorf("%s", strings.Join(problems, "\n")))
	}
	var out bytes.Buffer
	switch format {
	case "json":
		enc := json.NewEncoder(&out)
		enc.SetIndent("", "  ")
		enc.SetEscapeHTML(false)
		if err := enc.Encode(struct {
			FormatVersion int      `json:"format_version"`
			Results       []opFile `json:"results"`
		}{report.FormatVersion, results}); err != nil {
			return badInput(err)
		}
	default:
		on, err := useColor(c, c.App.Writer)
		if err != nil {
			return err
		}
		writeOpText(&out, results, palette{on: on})
	}
	return emit(c, &out)
}

// solveOp solves one circuit and converts the result to the report shape.
func solveOp(c *cli.Context, circ *netlist.Circuit) (opFile, error) {
	t, err := tempOf(c, "temp")
	if err != nil {
		return opFile{}, err
	}
	if t == nil {
		t = &circ.Options.Temp
	}
	an, err := checks.Analyze(circ, checks.Options{Temp: t, Ambient: t, Thermal: c.Bool("thermal")})
	if err != nil {
		return opFile{}, err
	}
	res := an.Cases[0].Solution
	tj := map[string]float64{}
	for _, q := range an.Cases[0].Transistors {
		tj[q.Name] = q.Tj
	}
	f := opFile{
		File:        circ.File,
		Title:       circ.Title,
		Temperature: res.Temp,
		Method:      string(res.Method),
		Iterations:  res.Iterations,
		Nodes:       map[string]float64{},
		Sources:     map[string]float64{},
		BJTs:        []opBJT{},
	}
	for _, n := range res.Nodes {
		f.Nodes[n.Name] = n.V
		f.nodeOrder = append(f.nodeOrder, n.Name)
	}
	for _, b := range res.Branches {
		if b.Kind == 'V' {
			f.Sources[b.Name] = b.I
		}
	}
	for _, q := range res.BJTs {
		f.BJTs = append(f.BJTs, opBJT{
			Name: q.Name, Model: q.Model, Polarity: q.Polarity,
			VBE: q.VBE, VBC: q.VBC, VCE: q.VCE, IC: q.IC, IB: q.IB, IE: q.IE,
			Power: q.Power, Region: string(q.Region), Pos: q.Pos.String(),
		})
		if v, ok := tj[q.Name]; ok && !math.IsNaN(v) {
			f.BJTs[len(f.BJTs)-1].Tj = &v
		}
	}
	return f, nil
}

// writeOpText prints the readable operating-point report.
func writeOpText(w *bytes.Buffer, results []opFile, p palette) {
	for i, r := range results {
		if i > 0 {
			w.WriteString("\n")
		}
		// Names and titles come from the netlist: report.Printable keeps
		// them from driving the terminal.
		head := report.Printable(r.File)
		if r.Title != "" {
			head += "  " + p.dim(report.Printable(r.Title))
		}
		fmt.Fprintln(w, p.bold(head))
		fmt.Fprintf(w, "  solved at %s by %s in %d iterations\n\n", units.Format(r.Temperature, "C"), r.Method, r.Iterations)
		if len(r.BJTs) == 0 {
			fmt.Fprintln(w, "  no bipolar transistors")
		} else {
			tw := report.NewTabWriter(w)
			fmt.Fprintln(tw, "  transistor\tmodel\tregion\tVBE\tVCE\tIC\tIB\tIC/IB\tpower\tTj")
			for _, q := range r.BJTs {
				tjText := "-"
				if q.Tj != nil {
					tjText = units.Format(*q.Tj, "C")
				}
				fmt.Fprintf(tw, "  %s\t%s %s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\t%s\n",
					report.Printable(q.Name), report.Printable(q.Model), p.dim(q.Polarity), regionText(p, q.Region),
					units.Format(q.VBE, "V"), units.Format(q.VCE, "V"),
					units.Format(q.IC, "A"), units.Format(q.IB, "A"),
					forcedBeta(q), units.Format(q.Power, "W"), tjText)
			}
			tw.Flush()
		}
		w.WriteString("\n")
		tw := report.NewTabWriter(w)
		fmt.Fprintln(tw, "  node\tvoltage")
		for _, n := range r.nodeOrder {
			fmt.Fprintf(tw, "  %s\t%s\n", report.Printable(n), units.Format(r.Nodes[n], "V"))
		}
		tw.Flush()
	}
}

// forcedBeta prints IC/IB, or "-" for a transistor in cutoff, whose
// leakage currents give no meaningful ratio.
func forcedBeta(q opBJT) string {
	if q.Region == "cutoff" || q.IB == 0 {
		return "-"
	}
	return fmt.Sprintf("%.1f", q.IC/q.IB)
}

func regionText(p palette, region string) string {
	switch region {
	case "saturation":
		return p.amber(region)
	case "cutoff", "reverse":
		return p.blue(region)
	}
	return region
}
