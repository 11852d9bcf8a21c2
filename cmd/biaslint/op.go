package main

import (
	"bytes"
	"context"
	"encoding/json"
	"fmt"
	"math"
	"strings"

	"github.com/urfave/cli/v2"

	"github.com/biaslint/biaslint/checks"
	"github.com/biaslint/biaslint/netlist"
	"github.com/biaslint/biaslint/netlist/units"
	"github.com/biaslint/biaslint/rules/report"
	"github.com/biaslint/biaslint/rulesets"
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
			demoRevFlag,
			fileTimeoutFlag,
			fileMemoryFlag,
		},
		Action: runOp,
	}
}

// opFile is one file's operating point in the shape `op --format json` prints.
type opFile struct {
	File        string  `json:"file"`
	Title       string  `json:"title"`
	Temperature float64 `json:"temperature"`
	// TemperatureFrom says where the circuit temperature came from:
	// --temp, .temp, or ambient (the same convention as check).
	TemperatureFrom string             `json:"temperature_from"`
	Method          string             `json:"method"`
	Iterations      int                `json:"iterations"`
	Nodes           map[string]float64 `json:"nets"`
	Sources         map[string]float64 `json:"sources"`
	BJTs            []opBJT            `json:"bjts"`
	// Physical is false when the solution satisfies the solver's
	// equations only through the continuation of a junction exponential;
	// NotPhysical then says why, per device, and the currents, powers and
	// temperatures are left out (null).
	Physical    bool     `json:"physical"`
	NotPhysical []string `json:"not_physical,omitempty"`
	// StableStates and States describe a circuit whose first DC solution
	// was unstable: how many stable states were found (the one shown is
	// the first) and what they are.
	StableStates int    `json:"stable_states,omitempty"`
	States       string `json:"states,omitempty"`
	// Notes are the alerts and warnings of reading the netlist (a value
	// read other than it may look, a stand-in model for a part type
	// written without its .model card), located, as check shows them.
	Notes []string `json:"notes,omitempty"`

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
	// IC, IB, IE and Power are null when the solution is not physical.
	IC     *float64 `json:"ic"`
	IB     *float64 `json:"ib"`
	IE     *float64 `json:"ie"`
	Power  *float64 `json:"power"`
	Region string   `json:"region"`
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
	parts, err := loadParts(c)
	if err != nil {
		return err
	}
	inputs, err := inputsOf(c, parts)
	if err != nil {
		return err
	}
	timeout, err := fileTimeout(c)
	if err != nil {
		return err
	}
	if _, err := fileMemory(c); err != nil {
		return err
	}
	var results []opFile
	var problems []string
	for _, in := range inputs {
		rd := readInput(in)
		if rd.library && len(inputs) > 1 {
			// A library among the files of a batch: nothing to solve.
			fmt.Fprintf(c.App.ErrWriter, "%s: library (only definitions, no circuit): not solved\n", in.name)
			continue
		}
		circ, err := rd.circ, rd.err
		if rd.library {
			circ, err = in.read() // named alone: say why there is nothing to solve
		}
		if err != nil {
			problems = append(problems, err.Error())
			continue
		}
		var r opFile
		err, over := withBudget(in.name, timeout, func(ctx context.Context) error {
			var err error
			r, err = solveOp(ctx, c, circ, parts)
			return err
		})
		if why := overMemory(err); over || why != "" {
			// Past a budget: the file is not solved, the batch goes on.
			if over {
				why = overTime(timeout)
			}
			_, err = overBudget(in.name, circ.Title, why)
		}
		if err != nil {
			problems = append(problems, err.Error())
			continue
		}
		results = append(results, r)
	}
	if len(problems) > 0 && (len(inputs) == 1 || len(results) == 0) {
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
	if err := emit(c, &out); err != nil {
		return err
	}
	if len(problems) > 0 {
		// A batch: every file that solved is printed; the others' located
		// errors go to stderr and the exit status is 2.
		return badInput(fmt.Errorf("%s", strings.Join(problems, "\n")))
	}
	return nil
}

// solveOp solves one circuit and converts the result to the report shape.
func solveOp(ctx context.Context, c *cli.Context, circ *netlist.Circuit, parts *rulesets.Library) (opFile, error) {
	t, err := tempOf(c, "temp")
	if err != nil {
		return opFile{}, err
	}
	// The same circuit temperature as check: --temp, else the netlist's
	// .temp, else the ambient (checks.DefaultAmbient).
	amb := t
	if t == nil && circ.Options.TempSet {
		amb = &circ.Options.Temp
	}
	// Only the nominal solution and the junction temperatures: op prints
	// no roles, topology or other cases, so it computes none.
	limit, _ := fileMemory(c) // checked by runOp
	op, err := checks.OperatingPoint(circ, checks.Options{Temp: t, Ambient: amb, Thermal: c.Bool("thermal"), Context: ctx, MemoryLimit: limit, Parts: parts})
	if err != nil {
		return opFile{}, err
	}
	// The transistors whose point is not physical: no currents for them.
	res, tj, bad := op.Solution, op.Tj, op.NotPhysical
	f := opFile{
		File:            circ.File,
		Title:           circ.Title,
		Temperature:     res.Temp,
		TemperatureFrom: op.TempFrom,
		Method:          string(res.Method),
		Iterations:      res.Iterations,
		Nodes:           map[string]float64{},
		Sources:         map[string]float64{},
		BJTs:            []opBJT{},
		Physical:        res.Physical(),
	}
	for _, n := range circ.Notes {
		if n.Alert || n.Severity == netlist.SevWarning {
			f.Notes = append(f.Notes, n.Error())
		}
	}
	for _, u := range res.Unphysical {
		f.NotPhysical = append(f.NotPhysical, u.Why)
	}
	if st := op.States; st != nil {
		f.StableStates, f.States = len(st.Cases), st.Message
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
		num := func(v float64) *float64 {
			if bad[q.Name] {
				return nil
			}
			return &v
		}
		f.BJTs = append(f.BJTs, opBJT{
			Name: q.Name, Model: q.Model, Polarity: q.Polarity,
			VBE: q.VBE, VBC: q.VBC, VCE: q.VCE, IC: num(q.IC), IB: num(q.IB), IE: num(q.IE),
			Power: num(q.Power), Region: string(q.Region), Pos: q.Pos.String(),
		})
		if bad[q.Name] {
			f.BJTs[len(f.BJTs)-1].Region = checks.RegionNotPhysical
		}
		if v, ok := tj[q.Name]; ok && !math.IsNaN(v) && !bad[q.Name] {
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
		at := units.Format(r.Temperature, "C")
		if from := tempFromText[r.TemperatureFrom]; from != "" {
			at += " (" + from + ")"
		}
		for _, n := range r.Notes {
			fmt.Fprintf(w, "  %s\n", report.Printable(n))
		}
		if r.Physical {
			fmt.Fprintf(w, "  solved at %s by %s in %d iterations\n", at, r.Method, r.Iterations)
			if r.States != "" {
				fmt.Fprintf(w, "  %s: %s; shown: stable state 1\n", p.amber("several DC solutions"), r.States)
			}
			w.WriteString("\n")
		} else {
			fmt.Fprintf(w, "  %s at %s: %s converged in %d iterations to a point the device equations do not describe\n",
				p.red("not physical"), at, r.Method, r.Iterations)
			for _, why := range r.NotPhysical {
				fmt.Fprintf(w, "  %s\n", why)
			}
			fmt.Fprintf(w, "  currents, power and temperature of these devices are not shown; give the junction a series resistance\n\n")
		}
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
					orDash(q.IC, "A"), orDash(q.IB, "A"),
					forcedBeta(q), orDash(q.Power, "W"), tjText)
			}
			tw.Flush()
		}
		w.WriteString("\n")
		tw := report.NewTabWriter(w)
		fmt.Fprintln(tw, "  net\tvoltage")
		for _, n := range r.nodeOrder {
			fmt.Fprintf(tw, "  %s\t%s\n", report.Printable(n), units.Format(r.Nodes[n], "V"))
		}
		tw.Flush()
	}
}

// tempFromText says where a circuit temperature came from.
var tempFromText = map[string]string{
	checks.TempFromOption: "--temp", checks.TempFromNetlist: "the netlist's .temp", checks.TempFromAmbient: "the ambient",
}

// forcedBeta prints IC/IB, or "-" for a transistor in cutoff, whose
// leakage currents give no meaningful ratio.
func forcedBeta(q opBJT) string {
	if q.Region == "cutoff" || q.IB == nil || q.IC == nil || *q.IB == 0 {
		return "-"
	}
	return fmt.Sprintf("%.1f", *q.IC / *q.IB)
}

// orDash prints a value that may be left out.
func orDash(v *float64, unit string) string {
	if v == nil {
		return "-"
	}
	return units.Format(*v, unit)
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
