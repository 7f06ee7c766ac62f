package report

import (
	"image/color"
	"math"
	"strconv"
	"strings"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
)

// designInks tell the designs apart on every chart of the comparison, in
// design order; designDashes and designGlyphs tell them apart in grey too.
var designInks = []color.RGBA{
	{R: 0x2F, G: 0x48, B: 0x58, A: 0xFF}, // slate
	{R: 0xC0, G: 0x7A, B: 0x1E, A: 0xFF}, // amber
	{R: 0x3A, G: 0x8F, B: 0x85, A: 0xFF}, // teal
	{R: 0xA8, G: 0x4A, B: 0x3C, A: 0xFF}, // brick
	{R: 0x7A, G: 0x5C, B: 0x8E, A: 0xFF}, // plum
	{R: 0x6E, G: 0x86, B: 0x2E, A: 0xFF}, // olive
	{R: 0x4C, G: 0x8D, B: 0xC0, A: 0xFF}, // sky
	{R: 0x9A, G: 0x7B, B: 0x4F, A: 0xFF}, // umber
	{R: 0xC4, G: 0x6A, B: 0x8C, A: 0xFF}, // rose
	{R: 0x55, G: 0x55, B: 0x55, A: 0xFF}, // graphite
}

var designDashes = [][]vg.Length{nil, {vg.Points(5), vg.Points(2)}, {vg.Points(2), vg.Points(2)}, {vg.Points(6), vg.Points(2), vg.Points(1.5), vg.Points(2)}}

var designGlyphs = []draw.GlyphDrawer{draw.CircleGlyph{}, draw.BoxGlyph{}, draw.TriangleGlyph{}, draw.PyramidGlyph{}, draw.RingGlyph{}, draw.CrossGlyph{}}

func designInk(i int) color.RGBA { return designInks[i%len(designInks)] }

// designLine is a design's line in its ink and dash.
func designLine(i int, pts plotter.XYs) (*plotter.Line, error) {
	l, err := plotter.NewLine(pts)
	if err != nil {
		return nil, err
	}
	l.Color = designInk(i)
	l.Width = vg.Points(1.4)
	l.Dashes = designDashes[i%len(designDashes)]
	return l, nil
}

func legendAbove(p *plot.Plot) {
	p.Legend.Top, p.Legend.Left = true, true
	p.Legend.TextStyle.Font.Size = vg.Points(7)
	p.Legend.ThumbnailWidth = vg.Points(18)
}

// thousands is an amount in thousands of the currency, for chart axes.
func thousands(v float64) float64 { return v / 1000 }

// ExpenseByYearPNG charts each design's expected expense by fiscal year as
// bars side by side, a group per year.
func ExpenseByYearPNG(m *CompareModel, w, h vg.Length) ([]byte, error) {
	p := basePlot("", "fiscal year", "expected expense ("+m.Currency+" thousands)")
	n := len(m.Designs)
	group := 0.8 * float64(w) / float64(max(len(m.Years), 1)) // points per year group
	width := vg.Length(math.Min(group/float64(max(n, 1)), 16))
	for i, d := range m.Designs {
		vals := make(plotter.Values, len(m.Years))
		for k, y := range m.Years {
			vals[k] = thousands(d.expenseIn(y.Year))
		}
		b, err := plotter.NewBarChart(vals, width)
		if err != nil {
			return nil, err
		}
		b.Color, b.LineStyle.Width = designInk(i), 0
		b.Offset = vg.Length(float64(i)-float64(n-1)/2) * width
		p.Add(b)
		p.Legend.Add(d.Design, b)
	}
	labels := make([]string, len(m.Years))
	for i, y := range m.Years {
		labels[i] = strconv.Itoa(y.Year)
	}
	p.NominalX(labels...)
	top := 0.0
	for _, d := range m.Designs {
		for _, y := range d.ExpenseByYear {
			top = math.Max(top, thousands(y.Amount))
		}
	}
	p.Y.Min, p.Y.Max = 0, 1.3*top // room for the legend above the bars
	p.Y.Tick.Marker = amountTicks{}
	legendAbove(p)
	p.Legend.Left = false
	return pngOf(p, w, h)
}

// payoffAt is what the whole award of d pays at share price s at expiry
// (an RSU: at vesting).
func payoffAt(d DesignResult, s float64) float64 {
	if d.Instrument == RSU {
		return float64(d.Shares) * s
	}
	return float64(d.Shares) * d.DilutionFactor * math.Max(s-d.Strike, 0)
}

