package grants

import "strings"

// MinorUnits is the number of decimals of currency code (ISO 4217, from
// memory): 0 for the yen, the won and the others without a minor unit, 3
// for the dinars of Bahrain, Iraq, Jordan, Kuwait, Libya and Tunisia and
// the Omani rial, 4 for the Chilean and Uruguayan units of account, 2 for
// every other code. The journal's amounts are rounded to it.
func MinorUnits(code string) int {
	switch strings.ToUpper(code) {
	case "BIF", "CLP", "DJF", "GNF", "ISK", "JPY", "KMF", "KRW", "PYG", "RWF", "UGX", "UYI", "VND", "VUV", "XAF", "XOF", "XPF":
		return 0
	case "BHD", "IQD", "JOD", "KWD", "LYD", "OMR", "TND":
		return 3
	case "CLF", "UYW":
		return 4
	}
	return 2
}
