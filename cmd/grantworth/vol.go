package main

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"strings"
	"text/tabwriter"
	"time"

	"github.com/spf13/cobra"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/plotutil"
	"gonum.org/v1/plot/vg"

	"grantworth/grants"
	"grantworth/valuation"
)

func init() {
	verbs = append(verbs, func(ios *IO) *cobra.Command { return newVolCmd(ios, nil) })
}

// volOptions are the parsed arguments of `grantworth vol`.
type volOptions struct {
	IO              *IO
	Files           []string
	Frequency       valuation.Frequency
	AsOf            time.Time // zero: the last date common to all files
	LookbackYears   float64   // 0: the longest window every file covers
	MinObservations int
	Propose         string // mean | median | trimmed-mean
	JSON, CSV       bool
	Chart           string
	Force           bool
}

func newVolCmd(ios *IO, runF func(*volOptions) error) *cobra.Command {
	opts := &volOptions{IO: ios}
	var freq, asOf string
	cmd := &cobra.Command{
		Use:   "vol PRICES...",
		Short: "Estimate volatility from peer companies' share price histories",
		Long: `Estimate an annual volatility from guideline public peers' share prices.

Each PRICES file is CSV with a header row: date (YYYY-MM-DD), close and,
optionally, adjusted_close, which is used instead of close when present.
Other columns are ignored. For each peer the estimate is the sample standard
deviation of log returns between successive observations (daily, or the last
observation of each week), annualised with 252 trading days or 52 weeks,
over the lookback window ending at the as-of date. Across peers it reports
the mean, the median and a trimmed mean, and proposes one of them.

The window ends at --as-of (default: the last date found in every file) and
is --lookback years long (default: the longest window every file covers;
match it to the award's expected term).

The figure is an estimate, not an audit opinion: defer to licensed auditors
or valuation professionals and the accounting rules that apply to you
(ASC 718, IFRS 2 or local rules).`,
		Example: `  # Tarnwick Labs values its options with five peers, six years to the period end
  grantworth vol sample/peers/*.csv --as-of 2026-09-30 --lookback 6

  # An Assumptions-sheet row (key,value,source) and a chart of rolling one-year volatility
  grantworth vol sample/peers/*.csv --as-of 2026-09-30 --csv --chart peers.png

  # Weekly returns, as JSON
  grantworth vol sample/peers/*.csv --frequency weekly --json`,
		Args: cobra.MinimumNArgs(1),
		RunE: func(cmd *cobra.Command, args []string) error {
			opts.Files = args
			switch freq {
			case "daily":
				opts.Frequency = valuation.Daily
			case "weekly":
				opts.Frequency = valuation.Weekly
			default:
				return badInput("--frequency %q: want daily or weekly", freq)
			}
			if asOf != "" {
				d, err := time.Parse(time.DateOnly, asOf)
				if err != nil {
					return badInput("--as-of %q is not a date YYYY-MM-DD", asOf)
				}
				opts.AsOf = d
			}
			if f := cmd.Flags(); f.Changed("lookback") && !(opts.LookbackYears > 0 && opts.LookbackYears <= 100) {
				return badInput("--lookback %v: want a number of years above 0 (at most 100)", opts.LookbackYears)
			}
			if opts.MinObservations < 2 {
				return badInput("--min-observations %d: want at least 2", opts.MinObservations)
			}
			switch opts.Propose {
			case "mean", "median", "trimmed-mean":
			default:
				return badInput("--propose %q: want mean, median or trimmed-mean", opts.Propose)
			}
			if opts.JSON && opts.CSV {
				return badInput("--json and --csv cannot be used together")
			}
			if runF != nil {
				return runF(opts)
			}
			return runVol(opts)
		},
	}
	f := cmd.Flags()
	f.StringVar(&freq, "frequency", "daily", "return frequency: daily (252 a year) or weekly (52 a year)")
	f.StringVar(&asOf, "as-of", "", "last date of the window, YYYY-MM-DD (default: the last date common to all files)")
	f.Float64Var(&opts.LookbackYears, "lookback", 0, "window length in years (default: the longest window every file covers)")
	f.IntVar(&opts.MinObservations, "min-observations", 20, "fewest returns accepted per peer")
	f.StringVar(&opts.Propose, "propose", "median", "statistic proposed: median, mean or trimmed-mean")
	f.BoolVar(&opts.JSON, "json", false, "print one JSON object")
	f.BoolVar(&opts.CSV, "csv", false, "print an Assumptions row: key,value,source")
	f.StringVar(&opts.Chart, "chart", "", "write each peer's rolling one-year volatility to this PNG file")
	f.BoolVar(&opts.Force, "force", false, "overwrite an existing --chart file")
	return cmd
}