// PayoffAtExpiryPNG charts what each design pays the holder against the
// share price at expiry. Designs that pay alike (the same instrument,
// strike and shares) share one line; each design's
// break-even price is marked on its line in the design's colour, and the
// share price at grant by a dashed line.
func PayoffAtExpiryPNG(m *CompareModel, w, h vg.Length) ([]byte, error) {
	p := basePlot("", "share price at expiry ("+m.Currency+"; an RSU: at vesting)", "value to the holder ("+m.Currency+" thousands)")
	hi := 3 * m.SharePrice
	for _, d := range m.Designs {
		hi = math.Max(hi, 1.25*d.BreakEvenSharePrice)
	}
	type payoff struct {
		d     DesignResult
		names []string
	}
	var lines []*payoff
	for _, d := range m.Designs {
		var same *payoff
		for _, l := range lines {
			if l.d.Instrument == d.Instrument && l.d.Strike == d.Strike && l.d.Shares == d.Shares && l.d.DilutionFactor == d.DilutionFactor {
				same = l
			}
		}
		if same == nil {
			same = &payoff{d: d}
			lines = append(lines, same)
		}
		same.names = append(same.names, d.Design)
	}
	const n = 240
	top := 0.0
	for i, l := range lines {
		pts := make(plotter.XYs, n+1)
		for k := range pts {
			s := hi * float64(k) / n
			pts[k] = plotter.XY{X: s, Y: thousands(payoffAt(l.d, s))}
		}
		top = math.Max(top, pts[n].Y)
		line, err := plotter.NewLine(pts)
		if err != nil {
			return nil, err
		}
		line.Color, line.Width = inkData, vg.Points(1.2)
		line.Dashes = designDashes[i%len(designDashes)]
		p.Add(line)
		what := count(l.d.Shares) + " " + map[string]string{Option: "options", Warrant: "warrants", RSU: "RSUs"}[l.d.Instrument]
		if l.d.Instrument != RSU {
			what += " at " + fixed(l.d.Strike, 2)
		}
		p.Legend.Add(what+" ("+strings.Join(l.names, ", ")+")", line)
	}
	now, err := plotter.NewLine(plotter.XYs{{X: m.SharePrice, Y: 0}, {X: m.SharePrice, Y: top}})
	if err != nil {
		return nil, err
	}
	now.Color, now.Dashes = color.Gray{Y: 0x80}, []vg.Length{vg.Points(2), vg.Points(2)}
	p.Add(now)
	p.Legend.Add("share price at grant, "+fixed(m.SharePrice, 2), now)
	for i, d := range m.Designs {
		be, err := plotter.NewScatter(plotter.XYs{{X: d.BreakEvenSharePrice, Y: thousands(payoffAt(d, d.BreakEvenSharePrice))}})
		if err != nil {
			return nil, err
		}
		be.Color, be.Shape, be.Radius = designInk(i), designGlyphs[i%len(designGlyphs)], vg.Points(3.2)
		p.Add(be)
		p.Legend.Add(d.Design+": break-even "+fixed(d.BreakEvenSharePrice, 2), be)
	}
	p.X.Min, p.Y.Min, p.X.Max, p.Y.Max = 0, 0, hi, 1.8*top // the legend above the lines
	p.Y.Tick.Marker = amountTicks{}
	legendAbove(p)
	return pngOf(p, w, h)
}

// PayoffRangePNG charts the spread of each design's payoff in today's
// money: a line from the 5th to the 95th percentile, a box from the 25th
// to the 75th, a bar at the median and a diamond at the fair value (the
// mean).
func PayoffRangePNG(m *CompareModel, w, h vg.Length) ([]byte, error) {
	p := basePlot("", "", "payoff of the award in today's money ("+m.Currency+" thousands)")
	const half = 0.22
	var names []string
	for i, d := range m.Designs {
		x := float64(i)
		q := func(pc float64) float64 { return thousands(d.payoffAt(pc).Total) }
		ink := designInk(i)
		whisker, err := plotter.NewLine(plotter.XYs{{X: x, Y: q(0.05)}, {X: x, Y: q(0.95)}})
		if err != nil {
			return nil, err
		}
		whisker.Color, whisker.Width = ink, vg.Points(1)
		box, err := plotter.NewPolygon(plotter.XYs{{X: x - half, Y: q(0.25)}, {X: x + half, Y: q(0.25)}, {X: x + half, Y: q(0.75)}, {X: x - half, Y: q(0.75)}})
		if err != nil {
			return nil, err
		}
		box.Color = color.NRGBA{R: ink.R, G: ink.G, B: ink.B, A: 0x55}
		box.LineStyle.Color, box.LineStyle.Width = ink, vg.Points(0.8)
		med, err := plotter.NewLine(plotter.XYs{{X: x - half, Y: q(0.5)}, {X: x + half, Y: q(0.5)}})
		if err != nil {
			return nil, err
		}
		med.Color, med.Width = ink, vg.Points(2.2)
		mean, err := plotter.NewScatter(plotter.XYs{{X: x, Y: thousands(d.FairValueTotal)}})
		if err != nil {
			return nil, err
		}
		mean.Color, mean.Shape, mean.Radius = color.Black, draw.PyramidGlyph{}, vg.Points(3)
		p.Add(whisker, box, med, mean)
		if i == 0 {
			p.Legend.Add("5th–95th percentile", whisker)
			p.Legend.Add("25th–75th percentile", box)
			p.Legend.Add("median", med)
			p.Legend.Add("fair value (the mean)", mean)
		}
		names = append(names, d.Design)
	}
	p.NominalX(names...)
	top := 0.0
	for _, d := range m.Designs {
		top = math.Max(top, thousands(d.payoffAt(0.95).Total))
	}
	p.X.Min, p.X.Max = -0.6, float64(len(names))-0.4
	p.Y.Min, p.Y.Max = 0, 1.3*top // room for the legend
	p.Y.Tick.Marker = amountTicks{}
	legendAbove(p)
	p.Legend.Left = false
	return pngOf(p, w, h)
}

// EndTimingPNG charts, for each design, the share of the award that has
// ended (exercised, delivered or lapsed) by each month after the grant.
func EndTimingPNG(m *CompareModel, w, h vg.Length) ([]byte, error) {
	p := basePlot("", "years after the grant", "share of the award ended (%)")
	for i, d := range m.Designs {
		pts := plotter.XYs{{X: 0, Y: 0}}
		cum := 0.0
		for k, pr := range d.EndByMonth {
			cum += pr
			pts = append(pts, plotter.XY{X: float64(k+1) / 12, Y: 100 * math.Min(cum, 1)}) // ended by month k+1
		}
		l, err := designLine(i, pts)
		if err != nil {
			return nil, err
		}
		p.Add(l)
		p.Legend.Add(d.Design, l)
	}
	p.Y.Min, p.Y.Max, p.X.Min = 0, 100, 0
	legendAbove(p)
	p.Legend.Top, p.Legend.Left = false, false
	return pngOf(p, w, h)
}
