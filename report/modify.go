package report

// Modifications of awards: their model (valuation.json's modifications
// list), their memo section and their workbook sheet.

import (
	"fmt"
	"strconv"
	"strings"

	"grantworth/grants"
	"grantworth/grants/accounting"
	"grantworth/grants/pricing"
	"grantworth/valuation"
)

// SheetModifications is the workbook sheet of the modifications.
const SheetModifications = "Modifications"

func init() {
	memoHooks = append(memoHooks, MemoHook{"modifications", "Modifications of awards", (*Memo).modifications})
	sheetHooks = append(sheetHooks, SheetHook{SheetModifications, writeModifications})
}

// Modification is one change of an award's terms, or one cancellation with
// a replacement award, dated by the valuation date: what changed, its
// value just before and just after on its date, the incremental fair
// value, how it is attributed, and its effect on the cost.
type Modification struct {
	GrantID string `json:"grant_id"`
	Date    Date   `json:"date"`
	// Kind is "modification" or "replacement"; Accounting says how it is
	// booked: "probable_to_probable", "improbable_to_probable" (ASC 718
	// Type III) or "replacement".
	Kind               string `json:"kind"`
	Accounting         string `json:"accounting"`
	ReplacementGrantID string `json:"replacement_grant_id"`
	Changes            string `json:"changes"` // in words
	// HolderLeaves is set when the holder leaves on the date (a forfeited
	// event that day): vested options are valued before the change as
	// exercised at once or lapsed (their intrinsic value).
	HolderLeaves bool   `json:"holder_leaves"`
	Note         string `json:"note"`
	Ref          string `json:"ref"` // the row: Modifications!A5 or Events!A7
	// Terms identify the change for a later close, which keeps its values
	// (value_status locked) unless they changed.
	Terms       string        `json:"terms"`
	ValueStatus string        `json:"value_status"`
	TermsBefore ModifiedTerms `json:"terms_before"`
	TermsAfter  ModifiedTerms `json:"terms_after"`

	// The market on the date, with where each input came from.
	SharePrice       float64 `json:"share_price"`
	SharePriceSource string  `json:"share_price_source"`
	Volatility       float64 `json:"volatility"`
	VolatilitySource string  `json:"volatility_source"`
	DividendYield    float64 `json:"dividend_yield"`
	RiskFreeRate     float64 `json:"risk_free_rate"` // zero rate at the remaining term before the change
	CurveSource      string  `json:"curve_source"`

	Shares          int64   `json:"shares"` // touched
	FairValueBefore float64 `json:"fair_value_before"`
	FairValueAfter  float64 `json:"fair_value_after"`
	Increment       float64 `json:"incremental_fair_value"`
	// Reversed is the grant-date cost a Type III change reversed; Carried
	// the grant-date cost of cancelled shares still unvested that a
	// replacement took over, Earned of it already earned.
	Reversed float64 `json:"grant_date_cost_reversed"`
	Carried  float64 `json:"grant_date_cost_carried"`
	Earned   float64 `json:"grant_date_cost_carried_earned"`
	// The change's effect on the compensation cost.
	Cost           float64 `json:"cost"`
	CumulativeOpen float64 `json:"cumulative_at_period_start"`
	Amount         float64 `json:"period_amount"`
	Cumulative     float64 `json:"cumulative"`
	Unrecognized   float64 `json:"unrecognized_cost"`

	Parts []ModifiedPart `json:"parts"`
}

// ModifiedTerms are the terms of an award before or after a change, with
// the behaviour the valuation used.
type ModifiedTerms struct {
	Strike              float64 `json:"strike"`
	ExpiryDate          Date    `json:"expiry_date"`
	VestMonths          int     `json:"vest_months"`
	CliffMonths         int     `json:"cliff_months"`
	ExerciseMultiple    float64 `json:"exercise_multiple"`
	PostVestingExitRate float64 `json:"post_vesting_exit_rate"`
}

// ModifiedPart is one part of an award at a change: a tranche, or the
// shares of a tranche that vest on one date once a change of vesting cut
// it.
type ModifiedPart struct {
	TrancheIndex     int       `json:"tranche_index"`
	Shares           int64     `json:"shares"`
	ImprobableShares int64     `json:"improbable_shares"`
	Vested           bool      `json:"vested_before"`
	Left             int64     `json:"outstanding_at_end_of_day"`
	VestDateBefore   Date      `json:"vest_date_before"`
	VestDateAfter    Date      `json:"vest_date_after"`
	Before           PartValue `json:"before"`
	After            PartValue `json:"after"`
	// Increment is the cost added per share: the increase in fair value,
	// or the whole value on the date for Type III shares; 0 for a decrease.
	Increment   float64 `json:"increment_per_share"`
	Attribution string  `json:"attribution"`
}

