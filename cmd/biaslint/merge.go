package main

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"sort"
	"strings"

	"github.com/urfave/cli/v2"
)

func mergeCommand() *cli.Command {
	return &cli.Command{
		Name:      "merge",
		Usage:     "join the JSON or SARIF reports of 'check --shard I/N' runs into the report one unsharded run writes",
		ArgsUsage: "REPORT...",
		Description: "Every REPORT must be a JSON report (check --format json) or every one a SARIF report " +
			"(check --format sarif) of the same rule set and options. The files are put in path order, as an " +
			"unsharded run over directories or globs reports them, and the counts are added up.",
		Flags: []cli.Flag{
			&cli.StringFlag{Name: "fail-on", Value: "error", Usage: "exit with status 1 when the merged report has a finding at or above this severity: error, warning or note"},
			outputFlag,
		},
		Action: runMerge,
	}
}

// object is a JSON object with its keys in the order written.
type object struct {
	keys []string
	vals map[string]json.RawMessage
}

// readObject decodes one JSON object, keeping the key order.
func readObject(raw []byte) (*object, error) {
	dec := json.NewDecoder(bytes.NewReader(raw))
	dec.UseNumber()
	t, err := dec.Token()
	if err != nil {
		return nil, err
	}
	if d, ok := t.(json.Delim); !ok || d != '{' {
		return nil, errors.New("not a JSON object")
	}
	o := &object{vals: map[string]json.RawMessage{}}
	for dec.More() {
		t, err := dec.Token()
		if err != nil {
			return nil, err
		}
		k, ok := t.(string)
		if !ok {
			return nil, errors.New("malformed object key")
		}
		var v json.RawMessage
		if err := dec.Decode(&v); err != nil {
			return nil, err
		}
		if _, dup := o.vals[k]; !dup {
			o.keys = append(o.keys, k)
		}
		o.vals[k] = v
	}
	if _, err := dec.Token(); err != nil {
		return nil, err
	}
	return o, nil
}

// MarshalJSON writes the object compactly, keys in order.
func (o *object) MarshalJSON() ([]byte, error) {
	var b bytes.Buffer
	b.WriteByte('{')
	for i, k := range o.keys {
		if i > 0 {
			b.WriteByte(',')
		}
		kb, err := marshal(k)
		if err != nil {
			return nil, err
		}
		b.Write(kb)
		b.WriteByte(':')
		if err := json.Compact(&b, o.vals[k]); err != nil {
			return nil, err
		}
	}
	b.WriteByte('}')
	return b.Bytes(), nil
}

// marshal encodes v as the reports are encoded: without HTML escaping.
func marshal(v any) ([]byte, error) {
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false)
	if err := enc.Encode(v); err != nil {
		return nil, err
	}
	return bytes.TrimSuffix(b.Bytes(), []byte("\n")), nil
}

// set replaces (or appends) key k.
func (o *object) set(k string, v any) error {
	raw, err := marshal(v)
	if err != nil {
		return err
	}
	if _, ok := o.vals[k]; !ok {
		o.keys = append(o.keys, k)
	}
	o.vals[k] = raw
	return nil
}

// array decodes key k as an array of raw values.
func (o *object) array(k string) ([]json.RawMessage, error) {
	var out []json.RawMessage
	raw, ok := o.vals[k]
	if !ok {
		return nil, fmt.Errorf("no %q", k)
	}
	err := json.Unmarshal(raw, &out)
	return out, err
}

// str decodes key k of a raw object as a string ("" when absent).
func str(raw json.RawMessage, path ...string) string {
	for _, k := range path {
		o, err := readObject(raw)
		if err != nil {
			return ""
		}
		raw = o.vals[k]
	}
	var s string
	_ = json.Unmarshal(raw, &s)
	return s
}

// writeIndented writes v as check's reports are written: json.Encoder
// with two-space indentation, no HTML escaping and a final newline.
func writeIndented(w io.Writer, v any) error {
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	enc.SetEscapeHTML(false)
	return enc.Encode(v)
}

// shardReport is one shard's report: its top-level object, and the
// per-file entries with the netlist path of each.
type shardReport struct {
	name  string
	top   *object
	items []json.RawMessage
	paths []string
}