// volPeer is one peer's estimate.
type volPeer struct {
	Name    string
	History *grants.PriceHistory
	Est     valuation.VolEstimate
}

// volReport is everything `vol` prints.
type volReport struct {
	Frequency     valuation.Frequency
	AsOf          time.Time
	WindowStart   time.Time
	LookbackYears float64
	Covered       volSpan // the years of prices each peer's estimate rests on
	Peers         []volPeer
	Summary       valuation.PeerSummary
	Proposed      string
	Value         float64
	Source        string
	Warnings      []string
}

func runVol(opts *volOptions) error {
	hists := make([]*grants.PriceHistory, 0, len(opts.Files))
	for _, name := range opts.Files {
		f, err := os.Open(name)
		if err != nil {
			return asInput(err)
		}
		h, err := grants.ParsePrices(io.LimitReader(f, 64<<20), name)
		f.Close()
		if err != nil {
			return asInput(err)
		}
		hists = append(hists, h)
	}
	rep, err := estimateVol(opts, hists)
	if err != nil {
		return err
	}
	if opts.Chart != "" {
		if err := writeVolChart(opts, rep); err != nil {
			return err
		}
	}
	for _, w := range rep.Warnings {
		fmt.Fprintf(opts.IO.Err, "warning: %s\n", w)
	}
	switch {
	case opts.JSON:
		return printVolJSON(opts.IO.Out, rep)
	case opts.CSV:
		return printVolCSV(opts.IO.Out, rep)
	}
	printVolTable(opts.IO.Out, rep)
	return nil
}

// volCommonLastDate is the latest date present in every history.
func volCommonLastDate(hists []*grants.PriceHistory) (time.Time, bool) {
	count := map[time.Time]int{}
	for _, h := range hists {
		for _, p := range h.Points {
			count[p.Date]++
		}
	}
	var best time.Time
	for d, n := range count {
		if n == len(hists) && d.After(best) {
			best = d
		}
	}
	return best, !best.IsZero()
}

func volPeerName(file string) string {
	return strings.TrimSuffix(filepath.Base(file), filepath.Ext(file))
}