// PartValue is a part's fair value per share on the date, as the lattice
// (or closed form) gave it.
type PartValue struct {
	FairValuePerShare float64 `json:"fair_value_per_share"`
	ErrorEstimate     float64 `json:"error_estimate"`
	ExpectedTermYears float64 `json:"expected_term_years"`
	Steps             int     `json:"steps"`
}

func partValue(r valuation.Result) PartValue {
	return PartValue{FairValuePerShare: r.Value, ErrorEstimate: r.ErrorEstimate, ExpectedTermYears: r.ExpectedTermYears, Steps: r.Steps}
}

func (p PartValue) result() valuation.Result {
	return valuation.Result{Value: p.FairValuePerShare, ErrorEstimate: p.ErrorEstimate, ExpectedTermYears: p.ExpectedTermYears, Steps: p.Steps}
}

func modifiedTerms(t grants.Terms, in grants.Inputs) ModifiedTerms {
	return ModifiedTerms{Strike: t.Strike, ExpiryDate: DateOf(t.ExpiryDate), VestMonths: t.VestMonths, CliffMonths: t.CliffMonths,
		ExerciseMultiple: in.ExerciseMultiple.Value, PostVestingExitRate: in.ExitRate.Value}
}

// modificationsModel lays the changes v valued and b booked into the
// Model, in the order v holds them.
func modificationsModel(s *grants.Schedule, v *pricing.Valuation, b *accounting.Books) []Modification {
	booked := map[string]*accounting.ModificationExpense{}
	key := func(id string, ch *grants.Change) string {
		return id + "|" + DateOf(ch.Date).String() + "|" + strconv.FormatBool(ch.Cancellation != nil)
	}
	if b.Expense != nil {
		for i := range b.Expense.Modifications {
			me := &b.Expense.Modifications[i]
			booked[key(me.GrantID, me.Change)] = me
		}
	}
	out := []Modification{}
	for i := range v.Modifications {
		mv := &v.Modifications[i]
		ch := mv.Change()
		in := mv.Before
		m := Modification{GrantID: mv.GrantID, Date: DateOf(ch.Date), Kind: "modification", Accounting: "probable_to_probable",
			Terms: pricing.Fingerprint(ch), ValueStatus: string(mv.Status),
			TermsBefore: modifiedTerms(ch.Before, mv.Before), TermsAfter: modifiedTerms(ch.After, mv.Before),
			SharePrice: in.SharePrice.Value, SharePriceSource: in.SharePrice.Text, Volatility: in.Volatility.Value, VolatilitySource: in.Volatility.Text,
			DividendYield: in.DividendYield.Value, RiskFreeRate: in.RiskFreeRate.Value, CurveSource: in.RiskFreeRate.Text, Parts: []ModifiedPart{}}
		if mv.Replacement != "" {
			m.Kind, m.Accounting, m.ReplacementGrantID = "replacement", "replacement", mv.Replacement
			m.Changes = fmt.Sprintf("%s shares cancelled and replaced by grant %s", count(touched(ch)), mv.Replacement)
			m.Ref = s.Cell(grants.SheetEvents, "date", ch.Cancellation.Row).String()
		} else {
			m.TermsAfter = modifiedTerms(ch.After, mv.After)
			m.Changes = changesText(ch.Modification, m.TermsBefore, m.TermsAfter)
			m.HolderLeaves = ch.Leaves
			m.Note = ch.Modification.Note
			m.Ref = s.Cell(grants.SheetModifications, "date", ch.Modification.Row).String()
		}
		me := booked[key(mv.GrantID, ch)]
		if me != nil {
			if me.Improbable {
				m.Accounting = "improbable_to_probable"
			}
			m.FairValueBefore, m.FairValueAfter, m.Increment = me.Before, me.After, me.Increment
			m.Reversed, m.Carried, m.Earned = me.Reversed, me.Carried, me.Earned
			m.Cost, m.CumulativeOpen, m.Amount, m.Cumulative, m.Unrecognized = me.Cost, me.CumulativeOpen, me.Period, me.Cumulative, me.Unrecognized
		}
		var parts []accounting.ModifiedPart
		if me != nil {
			parts = me.Parts
		}
		k := 0
		for j, cp := range ch.Parts {
			if cp.Shares == 0 {
				continue
			}
			mp := ModifiedPart{TrancheIndex: mv.Split.Parts[j].Index, Shares: cp.Shares, Left: cp.Left, ImprobableShares: cp.Improbable, Vested: cp.Vested(ch.Date),
				VestDateBefore: DateOf(cp.VestBefore), VestDateAfter: DateOf(cp.VestAfter), Before: partValue(mv.BeforeValues[j])}
			if mv.AfterValues != nil {
				mp.After = partValue(mv.AfterValues[j])
			}
			if k < len(parts) {
				p := parts[k]
				mp.ImprobableShares, mp.Increment, mp.Attribution = p.Improbable, p.Increment, p.Attribution(ch.Date)
			}
			k++
			m.Shares += cp.Shares
			m.Parts = append(m.Parts, mp)
		}
		out = append(out, m)
	}
	return out
}