func runMerge(c *cli.Context) error {
	names := c.Args().Slice()
	if len(names) == 0 {
		return badInput(errors.New("biaslint merge: no report given (name the JSON or SARIF reports of the shards)"))
	}
	failOn := c.String("fail-on")
	switch failOn {
	case "error", "warning", "note":
	default:
		return badInput(fmt.Errorf("biaslint: --fail-on must be error, warning or note, not %q", failOn))
	}
	var shards []*shardReport
	kind := ""
	var problems []string
	for _, name := range names {
		raw, err := os.ReadFile(name)
		if err != nil {
			problems = append(problems, fmt.Sprintf("%s: cannot read report: %v", name, err))
			continue
		}
		top, err := readObject(raw)
		if err != nil {
			problems = append(problems, fmt.Sprintf("%s:%s: not a biaslint JSON or SARIF report: %v", name, jsonPos(raw, err), err))
			continue
		}
		k := "json"
		if _, ok := top.vals["runs"]; ok {
			k = "sarif"
		} else if _, ok := top.vals["results"]; !ok {
			problems = append(problems, fmt.Sprintf("%s:1:1: not a biaslint JSON or SARIF report (no results or runs)", name))
			continue
		}
		if kind == "" {
			kind = k
		} else if k != kind {
			problems = append(problems, fmt.Sprintf("%s:1:1: a %s report among %s reports; merge reports of one format", name, strings.ToUpper(k), strings.ToUpper(kind)))
			continue
		}
		sh := &shardReport{name: name, top: top}
		if k == "json" {
			err = sh.jsonItems()
		} else {
			err = sh.sarifItems()
		}
		if err != nil {
			problems = append(problems, fmt.Sprintf("%s:1:1: %v", name, err))
			continue
		}
		shards = append(shards, sh)
	}
	if len(problems) > 0 {
		return badInput(errors.New(strings.Join(problems, "\n")))
	}
	var out bytes.Buffer
	var counts map[string]int
	var err error
	if kind == "json" {
		counts, err = mergeJSON(&out, shards)
	} else {
		counts, err = mergeSARIF(&out, shards)
	}
	if err != nil {
		return badInput(err)
	}
	if err := emit(c, &out); err != nil {
		return err
	}
	if counts["exit"] == exitBadInput {
		return &statusError{code: exitBadInput}
	}
	rank := map[string]int{"error": 0, "warning": 1, "note": 2}
	for sev, n := range counts {
		if r, ok := rank[sev]; ok && n > 0 && r <= rank[failOn] {
			return &statusError{code: exitFindings}
		}
	}
	return nil
}

// jsonPos turns a decoding error's byte offset into line:col.
func jsonPos(raw []byte, err error) string {
	var se *json.SyntaxError
	off := int64(0)
	if errors.As(err, &se) {
		off = se.Offset
	}
	if off > int64(len(raw)) {
		off = int64(len(raw))
	}
	line, col := 1, 1
	for _, ch := range raw[:off] {
		if ch == '\n' {
			line, col = line+1, 1
		} else {
			col++
		}
	}
	return fmt.Sprintf("%d:%d", line, col)
}

// jsonItems reads a JSON report's per-file results.
func (sh *shardReport) jsonItems() error {
	items, err := sh.top.array("results")
	if err != nil {
		return fmt.Errorf("results: %v", err)
	}
	sh.items = items
	for _, it := range items {
		sh.paths = append(sh.paths, str(it, "file"))
	}
	return nil
}

// sarifItems reads a SARIF report's results (each names its netlist in
// its properties).
func (sh *shardReport) sarifItems() error {
	runs, err := sh.top.array("runs")
	if err != nil || len(runs) != 1 {
		return errors.New("want a SARIF log with one run")
	}
	run, err := readObject(runs[0])
	if err != nil {
		return err
	}
	items, err := run.array("results")
	if err != nil {
		return fmt.Errorf("results: %v", err)
	}
	sh.items = items
	for _, it := range items {
		sh.paths = append(sh.paths, str(it, "properties", "netlist"))
	}
	return nil
}