// estimateVol computes the report from parsed histories (no I/O).
func estimateVol(opts *volOptions, hists []*grants.PriceHistory) (*volReport, error) {
	rep := &volReport{Frequency: opts.Frequency, AsOf: opts.AsOf, Proposed: opts.Propose}
	if rep.AsOf.IsZero() {
		d, ok := volCommonLastDate(hists)
		if !ok {
			return nil, badInput("the files share no date; give --as-of")
		}
		rep.AsOf = d
	}
	// An as-of date before a file's first price leaves that peer nothing.
	var late []string
	var lastStart time.Time
	for _, h := range hists {
		first := h.Points[0].Date
		if first.After(rep.AsOf) {
			late = append(late, fmt.Sprintf("%s starts %s", h.File, first.Format(time.DateOnly)))
		}
		if first.After(lastStart) {
			lastStart = first
		}
	}
	if len(late) > 0 {
		return nil, badInput("--as-of %s is before the prices start (%s): give a date well after %s, so that every file has a window of prices",
			rep.AsOf.Format(time.DateOnly), strings.Join(late, "; "), lastStart.Format(time.DateOnly))
	}
	// Window start: --lookback, or the latest first date (every peer covers it).
	if opts.LookbackYears > 0 {
		rep.LookbackYears = opts.LookbackYears
		rep.WindowStart = rep.AsOf.AddDate(0, 0, -int(math.Round(opts.LookbackYears*365.25)))
	} else {
		for _, h := range hists {
			if first := h.Points[0].Date; first.After(rep.WindowStart) {
				rep.WindowStart = first
			}
		}
		if !rep.WindowStart.Before(rep.AsOf) {
			return nil, badInput("the files have no period in common before %s; give --lookback", rep.AsOf.Format(time.DateOnly))
		}
		rep.LookbackYears = valuation.YearFrac(rep.WindowStart, rep.AsOf)
	}
	vols := make([]float64, 0, len(hists))
	for _, h := range hists {
		var pts []valuation.PricePoint
		lastLine := 0
		for i, p := range h.Points {
			if !p.Date.Before(rep.WindowStart) && !p.Date.After(rep.AsOf) {
				pts = append(pts, p)
				lastLine = h.Lines[i]
			}
		}
		est, err := valuation.HistoricalVol(pts, valuation.VolOptions{
			Frequency: opts.Frequency, AsOf: rep.AsOf, MinObservations: opts.MinObservations,
		})
		if err != nil {
			return nil, asInput(&grants.PriceFileError{File: h.File, Line: lastLine, Err: err})
		}
		if gap := est.First.Sub(rep.WindowStart); gap > 10*24*time.Hour {
			rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s: prices start %s, %.1f years after the window starts (%s)",
				h.File, est.First.Format(time.DateOnly), gap.Hours()/24/365, rep.WindowStart.Format(time.DateOnly)))
		}
		if gap := rep.AsOf.Sub(est.Last); gap > 10*24*time.Hour {
			rep.Warnings = append(rep.Warnings, fmt.Sprintf("%s: last price %s is %d days before the as-of date",
				h.File, est.Last.Format(time.DateOnly), int(gap.Hours()/24)))
		}
		rep.Peers = append(rep.Peers, volPeer{Name: volPeerName(h.File), History: h, Est: est})
		vols = append(vols, est.Annual)
	}
	rep.Covered = volCovered(rep.Peers)
	rep.Summary = valuation.SummarizeVols(vols)
	switch opts.Propose {
	case "mean":
		rep.Value = rep.Summary.Mean
	case "trimmed-mean":
		rep.Value = rep.Summary.TrimmedMean
	default:
		rep.Value = rep.Summary.Median
	}
	over := fmt.Sprintf("%.1f years", rep.LookbackYears)
	if rep.short() {
		over = rep.Covered.text() + " (all the prices the files hold; " + over + " were asked)"
	}
	rep.Source = fmt.Sprintf("%s of %d peers' %s log-return volatility over %s to %s",
		strings.ReplaceAll(rep.Proposed, "-", " "), len(rep.Peers), rep.Frequency, over, rep.AsOf.Format(time.DateOnly))
	return rep, nil
}

// volSpan is the shortest and the longest stretch of prices, in years,
// that the peers' estimates rest on.
type volSpan struct{ Min, Max float64 }

func volCovered(peers []volPeer) volSpan {
	var sp volSpan
	for i, p := range peers {
		y := valuation.YearFrac(p.Est.First, p.Est.Last)
		if i == 0 || y < sp.Min {
			sp.Min = y
		}
		if y > sp.Max {
			sp.Max = y
		}
	}
	return sp
}

// text is "6.1 years", or "6.1 to 7.0 years" when the peers differ.
func (sp volSpan) text() string {
	lo, hi := fmt.Sprintf("%.1f", sp.Min), fmt.Sprintf("%.1f", sp.Max)
	if lo == hi {
		return lo + " years"
	}
	return lo + " to " + hi + " years"
}