// changesText says what modification m changes, from b to a, in words:
// "strike 3.05 → 2.10; expiry 2035-07-14 → 2036-07-14".
func changesText(m *grants.Modification, b, a ModifiedTerms) string {
	var parts []string
	num := func(x float64) string { return strconv.FormatFloat(x, 'f', -1, 64) }
	if m.NewStrike != nil {
		parts = append(parts, "strike "+num(b.Strike)+" → "+num(a.Strike))
	}
	if !m.NewExpiryDate.IsZero() {
		parts = append(parts, "expiry "+b.ExpiryDate.String()+" → "+a.ExpiryDate.String())
	}
	if m.NewVestMonths != nil {
		parts = append(parts, fmt.Sprintf("vesting %d → %d months", b.VestMonths, a.VestMonths))
	}
	if m.NewCliffMonths != nil {
		parts = append(parts, fmt.Sprintf("cliff %d → %d months", b.CliffMonths, a.CliffMonths))
	}
	if m.NewExitRate != nil {
		parts = append(parts, "post-vesting exit rate "+pct(b.PostVestingExitRate)+" → "+pct(a.PostVestingExitRate))
	}
	if m.NewExerciseMultiple != nil {
		parts = append(parts, "exercise multiple "+num(b.ExerciseMultiple)+" → "+num(a.ExerciseMultiple))
	}
	return strings.Join(parts, "; ")
}

func touched(ch *grants.Change) int64 {
	var n int64
	for _, p := range ch.Parts {
		n += p.Shares
	}
	return n
}

// filedModifications gives the prior close p the modifications ms it
// filed, grant by grant (ReadPrior), or what is wrong with them.
func filedModifications(ms []Modification, p *accounting.Prior) string {
	for _, x := range ms {
		lm := pricing.LockedModification{Date: x.Date.Time(), Terms: x.Terms}
		k := 0
		for _, pt := range x.Parts {
			lm.Parts = append(lm.Parts, pricing.LockedPart{VestBefore: pt.VestDateBefore.Time(), VestAfter: pt.VestDateAfter.Time(),
				Before: pt.Before.result(), After: pt.After.result()})
			k++
		}
		found := false
		for i := range p.Grants {
			if p.Grants[i].ID == x.GrantID {
				p.Grants[i].Modifications = append(p.Grants[i].Modifications, lm)
				found = true
			}
		}
		if !found {
			return "the modification of " + x.Date.String() + " names grant " + x.GrantID + ", which it does not value"
		}
	}
	return ""
}

