package grants

import "grantworth/valuation"

// bootstrapPar turns par-semiannual yields into a zero curve.
var bootstrapPar = valuation.BootstrapPar
