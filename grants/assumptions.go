package grants

import (
	"time"
)

// At is the assumptions in force on day d: for each key, the dated row
// with the latest effective_date on or before d, else the undated row (or
// the key's default). Sources, Refs and Since follow the rows chosen.
func (a Assumptions) At(d time.Time) Assumptions {
	v := a
	if len(a.Dated) == 0 {
		return v
	}
	v.Dated = nil
	v.Sources = copyMap(a.Sources)
	v.Refs = copyMap(a.Refs)
	v.Since = map[string]time.Time{}
	best := map[string]int{}
	for i, r := range a.Dated {
		if r.Effective.After(d) {
			continue
		}
		if j, ok := best[r.Key]; !ok || r.Effective.After(a.Dated[j].Effective) {
			best[r.Key] = i
		}
	}
	for _, i := range best {
		r := a.Dated[i]
		v.set(r)
		if v.Refs != nil { // nil: built in code, every value given
			v.Refs[r.Key] = r.Ref
		}
		if v.Sources == nil {
			v.Sources = map[string]string{}
		}
		if r.Source != "" {
			v.Sources[r.Key] = r.Source
		} else {
			delete(v.Sources, r.Key)
		}
		v.Since[r.Key] = r.Effective
	}
	return v
}

func copyMap[K comparable, V any](m map[K]V) map[K]V {
	if m == nil {
		return nil
	}
	out := make(map[K]V, len(m))
	for k, v := range m {
		out[k] = v
	}
	return out
}

// set puts row r's value into the field of its key.
func (a *Assumptions) set(r AssumptionRow) {
	switch r.Key {
	case "volatility":
		a.Volatility = r.Value
	case "dividend_yield":
		a.DividendYield = r.Value
	case "exercise_multiple":
		a.ExerciseMultiple = r.Value
	case "post_vesting_exit_rate":
		a.PostVestingExitRate = r.Value
	case "pre_vesting_forfeiture_rate":
		a.PreVestingForfeitureRate = r.Value
	case "attribution":
		a.Attribution = Attribution(r.Text)
	case "forfeitures":
		a.Forfeitures = ForfeiturePolicy(r.Text)
	case "framework":
		a.Framework = Framework(r.Text)
	case "steps":
		a.Steps = int(r.Value)
	case "tax_rate":
		a.TaxRate = r.Value
	}
}

// row is the value of key in a as a dated row's Value and Text.
func (a *Assumptions) row(key string) AssumptionRow {
	r := AssumptionRow{Key: key}
	switch key {
	case "volatility":
		r.Value = a.Volatility
	case "dividend_yield":
		r.Value = a.DividendYield
	case "exercise_multiple":
		r.Value = a.ExerciseMultiple
	case "post_vesting_exit_rate":
		r.Value = a.PostVestingExitRate
	case "pre_vesting_forfeiture_rate":
		r.Value = a.PreVestingForfeitureRate
	case "attribution":
		r.Text = string(a.Attribution)
	case "forfeitures":
		r.Text = string(a.Forfeitures)
	case "framework":
		r.Text = string(a.Framework)
	case "steps":
		r.Value = float64(a.Steps)
	case "tax_rate":
		r.Value = a.TaxRate
	}
	return r
}

// InForce is the assumptions in force at the valuation date: the policy
// of the close (attribution, forfeitures, the forfeiture estimate and the
// framework) and
// the lattice's steps. A grant's valuation inputs are those in force at
// its measurement date (Inputs).
func (s *Schedule) InForce() Assumptions {
	return s.Assumptions.At(s.Company.ValuationDate)
}
