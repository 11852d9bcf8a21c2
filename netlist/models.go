package netlist

import "strings"

// Model parameter names biaslint knows, by model type. Names are the
// Gummel-Poon set of the BJT and the junction diode set as SPICE2 defines them
// (Nagel, UCB/ERL M520, 1975).
var (
	bjtParams = words("IS BF NF VAF IKF ISE NE BR NR VAR IKR ISC NC RB IRB RBM RE RC " +
		"CJE VJE MJE TF XTF VTF ITF PTF CJC VJC MJC XCJC TR CJS VJS MJS XTB EG XTI KF AF FC TNOM")
	diodeParams = words("IS RS N TT CJO VJ M EG XTI KF AF FC BV IBV TNOM ISR NR IKF")
)

// Parameter aliases that SPICE-class readers accept, folded to the canonical
// name. BJT: VA = VAF, VB = VAR, IK = IKF, PE = VJE, ME = MJE, PC = VJC,
// MC = MJC, PS = VJS, MS = MJS, CCS = CJS, TREF = TNOM. Diode: CJ0 = CJ = CJO,
// PB = VJ, MJ = M, IK = IKF, TREF = TNOM.
var (
	bjtAliases = map[string]string{
		"VA": "VAF", "VB": "VAR", "IK": "IKF", "PE": "VJE", "ME": "MJE", "PC": "VJC",
		"MC": "MJC", "PS": "VJS", "MS": "MJS", "CCS": "CJS", "TREF": "TNOM",
	}
	diodeAliases = map[string]string{
		"CJ0": "CJO", "CJ": "CJO", "PB": "VJ", "MJ": "M", "IK": "IKF", "TREF": "TNOM",
	}
)

func words(s string) map[string]bool {
	m := map[string]bool{}
	for _, w := range strings.Fields(s) {
		m[w] = true
	}
	return m
}

// canonicalParam returns the canonical upper-case name of model parameter
// name for a model of type t, aliases folded, and whether the name is one
// the device equations use. Unknown names are returned upper case.
func canonicalParam(t ModelType, name string) (string, bool) {
	up := strings.ToUpper(name)
	switch t {
	case NPN, PNP:
		if a, ok := bjtAliases[up]; ok {
			up = a
		}
		return up, bjtParams[up]
	case Diode:
		if a, ok := diodeAliases[up]; ok {
			up = a
		}
		return up, diodeParams[up]
	}
	return up, false
}
