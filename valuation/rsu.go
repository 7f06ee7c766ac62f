package valuation

import "math"

// RSUValue is the fair value of a restricted stock unit that delivers one
// share at its vest date, yearsToVest from now: S0·e^(−qV). The holder
// receives no dividends before delivery, so the value is the share price
// less the present value of the dividends forgone (continuous yield q); no
// exercise price, so no volatility or rate enters. ExpectedTermYears is the
// vesting period; ErrorEstimate is 0 (closed form).
func RSUValue(m Market, yearsToVest float64) Result {
	return Result{
		Value:             m.Spot * math.Exp(-m.DividendYield*yearsToVest),
		ExpectedTermYears: yearsToVest,
		Method:            MethodBSM,
	}
}