// modifications is the memo's section on changes of awards' terms.
func (d *Memo) modifications(m *Model) error {
	if err := d.Text("modifications", m); err != nil {
		return err
	}
	cur := m.Company.Currency
	if len(m.Modifications) == 0 {
		d.Para("No award's terms were changed, and no award was cancelled with a replacement, by the valuation date.")
		return nil
	}
	var rows [][]string
	var cost, amount float64
	for _, x := range m.Modifications {
		rows = append(rows, []string{x.GrantID, x.Date.String(), accountingLabel(x), groupDigits(x.FairValueBefore, 2), groupDigits(x.FairValueAfter, 2),
			groupDigits(x.Increment, 2), groupDigits(x.Cost, 2), groupDigits(x.Amount, 2), groupDigits(x.Unrecognized, 2)})
		cost += x.Cost
		amount += x.Amount
	}
	rows = append(rows, []string{"\x00Total", "", "", "", "", "", groupDigits(cost, 2), groupDigits(amount, 2), ""})
	d.Sub("Summary")
	d.Table([]Col{{"Grant", 16, false}, {"Date", 20, false}, {"Booked as", 26, false}, {"Value before", 18, true}, {"Value after", 18, true},
		{"Increment", 18, true}, {"Cost added", 16, true}, {"This period", 16, true}, {"Unrecognized", 22, true}}, rows)
	d.Note(fmt.Sprintf("Amounts in %s. Value before and after: the fair value on the date of the shares touched, under the terms before and after (for a replacement: the cancelled shares, and the replacement award). Cost added: the change's effect on the total compensation cost (the cost with it less the cost had it not been made); this period: its effect on the period's expense, booked as its own journal entry.", cur))
	for _, x := range m.Modifications {
		d.modification(x, cur)
	}
	return nil
}

func accountingLabel(x Modification) string {
	switch x.Accounting {
	case "improbable_to_probable":
		return "improbable to probable"
	case "replacement":
		return "replacement of " + x.ReplacementGrantID
	}
	return "probable to probable"
}

// maxPartRows is how many parts of one modification the memo lists one
// by one; more are grouped by how their added cost is earned.
const maxPartRows = 8

// partsTable lists the parts of modification x, or with more than
// maxPartRows of them, groups them: vested before the change, vesting on
// its date because of it, still to vest, forfeited that day. Per-share
// figures of a group are weighted by shares.
func (d *Memo) partsTable(x Modification) {
	cols := []Col{{"Tranche", 16, false}, {"Shares", 16, true}, {"Vested", 14, false}, {"Vest date", 34, false}, {"Before", 16, true},
		{"After", 16, true}, {"Added", 16, true}, {"Earned", 42, false}}
	after := func(v float64) string {
		if x.Kind == "replacement" {
			return "–"
		}
		return perShare(v)
	}
	earned := func(p ModifiedPart) string {
		e := strings.TrimPrefix(p.Attribution, "over the service from ")
		if strings.HasPrefix(e, "at once") {
			return "at once"
		}
		return e
	}
	var rows [][]string
	if len(x.Parts) <= maxPartRows {
		for _, p := range x.Parts {
			vest := p.VestDateBefore.String()
			if p.VestDateAfter != p.VestDateBefore {
				vest += " → " + p.VestDateAfter.String()
			}
			rows = append(rows, []string{strconv.Itoa(p.TrancheIndex), count(p.Shares), yesNo(p.Vested), vest, perShare(p.Before.FairValuePerShare),
				after(p.After.FairValuePerShare), perShare(p.Increment), earned(p)})
		}
		d.Table(cols, rows)
		d.Note("Per share: the fair value on the date before and after the change, and the cost it adds (the increase, or for shares vesting only because of the change their whole value on the date). Earned: at once for shares vested on the date, else over the service from the date to the vest date.")
		return
	}
	type group struct {
		label               string
		first, last         int
		shares              int64
		before, after, incr float64
		from, to            Date
		how                 string
	}
	groups := map[string]*group{}
	var order []string
	for _, p := range x.Parts {
		label, how := "vested before", "at once"
		switch {
		case p.Vested:
		case p.Left == 0 && p.VestDateAfter.Time().After(x.Date.Time()):
			label, how = "forfeited on the date", "none"
		case p.ImprobableShares > 0:
			label = "vest on the date (Type III)"
		case !p.VestDateAfter.Time().After(x.Date.Time()):
			label = "vest on the date"
		default:
			label, how = "to vest", "over their service"
		}
		g := groups[label]
		if g == nil {
			g = &group{label: label, first: p.TrancheIndex, from: p.VestDateAfter, how: how}
			groups[label] = g
			order = append(order, label)
		}
		n := float64(p.Shares)
		g.last, g.to = p.TrancheIndex, p.VestDateAfter
		g.shares += p.Shares
		g.before += n * p.Before.FairValuePerShare
		g.after += n * p.After.FairValuePerShare
		g.incr += n * p.Increment
	}
	for _, k := range order {
		g := groups[k]
		n := float64(g.shares)
		tr := strconv.Itoa(g.first)
		if g.last != g.first {
			tr += "–" + strconv.Itoa(g.last)
		}
		vest := g.from.String()
		if g.to != g.from {
			vest += " to " + g.to.String()
		}
		how := g.how
		if how == "over their service" {
			how = "from " + x.Date.String() + " to each vest date"
		}
		rows = append(rows, []string{tr, count(g.shares), g.label, vest, perShare(g.before / n), after(g.after / n), perShare(g.incr / n), how})
	}
	d.Table([]Col{{"Tranches", 16, false}, {"Shares", 16, true}, {"", 30, false}, {"Vest dates", 38, false}, {"Before", 14, true},
		{"After", 14, true}, {"Added", 14, true}, {"Earned", 28, false}}, rows)
	d.Note(fmt.Sprintf("The %d parts grouped; per-share figures weighted by shares: the fair value on the date before and after the change, and the cost it adds (the increase, or for shares vesting only because of the change their whole value on the date). Every part is on the Modifications sheet of valuation.xlsx.", len(x.Parts)))
}

