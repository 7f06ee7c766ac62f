package grants

import (
	"fmt"
	"strings"
	"time"
)

// QuarterMonths is how old the share valuation or the rate curve a grant
// is measured with may be at its measurement date before a warning: a
// quarter (common practice: fair value inputs are refreshed each quarter
// close). Past StaleMonths the share valuation draws the stronger stale
// warning instead.
const QuarterMonths = 3

// maxAgedGrants is how many grants an old-input warning names; the rest
// are counted.
const maxAgedGrants = 5

// agedInput is a Share Prices row or a Rates curve that is more than a
// quarter old at the measurement dates of some grants.
type agedInput struct {
	ref    Ref
	key    string
	date   time.Time
	grants []string // "TW-019 (4 months 10 days)"
}

// agedInputs collects them in the order first met.
type agedInputs struct {
	order []*agedInput
	by    map[Ref]*agedInput
}

func (a *agedInputs) note(ref Ref, key string, date, md time.Time, id string) {
	if a.by == nil {
		a.by = map[Ref]*agedInput{}
	}
	x := a.by[ref]
	if x == nil {
		x = &agedInput{ref: ref, key: key, date: date}
		a.by[ref] = x
		a.order = append(a.order, x)
	}
	x.grants = append(x.grants, fmt.Sprintf("%s (%s)", id, ageText(date, md)))
}

// olderThanQuarter reports whether an input dated d is more than
// QuarterMonths old on md.
func olderThanQuarter(d, md time.Time) bool {
	return AddMonths(d, QuarterMonths).Before(md)
}

// ageText is the time from d to md in whole months and days: "4 months 10
// days".
func ageText(d, md time.Time) string {
	n := 0
	for !AddMonths(d, n+1).After(md) {
		n++
	}
	days := int(md.Sub(AddMonths(d, n)).Hours() / 24)
	s := fmt.Sprintf("%d %s", n, plural(n, "month"))
	if days > 0 {
		s += fmt.Sprintf(" %d %s", days, plural(days, "day"))
	}
	return s
}

// warn raises one warning per aged input: what it is (what), naming the
// grants measured with it.
func (a *agedInputs) warn(v *validator, what, fix string) {
	for _, x := range a.order {
		names := x.grants
		more := ""
		if len(names) > maxAgedGrants {
			more = fmt.Sprintf(" and %d more", len(names)-maxAgedGrants)
			names = names[:maxAgedGrants]
		}
		whose := "the measurement date of grant " + names[0]
		if len(x.grants) > 1 {
			whose = fmt.Sprintf("the measurement dates of %d grants, %s%s", len(x.grants), strings.Join(names, ", "), more)
		}
		v.rep.warnf(x.ref, x.key, isoDay(x.date), ErrRange,
			"is %s, more than %d months old at %s: %s", what, QuarterMonths, whose, fix)
	}
}
