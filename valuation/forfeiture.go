package valuation

import "math"

// SurvivalToVest is the probability that a holder still in service now is
// still there after years more of service, when a share rate of holders
// leave each year before vesting: (1 − rate)^years (1 for years ≤ 0 or a
// zero rate). Fair value ignores it (pre-vesting forfeiture enters expense
// attribution instead); ExpectedCost applies it.
func SurvivalToVest(rate, years float64) float64 {
	if years <= 0 || rate == 0 {
		return 1
	}
	return math.Pow(1-rate, years)
}

// ExpectedCost is what one granted award is expected to cost the company
// when a share rate of holders leave each year before vesting and forfeit:
// fairValue × SurvivalToVest(rate, yearsToVest). Departures before vesting
// are taken as independent of the share price. It is a planning figure for
// grant design, never a fair value.
func ExpectedCost(fairValue, rate, yearsToVest float64) float64 {
	return fairValue * SurvivalToVest(rate, yearsToVest)
}