func (d *Memo) modification(x Modification, cur string) {
	title := fmt.Sprintf("Grant %s, %s: %s", x.GrantID, x.Date, x.Changes)
	d.Sub(title)
	var text []string
	text = append(text, fmt.Sprintf("Recorded at %s%s. Valued on %s (values %s) at the share price of %s (%s), volatility %s (%s), dividend yield %s and the %s.",
		x.Ref, noteText(x.Note), x.Date, x.ValueStatus, perShare(x.SharePrice), x.SharePriceSource, pct(x.Volatility), x.VolatilitySource,
		pct(x.DividendYield), strings.TrimPrefix(x.CurveSource, "Rates ")))
	switch x.Accounting {
	case "improbable_to_probable":
		text = append(text, fmt.Sprintf("The holder leaves on the date, so the shares the change vests were not expected to vest under the terms before: their grant-date cost earned to the day before, %s, is reversed, and their fair value on the date recognized instead (ASC 718-20-55-116).",
			money(x.Reversed, cur)))
	case "replacement":
		text = append(text, fmt.Sprintf("The cancelled shares were worth %s on the date and the replacement %s, so the exchange adds %s (ASC 718-20-35-8; IFRS 2.28(c)). The grant-date cost of the cancelled shares not yet vested, %s (%s of it earned by then), is not recognized at once as for a cancellation: the replacement takes it over and earns it over its own service.",
			money(x.FairValueBefore, cur), money(x.FairValueAfter, cur), money(x.Increment, cur), money(x.Carried, cur), money(x.Earned, cur)))
	default:
		if x.Increment > 0 {
			text = append(text, fmt.Sprintf("The change raises the fair value of the %s shares it touches from %s to %s: the increment of %s is added to their grant-date cost, which stays as it was.",
				count(x.Shares), money(x.FairValueBefore, cur), money(x.FairValueAfter, cur), money(x.Increment, cur)))
		} else {
			text = append(text, fmt.Sprintf("The change does not raise the fair value of the %s shares it touches (%s before, %s after), so it adds no cost: their grant-date cost stays as it was.",
				count(x.Shares), money(x.FairValueBefore, cur), money(x.FairValueAfter, cur)))
		}
	}
	if x.HolderLeaves && x.Accounting != "improbable_to_probable" {
		text = append(text, "The holder leaves on the date.")
	}
	if x.HolderLeaves && vestedParts(x) {
		text = append(text, "Before the change, the leaver's vested options are worth what leaving gives them, exercise at once if in the money or else nothing (their intrinsic value, as the lattice's exit); after it, what the new terms let the leaver keep, valued on the lattice.")
	}
	d.Para(strings.Join(text, " "))
	if x.Kind == "modification" {
		b, a := x.TermsBefore, x.TermsAfter
		d.Table([]Col{{"Terms", 50, false}, {"Before", 40, false}, {"After", 40, false}}, [][]string{
			{"Strike", perShare(b.Strike), perShare(a.Strike)},
			{"Expiry", b.ExpiryDate.String(), a.ExpiryDate.String()},
			{"Vesting (months, cliff)", fmt.Sprintf("%d, %d", b.VestMonths, b.CliffMonths), fmt.Sprintf("%d, %d", a.VestMonths, a.CliffMonths)},
			{"Exercise multiple", fixed(b.ExerciseMultiple, 2), fixed(a.ExerciseMultiple, 2)},
			{"Post-vesting exit rate", pct(b.PostVestingExitRate), pct(a.PostVestingExitRate)},
		})
	}
	d.partsTable(x)
	d.Para(fmt.Sprintf("Effect on the cost (the cost with the change less the cost without it, forfeitures as the policy expects them): %s in all, %s in this period, %s to the period end, %s still to recognize.",
		money(x.Cost, cur), money(x.Amount, cur), money(x.Cumulative, cur), money(x.Unrecognized, cur)))
}