// mergeInvocations joins the shards' single invocations: the exit code is
// the largest (2 for a file that could not be judged outranks 1 for
// findings), the run succeeded when every shard's did, and the
// notifications are the files' notes in netlist order, then the files'
// status notifications in netlist order, as one run writes them.
func mergeInvocations(shards []*shardReport) (*object, int, error) {
	var inv *object
	code, ok := 0, true
	var notes, status []merged
	for _, sh := range shards {
		runs, _ := sh.top.array("runs")
		r, err := readObject(runs[0])
		if err != nil {
			return nil, 0, err
		}
		invs, err := r.array("invocations")
		if err != nil || len(invs) != 1 {
			return nil, 0, fmt.Errorf("%s: want one invocation", sh.name)
		}
		o, err := readObject(invs[0])
		if err != nil {
			return nil, 0, err
		}
		if inv == nil {
			inv = o
		}
		var c int
		var good bool
		_ = json.Unmarshal(o.vals["exitCode"], &c)
		_ = json.Unmarshal(o.vals["executionSuccessful"], &good)
		code, ok = max(code, c), ok && good
		if raw, has := o.vals["toolExecutionNotifications"]; has {
			var ns []json.RawMessage
			if err := json.Unmarshal(raw, &ns); err != nil {
				return nil, 0, fmt.Errorf("%s: notifications: %v", sh.name, err)
			}
			for _, n := range ns {
				m := merged{str(n, "properties", "netlist"), n}
				if str(n, "properties", "file_status") != "" {
					status = append(status, m)
				} else {
					notes = append(notes, m)
				}
			}
		}
	}
	sort.SliceStable(notes, func(i, j int) bool { return notes[i].path < notes[j].path })
	sort.SliceStable(status, func(i, j int) bool { return status[i].path < status[j].path })
	var all []json.RawMessage
	for _, m := range append(notes, status...) {
		all = append(all, m.raw)
	}
	out := &object{keys: append([]string(nil), inv.keys...), vals: map[string]json.RawMessage{}}
	for k, v := range inv.vals {
		out.vals[k] = v
	}
	if err := out.set("executionSuccessful", ok); err != nil {
		return nil, 0, err
	}
	if err := out.set("exitCode", code); err != nil {
		return nil, 0, err
	}
	if len(all) > 0 {
		if err := out.set("toolExecutionNotifications", all); err != nil {
			return nil, 0, err
		}
	} else if _, has := out.vals["toolExecutionNotifications"]; has {
		delete(out.vals, "toolExecutionNotifications")
		for i, k := range out.keys {
			if k == "toolExecutionNotifications" {
				out.keys = append(out.keys[:i], out.keys[i+1:]...)
				break
			}
		}
	}
	return out, code, nil
}

// merged is one item with the netlist it belongs to.
type merged struct {
	path string
	raw  json.RawMessage
}

// byPath joins the shards' items in netlist path order; the items of one
// netlist keep their order.
func byPath(shards []*shardReport) []merged {
	var all []merged
	for _, sh := range shards {
		for i, it := range sh.items {
			all = append(all, merged{sh.paths[i], it})
		}
	}
	sort.SliceStable(all, func(i, j int) bool { return all[i].path < all[j].path })
	return all
}

// first returns the shard holding the first checked netlist in path
// order (the one whose values, such as the ambient, an unsharded run takes
// for its run-wide fields), else the first shard.
func first(shards []*shardReport) *shardReport {
	var best *shardReport
	bestPath := ""
	for _, sh := range shards {
		for i, p := range sh.paths {
			if st := str(sh.items[i], "status"); st != "" && st != "checked" {
				continue
			}
			if best == nil || p < bestPath {
				best, bestPath = sh, p
			}
			break
		}
	}
	if best == nil {
		return shards[0]
	}
	return best
}

// mergeJSON writes the merged JSON report and returns its counts.
func mergeJSON(w io.Writer, shards []*shardReport) (map[string]int, error) {
	top := first(shards).top
	all := byPath(shards)
	items := make([]json.RawMessage, 0, len(all))
	counts := map[string]int{}
	var order []string
	for _, m := range all {
		items = append(items, m.raw)
		o, err := readObject(m.raw)
		if err != nil {
			return nil, err
		}
		switch st := str(m.raw, "status"); st {
		case "", "checked", "library", "included":
		default:
			counts["exit"] = exitBadInput // a file could not be judged
		}
		sum, err := readObject(o.vals["summary"])
		if err != nil {
			return nil, fmt.Errorf("%s: result without a summary", m.path)
		}
		for _, k := range sum.keys {
			var n int
			if err := json.Unmarshal(sum.vals[k], &n); err != nil {
				return nil, fmt.Errorf("%s: summary %s: %v", m.path, k, err)
			}
			if _, ok := counts[k]; !ok {
				order = append(order, k)
			}
			counts[k] += n
		}
	}
	out := &object{keys: append([]string(nil), top.keys...), vals: map[string]json.RawMessage{}}
	for k, v := range top.vals {
		out.vals[k] = v
	}
	if err := out.set("results", items); err != nil {
		return nil, err
	}
	// The run's summary: the first shard's keys in its order, added up.
	if sum, err := readObject(top.vals["summary"]); err == nil {
		for _, k := range order {
			if _, ok := sum.vals[k]; !ok {
				sum.keys = append(sum.keys, k)
			}
		}
		for _, k := range sum.keys {
			if err := sum.set(k, counts[k]); err != nil {
				return nil, err
			}
		}
		if err := out.set("summary", sum); err != nil {
			return nil, err
		}
	}
	return counts, writeIndented(w, out)
}

