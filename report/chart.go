package report

import (
	"bytes"
	"encoding/binary"
	"hash/crc32"
	"image"
	"image/color"
	"image/png"
	"math"
	"strings"
	"sync"

	"github.com/klauspost/compress/zlib"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/font"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
)

// Chart colours: a dark slate for data, a muted amber for the reference
// (and the current period), a pale slate for what is only expected.
var (
	inkData     = color.RGBA{R: 0x2F, G: 0x48, B: 0x58, A: 0xFF}
	inkRef      = color.RGBA{R: 0xC0, G: 0x7A, B: 0x1E, A: 0xFF}
	inkGrid     = color.RGBA{R: 0xDD, G: 0xDD, B: 0xDD, A: 0xFF}
	inkExpected = color.RGBA{R: 0xB9, G: 0xC8, B: 0xD2, A: 0xFF}
)

const chartDPI = 200

// pngOf draws p at w×h and returns the PNG bytes.
func pngOf(p *plot.Plot, w, h vg.Length) ([]byte, error) {
	c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(chartDPI))
	p.Draw(draw.New(c))
	img, ok := c.Image().(*image.RGBA)
	if !ok {
		var buf bytes.Buffer
		_, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf)
		return buf.Bytes(), err
	}
	return chartPNG(img)
}

// chartPNGLevel is the Deflate level of the charts' image data. The memo
// embeds a PNG's image data as it is, so this level sets the charts' size
// in the PDF. Without filters, a chart's large runs of one colour
// compress at level 3 of github.com/klauspost/compress into about as many
// bytes as the standard PNG encoder's adaptive filters at its default
// level (the sample memo: 559 KB against 559 KB), in a quarter of the
// time.
const chartPNGLevel = 3

// pngScratch is what chartPNG reuses from one chart to the next: a row
// of image data, the compressed data and the compressor.
type pngScratch struct {
	row []byte
	out bytes.Buffer
	zw  *zlib.Writer
}

var pngScratchPool = sync.Pool{New: func() any { return new(pngScratch) }}

// chartPNG encodes an opaque chart as an 8-bit RGB PNG (colour type 2)
// with filter type 0 (none) on every row, its alpha dropped: the chart is
// drawn on an opaque background, so every pixel is already opaque, and
// the image is the one the PNG encoder writes (it too writes an opaque
// image as RGB), bit for bit once decoded.
func chartPNG(img *image.RGBA) ([]byte, error) {
	b := img.Bounds()
	w, h := b.Dx(), b.Dy()
	s := pngScratchPool.Get().(*pngScratch)
	defer pngScratchPool.Put(s)
	idat := &s.out // the image data, compressed, in one chunk
	idat.Reset()
	var err error
	if s.zw == nil {
		s.zw, err = zlib.NewWriterLevel(idat, chartPNGLevel)
		if err != nil {
			return nil, err
		}
	} else {
		s.zw.Reset(idat)
	}
	n := 1 + 3*w
	if cap(s.row) < n {
		s.row = make([]byte, n)
	}
	row := s.row[:n]
	alpha := byte(0xFF)
	for y := b.Min.Y; y < b.Max.Y; y++ {
		px := img.Pix[img.PixOffset(b.Min.X, y):]
		row[0] = 0 // filter type none
		for x, o := 0, 1; x < w; x, o = x+1, o+3 {
			row[o], row[o+1], row[o+2] = px[4*x], px[4*x+1], px[4*x+2]
			alpha &= px[4*x+3]
		}
		if _, err := s.zw.Write(row); err != nil {
			return nil, err
		}
	}
	if err := s.zw.Close(); err != nil {
		return nil, err
	}
	if alpha != 0xFF { // not opaque after all: keep the alpha
		var buf bytes.Buffer
		err := png.Encode(&buf, img)
		return buf.Bytes(), err
	}
	out := make([]byte, 0, 8+25+12+idat.Len()+12)
	out = append(out, "\x89PNG\r\n\x1a\n"...)
	var ihdr [13]byte
	binary.BigEndian.PutUint32(ihdr[0:], uint32(w))
	binary.BigEndian.PutUint32(ihdr[4:], uint32(h))
	ihdr[8], ihdr[9] = 8, 2 // 8 bits a sample, truecolour; compression, filter and interlace methods 0
	out = pngChunk(out, "IHDR", ihdr[:])
	out = pngChunk(out, "IDAT", idat.Bytes())
	out = pngChunk(out, "IEND", nil)
	return out, nil
}