// vestedParts reports whether x touches shares vested before it.
func vestedParts(x Modification) bool {
	for _, p := range x.Parts {
		if p.Vested && p.Shares > 0 {
			return true
		}
	}
	return false
}

func noteText(note string) string {
	if note == "" {
		return ""
	}
	return " (" + note + ")"
}

func yesNo(b bool) string {
	if b {
		return "yes"
	}
	return "no"
}

// writeModifications writes one row per modification (level
// "modification", its totals) followed by its parts (level "part", per
// share and for the part's shares).
func writeModifications(b *Book, m *Model) error {
	cols := []Column{{"Level", 13}, {"Grant", 12}, {"Date", 11}, {"Booked as", 20}, {"What changed / tranche", 40}, {"Shares", 11},
		{"Vested before", 9}, {"Vest date before", 12}, {"Vest date after", 12},
		{b.Cur("Fair value before, per share"), 13}, {b.Cur("Fair value after, per share"), 13}, {b.Cur("Cost added per share"), 13},
		{b.Cur("Fair value before"), 14}, {b.Cur("Fair value after"), 14}, {b.Cur("Incremental fair value"), 14}, {b.Cur("Cost added"), 14},
		{b.Cur("Cumulative at period start"), 14}, {b.Cur("Period expense"), 14}, {b.Cur("Cumulative at period end"), 14}, {b.Cur("Unrecognized cost"), 14},
		{"Attribution", 36}, {"Values", 10}, {"Row", 16}, {"Note", 40}}
	rows := 0
	for _, x := range m.Modifications {
		rows += 1 + len(x.Parts)
	}
	t, err := b.NewTable(SheetModifications, cols, max(rows, 1))
	if err != nil {
		return err
	}
	if len(m.Modifications) == 0 {
		if err := t.Row(nil, nil, nil, nil, b.Text("No award's terms were changed, and no award was cancelled with a replacement, by the valuation date.")); err != nil {
			return err
		}
		return t.Close()
	}
	money := func(v float64) any { return b.Cell(b.Style.Money, v) }
	per := func(v float64) any { return b.Cell(b.Style.MoneyPerShare, v) }
	for _, x := range m.Modifications {
		what := x.Changes
		if x.HolderLeaves {
			what += "; the holder leaves that day"
		}
		if err := t.Row(b.Cell(b.Style.Bold, "modification"), b.Text(x.GrantID), b.DateCell(x.Date), b.Text(accountingLabel(x)), b.Text(what),
			b.Cell(b.Style.Int, x.Shares), nil, nil, nil, nil, nil, nil,
			money(x.FairValueBefore), money(x.FairValueAfter), money(x.Increment), money(x.Cost),
			money(x.CumulativeOpen), money(x.Amount), money(x.Cumulative), money(x.Unrecognized), nil, b.Text(x.ValueStatus), b.Text(x.Ref), b.Text(x.Note)); err != nil {
			return err
		}
		for _, p := range x.Parts {
			n := float64(p.Shares)
			after, afterTotal := any(nil), any(nil)
			if x.Kind != "replacement" {
				after, afterTotal = per(p.After.FairValuePerShare), money(p.After.FairValuePerShare*n)
			}
			if err := t.Row(b.Text("part"), b.Text(x.GrantID), b.DateCell(x.Date), nil, b.Text("tranche "+strconv.Itoa(p.TrancheIndex)),
				b.Cell(b.Style.Int, p.Shares), b.Text(yesNo(p.Vested)), b.DateCell(p.VestDateBefore), b.DateCell(p.VestDateAfter),
				per(p.Before.FairValuePerShare), after, per(p.Increment), money(p.Before.FairValuePerShare*n), afterTotal, money(p.Increment*n),
				nil, nil, nil, nil, nil, b.Text(p.Attribution)); err != nil {
				return err
			}
		}
	}
	return t.Close()
}