// short reports whether the prices cover visibly less than the window: a
// --lookback longer than the files' histories.
func (rep *volReport) short() bool {
	return fmt.Sprintf("%.1f", rep.Covered.Max) != fmt.Sprintf("%.1f", rep.LookbackYears) && rep.Covered.Max < rep.LookbackYears
}

func (rep *volReport) why() string {
	switch rep.Proposed {
	case "mean":
		return "the mean, as asked (--propose mean); it weighs every peer equally, outliers included"
	case "trimmed-mean":
		return fmt.Sprintf("the trimmed mean, as asked: it drops the %d highest and %d lowest peers", rep.Summary.Trimmed, rep.Summary.Trimmed)
	}
	return "the median: with few peers one outlying company moves the mean, not the median (common practice)"
}

func volPct(v float64) string { return fmt.Sprintf("%.2f%%", 100*v) }

func printVolTable(w io.Writer, rep *volReport) {
	fmt.Fprintf(w, "Volatility from %d peers' %s log returns, annualised with %v %s a year\n",
		len(rep.Peers), rep.Frequency, rep.Frequency.PeriodsPerYear(), map[valuation.Frequency]string{valuation.Daily: "trading days", valuation.Weekly: "weeks"}[rep.Frequency])
	fmt.Fprintf(w, "Window: %s to %s (%.1f years)", rep.WindowStart.Format(time.DateOnly), rep.AsOf.Format(time.DateOnly), rep.LookbackYears)
	if rep.short() {
		fmt.Fprintf(w, "; the prices cover %s of it", rep.Covered.text())
	}
	fmt.Fprint(w, "\n\n")
	tw := tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "peer\tprice column\treturns\tfirst\tlast\tannual vol")
	for _, p := range rep.Peers {
		fmt.Fprintf(tw, "%s\t%s\t%d\t%s\t%s\t%s\n", p.Name, p.History.Column, p.Est.Observations,
			p.Est.First.Format(time.DateOnly), p.Est.Last.Format(time.DateOnly), volPct(p.Est.Annual))
	}
	tw.Flush()
	fmt.Fprintln(w)
	tw = tabwriter.NewWriter(w, 0, 0, 2, ' ', 0)
	mark := func(name string) string {
		if name == rep.Proposed {
			return "  <- proposed"
		}
		return ""
	}
	fmt.Fprintf(tw, "mean\t%s%s\n", volPct(rep.Summary.Mean), mark("mean"))
	fmt.Fprintf(tw, "median\t%s%s\n", volPct(rep.Summary.Median), mark("median"))
	fmt.Fprintf(tw, "trimmed mean\t%s%s\t(drops %d highest and %d lowest)\n", volPct(rep.Summary.TrimmedMean), mark("trimmed-mean"), rep.Summary.Trimmed, rep.Summary.Trimmed)
	tw.Flush()
	fmt.Fprintf(w, "\nProposed volatility %s: %s.\nSource text: %s\n", volPct(rep.Value), rep.why(), rep.Source)
	fmt.Fprintln(w, "\nAn estimate, not an audit opinion: defer to licensed auditors or valuation professionals\nand the accounting rules that apply to you (ASC 718, IFRS 2 or local rules).")
}