// mergeSARIF writes the merged SARIF log: one run whose driver's rules are
// the rules all shards list first (the rule set's), then the others in
// the order the merged results first use them, with every result's
// ruleIndex renumbered.
func mergeSARIF(w io.Writer, shards []*shardReport) (map[string]int, error) {
	top := first(shards).top
	runs, _ := top.array("runs")
	run, err := readObject(runs[0])
	if err != nil {
		return nil, err
	}
	tool, err := readObject(run.vals["tool"])
	if err != nil {
		return nil, errors.New("run without a tool")
	}
	driver, err := readObject(tool.vals["driver"])
	if err != nil {
		return nil, errors.New("tool without a driver")
	}
	// Each shard's rule list by id.
	lists := make([][]json.RawMessage, len(shards))
	for i, sh := range shards {
		rs, _ := sh.top.array("runs")
		r, err := readObject(rs[0])
		if err != nil {
			return nil, err
		}
		t, err := readObject(r.vals["tool"])
		if err != nil {
			return nil, fmt.Errorf("%s: run without a tool", sh.name)
		}
		d, err := readObject(t.vals["driver"])
		if err != nil {
			return nil, fmt.Errorf("%s: tool without a driver", sh.name)
		}
		if lists[i], err = d.array("rules"); err != nil {
			return nil, fmt.Errorf("%s: driver rules: %v", sh.name, err)
		}
	}
	common := len(lists[0])
	for _, l := range lists[1:] {
		k := 0
		for k < common && k < len(l) && str(l[k], "id") == str(lists[0][k], "id") {
			k++
		}
		common = k
	}
	rules := append([]json.RawMessage(nil), lists[0][:common]...)
	index := map[string]int{}
	for i, r := range rules {
		index[str(r, "id")] = i
	}
	ruleByID := map[string]json.RawMessage{}
	for _, l := range lists {
		for _, r := range l {
			if id := str(r, "id"); ruleByID[id] == nil {
				ruleByID[id] = r
			}
		}
	}
	all := byPath(shards)
	results := make([]json.RawMessage, 0, len(all))
	counts := map[string]int{}
	for _, m := range all {
		res, err := readObject(m.raw)
		if err != nil {
			return nil, err
		}
		id := str(m.raw, "ruleId")
		i, ok := index[id]
		if !ok {
			if ruleByID[id] == nil {
				return nil, fmt.Errorf("result of rule %q, which no report's driver lists", id)
			}
			i = len(rules)
			index[id] = i
			rules = append(rules, ruleByID[id])
		}
		if _, has := res.vals["ruleIndex"]; has {
			if err := res.set("ruleIndex", i); err != nil {
				return nil, err
			}
		}
		if _, suppressed := res.vals["suppressions"]; suppressed {
			counts["waived"]++
		} else {
			counts[str(m.raw, "level")]++
		}
		b, err := res.MarshalJSON()
		if err != nil {
			return nil, err
		}
		results = append(results, b)
	}
	if err := driver.set("rules", rules); err != nil {
		return nil, err
	}
	if err := tool.set("driver", driver); err != nil {
		return nil, err
	}
	if err := run.set("tool", tool); err != nil {
		return nil, err
	}
	if err := run.set("results", results); err != nil {
		return nil, err
	}
	if _, ok := run.vals["invocations"]; ok {
		inv, code, err := mergeInvocations(shards)
		if err != nil {
			return nil, err
		}
		if err := run.set("invocations", []*object{inv}); err != nil {
			return nil, err
		}
		counts["exit"] = code
	}
	out := &object{keys: append([]string(nil), top.keys...), vals: map[string]json.RawMessage{}}
	for k, v := range top.vals {
		out.vals[k] = v
	}
	if err := out.set("runs", []*object{run}); err != nil {
		return nil, err
	}
	return counts, writeIndented(w, out)
}