// pngChunk appends a PNG chunk: length, type, data and the CRC of type
// and data.
func pngChunk(out []byte, typ string, data []byte) []byte {
	out = binary.BigEndian.AppendUint32(out, uint32(len(data)))
	start := len(out)
	out = append(out, typ...)
	out = append(out, data...)
	return binary.BigEndian.AppendUint32(out, crc32.ChecksumIEEE(out[start:]))
}

func init() {
	// Sans-serif, to match the memo's text.
	plot.DefaultFont = font.Font{Typeface: "Liberation", Variant: "Sans"}
	plotter.DefaultFont = plot.DefaultFont
}

func basePlot(title, xlabel, ylabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font.Size = vg.Points(10)
	p.X.Label.Text = xlabel
	p.Y.Label.Text = ylabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font.Size = vg.Points(8)
		a.Tick.Label.Font.Size = vg.Points(7)
	}
	g := plotter.NewGrid()
	g.Vertical.Color, g.Horizontal.Color = inkGrid, inkGrid
	p.Add(g)
	return p
}

// signTicks are the default ticks with the reports' minus sign.
type signTicks struct{}

func (signTicks) Ticks(min, max float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(min, max)
	for i := range ts {
		ts[i].Label = strings.ReplaceAll(ts[i].Label, "-", minus)
	}
	return ts
}

// amountTicks labels an axis with grouped digits instead of exponents.
type amountTicks struct{ decimals int }

func (t amountTicks) Ticks(min, max float64) []plot.Tick {
	ts := plot.DefaultTicks{}.Ticks(min, max)
	for i := range ts {
		if ts[i].Label != "" {
			ts[i].Label = groupDigits(ts[i].Value, t.decimals)
		}
	}
	return ts
}

// SensitivityPNG charts total fair value against the shifts of one input,
// with the base case marked.
func SensitivityPNG(s Sensitivity, currency string, w, h vg.Length) ([]byte, error) {
	p := basePlot(s.Label, "shift ("+s.Unit+")", "total fair value ("+currency+" thousands)")
	pts := make(plotter.XYs, len(s.Points))
	var base plotter.XYs
	for i, q := range s.Points {
		pts[i] = plotter.XY{X: q.Shift, Y: q.FairValueTotal / 1000}
		if q.Shift == 0 {
			base = append(base, pts[i])
		}
	}
	l, sc, err := dataLine(pts)
	if err != nil {
		return nil, err
	}
	p.Add(l, sc)
	if len(base) > 0 {
		b, err := plotter.NewScatter(base)
		if err != nil {
			return nil, err
		}
		b.Color, b.Shape, b.Radius = inkRef, draw.CircleGlyph{}, vg.Points(3.5)
		p.Add(b)
	}
	p.X.Tick.Marker = signTicks{}
	p.Y.Tick.Marker = amountTicks{decimals: 1}
	return pngOf(p, w, h)
}

// ConvergencePNG charts raw N-step lattice values against N (log scale)
// with the auto value and its error band.
func ConvergencePNG(c Convergence, currency string, w, h vg.Length) ([]byte, error) {
	p := basePlot("", "lattice steps N (log scale)", "value per share ("+currency+")")
	pts := make(plotter.XYs, len(c.Points))
	lo, hi := math.Inf(1), math.Inf(-1)
	for i, q := range c.Points {
		pts[i] = plotter.XY{X: float64(q.Steps), Y: q.Value}
		lo, hi = math.Min(lo, float64(q.Steps)), math.Max(hi, float64(q.Steps))
	}
	if len(pts) == 0 {
		lo, hi = 10, 1000
	}
	p.X.Scale = plot.LogScale{}
	p.X.Tick.Marker = plot.LogTicks{Prec: -1}
	line := func(y float64, dashed bool) (*plotter.Line, error) {
		l, err := plotter.NewLine(plotter.XYs{{X: lo, Y: y}, {X: hi, Y: y}})
		if err != nil {
			return nil, err
		}
		l.Color = inkRef
		if dashed {
			l.Dashes = []vg.Length{vg.Points(3), vg.Points(2)}
		} else {
			l.Width = vg.Points(1.2)
		}
		return l, nil
	}
	auto, err := line(c.AutoValue, false)
	if err != nil {
		return nil, err
	}
	p.Add(auto)
	p.Legend.Add("auto value", auto)
	if c.AutoError > 0 {
		for _, y := range []float64{c.AutoValue - c.AutoError, c.AutoValue + c.AutoError} {
			band, err := line(y, true)
			if err != nil {
				return nil, err
			}
			p.Add(band)
		}
	}
	if len(pts) > 0 {
		l, sc, err := dataLine(pts)
		if err != nil {
			return nil, err
		}
		p.Add(l, sc)
		p.Legend.Add("raw N-step value", l, sc)
	}
	p.Legend.Top = true
	p.Legend.TextStyle.Font.Size = vg.Points(7)
	p.Y.Tick.Marker = amountTicks{decimals: 4}
	return pngOf(p, w, h)
}

