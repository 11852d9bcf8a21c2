// Package rules reads rule-set files, compiles their expressions once, and
// judges the facts of a checks.Analysis against them, producing Findings.
//
// # Rule-set files
//
// A rule set is a YAML file:
//
//	name: team-strict                # required
//	description: our derating policy
//	extends: default                 # optional: a built-in set by name, or a
//	                                 # file path relative to this file
//	parameters:                      # named thresholds
//	  vceo_share: {value: 80%, doc: "VCE at most this share of VCEO"}
//	  linear_vce_min: 0.5 V          # short form: value with its unit
//	  ratio: 3                       # short form: a plain number
//	disable: [unlimited-base-drive]  # parent rules to switch off
//	levels:                          # change a parent rule's level only
//	  floating-base: error
//	rules:
//	  - id: vce-over-rating          # kebab-case, unique
//	    level: error                 # error | warning | note
//	    subject: transistor          # transistor | resistor | net
//	    applies: linear              # optional: which devices (default all)
//	    when: vce > param.vceo_share * rating.vceo    # true means violation
//	    measure: vce / rating.vceo   # optional, larger is worse
//	    value: vce                   # optional "value against limit" pair
//	    limit: param.vceo_share * rating.vceo
//	    unit: V                      # unit of value and limit
//	    message: "VCE {vce:V} exceeds {param.vceo_share * rating.vceo:V}"
//	    rationale: why the rule exists, with its source
//	    fix: what to change
//	    unjudged: note               # level when it cannot be judged (default note)
//	    related: [base resistor, bleed resistor]   # parts a finding names as its cause
//
// related (transistor rules only) lists roles of the parts around the
// transistor that the finding names, in this order, as related locations:
// base resistor, divider resistor, bleed resistor, collector resistor,
// emitter resistor, drive (package checks, nearby.go, says how each is
// found). When the transistor has no part in the first role listed, the
// finding says where one belongs (a bleed resistor between base and
// emitter, an emitter resistor, a base resistor in series with a base that
// has none). The computed fix searches the values of the related
// resistors.
//
// Expressions use the expr language (github.com/expr-lang/expr). The names
// available are the facts of the subject, as tagged in package checks
// (vce, ic, role, rating.vceo, gp.vaf, emitter_r, ... for a transistor;
// r, v, i, power, power_rating for a resistor; name, v, peak for a net),
// plus scenario and corner (strings), ambient for resistors and nets, and
// param.NAME for each parameter of the set. Facts lists them. Every
// expression is compiled once, when the set is loaded: an unknown name, an
// unknown parameter, a wrong result type (a non-bool when) or a syntax
// error is an error located at file:line:col of the expression. The range
// operator ".." and builtins that build strings or collections of
// arbitrary size are not available, and expressions are capped at
// MaxExprNodes nodes, so evaluation is bounded.
//
// A message is text with placeholders {EXPR} or {EXPR:UNIT}. Each EXPR is
// an expression like the others; UNIT is one of Units, and the value is
// printed through netlist/units.Format ("{ic:A}" gives "1.02 mA"); the
// unit "%" prints a fraction as a percentage. Without a unit, numbers are
// dimensionless and print without an SI prefix (units.Number: "0.0164"),
// and strings print as they are.
// Write "{{" and "}}" for literal braces.
//
// Parameter values are numbers in SI units, or text: a SPICE-style value
// with an optional unit ("2.5 V", "10mA", "4.7k"; as in netlists M is milli
// and MEG is mega) or a percentage ("80%", stored as 0.8). A parameter
// keeps the unit its first definition gives it; an override in a child set
// or through LoadOptions.Set may only change its value.
//
// The older spellings "severity" (for level), "severities" (for levels),
// subject "node" (for net) and renamed rule ids (RenamedRules) are still
// read, each with a located note (RuleSet.Notes).
//
// # Extends and overrides
//
// A set that extends another starts from the parent's parameters and rules
// (after the parent's own extends). Its parameters override the parent's
// values or add new ones; a rule with the id of a parent rule replaces that
// rule in place; new rules come after the parent's; disable removes parent
// rules (they stay known, so a waiver naming one is not an unknown rule);
// levels changes a parent rule's level. Extends chains are
// cycle-checked and at most MaxExtendsDepth deep.
//
// # Evaluation
//
// Evaluate judges every active rule on every applicable subject of every
// case. A rule that cannot be judged on a device (a referenced fact is NaN,
// a division by zero, a comparison with NaN, a runtime error) gives an
// Unjudged finding naming the missing facts, never a silent pass. Across
// cases one finding is kept per rule and device: the violating case with
// the largest measure (ties: the first case), listing the other violating
// cases in AlsoIn.
package rules