func printVolJSON(w io.Writer, rep *volReport) error {
	type peer struct {
		Name         string  `json:"name"`
		File         string  `json:"file"`
		PriceColumn  string  `json:"price_column"`
		Observations int     `json:"observations"`
		FirstDate    string  `json:"first_date"`
		LastDate     string  `json:"last_date"`
		PeriodStdDev float64 `json:"period_std_dev"`
		Volatility   float64 `json:"volatility"`
	}
	out := struct {
		Frequency      string   `json:"frequency"`
		PeriodsPerYear float64  `json:"periods_per_year"`
		AsOf           string   `json:"as_of"`
		WindowStart    string   `json:"window_start"`
		LookbackYears  float64  `json:"lookback_years"`
		Peers          []peer   `json:"peers"`
		Mean           float64  `json:"mean"`
		Median         float64  `json:"median"`
		TrimmedMean    float64  `json:"trimmed_mean"`
		TrimmedEach    int      `json:"trimmed_each_side"`
		Proposed       string   `json:"proposed"`
		Volatility     float64  `json:"volatility"`
		Source         string   `json:"source"`
		Warnings       []string `json:"warnings"`
	}{
		Frequency: rep.Frequency.String(), PeriodsPerYear: rep.Frequency.PeriodsPerYear(),
		AsOf: rep.AsOf.Format(time.DateOnly), WindowStart: rep.WindowStart.Format(time.DateOnly),
		LookbackYears: rep.LookbackYears, Mean: rep.Summary.Mean, Median: rep.Summary.Median,
		TrimmedMean: rep.Summary.TrimmedMean, TrimmedEach: rep.Summary.Trimmed,
		Proposed: rep.Proposed, Volatility: rep.Value, Source: rep.Source, Warnings: append([]string{}, rep.Warnings...),
	}
	for _, p := range rep.Peers {
		out.Peers = append(out.Peers, peer{p.Name, p.History.File, p.History.Column, p.Est.Observations,
			p.Est.First.Format(time.DateOnly), p.Est.Last.Format(time.DateOnly), p.Est.PeriodStdDev, p.Est.Annual})
	}
	enc := json.NewEncoder(w)
	enc.SetIndent("", "  ")
	return enc.Encode(out)
}

func printVolCSV(w io.Writer, rep *volReport) error {
	cw := csv.NewWriter(w)
	cw.Write([]string{"key", "value", "source"})
	cw.Write([]string{"volatility", fmt.Sprintf("%.4f", rep.Value), rep.Source})
	cw.Flush()
	return cw.Error()
}

// writeVolChart plots each peer's rolling one-year volatility to opts.Chart,
// atomically: a temporary file in the same directory, synced, then renamed.
func writeVolChart(opts *volOptions, rep *volReport) error {
	if !opts.Force {
		if _, err := os.Stat(opts.Chart); err == nil {
			return badInput("--chart %s already exists; give --force to replace it", opts.Chart)
		}
	}
	p := plot.New()
	p.Title.Text = fmt.Sprintf("Rolling one-year %s volatility of %d peers", rep.Frequency, len(rep.Peers))
	p.Y.Label.Text = "annual volatility (%)"
	p.X.Tick.Marker = plot.TimeTicks{Format: "2006-01"}
	p.Add(plotter.NewGrid())
	for i, peer := range rep.Peers {
		roll := valuation.RollingVol(peer.History.Points, rep.Frequency, 1)
		xy := make(plotter.XYs, 0, len(roll))
		for _, r := range roll {
			if r.Date.After(rep.AsOf) {
				break
			}
			xy = append(xy, plotter.XY{X: float64(r.Date.Unix()), Y: 100 * r.Vol})
		}
		if len(xy) == 0 {
			continue
		}
		l, err := plotter.NewLine(xy)
		if err != nil {
			return err
		}
		l.Color = plotutil.Color(i)
		l.Dashes = plotutil.Dashes(i / 7)
		p.Add(l)
		p.Legend.Add(peer.Name, l)
	}
	p.Legend.Top = true
	p.Y.Min = 0
	if p.Y.Max > 0 {
		p.Y.Max *= 1.3 // headroom for the legend
	}
	wt, err := p.WriterTo(9*vg.Inch, 4.5*vg.Inch, "png")
	if err != nil {
		return err
	}
	return writeFileAtomic(opts.Chart, func(w io.Writer) error {
		_, err := wt.WriteTo(w)
		return err
	})
}