// BarPNG is a bar chart of values by label, for memo sections added by
// hooks (for example expense by quarter).
func BarPNG(title string, labels []string, values []float64, ylabel string, w, h vg.Length) ([]byte, error) {
	p := basePlot(title, "", ylabel)
	bars, err := plotter.NewBarChart(plotter.Values(values), vg.Points(14))
	if err != nil {
		return nil, err
	}
	bars.Color, bars.LineStyle.Width = inkData, 0
	p.Add(bars)
	p.NominalX(labels...)
	p.X.Tick.Label.Rotation = math.Pi / 4
	p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XRight, draw.YCenter
	p.Y.Min, p.Y.Max = barRange(values)
	p.Y.Tick.Marker = amountTicks{}
	return pngOf(p, w, h)
}

// PeriodKind tells a past period, the current one and an expected one
// apart on a chart of periods.
type PeriodKind int

const (
	PeriodPast PeriodKind = iota
	PeriodCurrent
	PeriodExpected
)

// PeriodBar is one period of a chart of periods.
type PeriodBar struct {
	Label string
	Value float64
	Kind  PeriodKind
}

// periodInks are the fill of each kind of period and its legend text.
var periodInks = [...]struct {
	fill   color.Color
	legend string
}{
	PeriodPast:     {inkData, "recognized"},
	PeriodCurrent:  {inkRef, "this period"},
	PeriodExpected: {inkExpected, "expected"},
}

// barHeadroom is the room above the tallest bar, as a share of its
// height: no bar reaches the top of the axis, and the legend above the
// bars has room.
const barHeadroom = 0.25

// barRange is the value axis of a bar chart of values: from zero (or the
// lowest value, when one is negative) to the highest value and
// barHeadroom above it, so that every bar is drawn whole.
func barRange(values []float64) (lo, hi float64) {
	for _, v := range values {
		lo, hi = min(lo, v), max(hi, v)
	}
	if hi == lo {
		return lo, lo + 1
	}
	return lo, hi + (hi-lo)*barHeadroom
}

// PeriodBarsPNG is a bar chart of amounts by period, the past periods,
// the current one and the expected ones each in a fill of its own and
// named in a legend; the value axis runs from zero to the tallest bar
// with room above it.
func PeriodBarsPNG(title string, bars []PeriodBar, ylabel string, w, h vg.Length) ([]byte, error) {
	p := basePlot(title, "", ylabel)
	labels := make([]string, len(bars))
	values := make([]float64, len(bars))
	for i, b := range bars {
		labels[i], values[i] = b.Label, b.Value
	}
	for kind, ink := range periodInks {
		vs := make(plotter.Values, len(bars))
		any := false
		for i, b := range bars {
			if int(b.Kind) == kind {
				vs[i], any = b.Value, true
			}
		}
		if !any {
			continue
		}
		bc, err := plotter.NewBarChart(vs, vg.Points(14))
		if err != nil {
			return nil, err
		}
		bc.Color = ink.fill
		bc.LineStyle.Width = vg.Points(0.4)
		bc.LineStyle.Color = inkData
		p.Add(bc)
		p.Legend.Add(ink.legend, bc)
	}
	p.Legend.Top = true
	p.Legend.TextStyle.Font.Size = vg.Points(7)
	p.NominalX(labels...)
	p.X.Tick.Label.Rotation = math.Pi / 4
	p.X.Tick.Label.XAlign, p.X.Tick.Label.YAlign = draw.XRight, draw.YCenter
	p.Y.Min, p.Y.Max = barRange(values)
	p.Y.Tick.Marker = amountTicks{}
	return pngOf(p, w, h)
}

// dataLine is a series drawn as a line through round points in the data ink.
func dataLine(pts plotter.XYs) (*plotter.Line, *plotter.Scatter, error) {
	l, sc, err := plotter.NewLinePoints(pts)
	if err != nil {
		return nil, nil, err
	}
	l.Color, sc.Color = inkData, inkData
	sc.Shape = draw.CircleGlyph{}
	return l, sc, nil
}
