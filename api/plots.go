package api

import (
	"bytes"
	"encoding/json"
	"fmt"
	"image/color"
	"math"
	"mime"
	"net/http"
	"sort"
	"strings"

	"github.com/labstack/echo/v4"
	"gonum.org/v1/plot"
	"gonum.org/v1/plot/plotter"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/vgimg"
	"gonum.org/v1/plot/vg/vgsvg"
)

// Plots for reports and recipe reviews, drawn with gonum/plot: the solid
// fat curve of one or several samples (with measured points), the path of
// a hardening batch (composition and trans against iodine value), and a
// composition bar chart. SVG (the default) or PNG, by the request's
// format or by Accept; 16 × 10 cm, 11 pt text, lines told apart by dash
// as well as colour, so that they read in black-and-white print. The
// numbers behind each plot come from the same operations as the JSON
// routes.

// PlotSample is one sample of a plot: a legend label, its profile and,
// for the solid fat curve, its measured SFC points.
type PlotSample struct {
	Label    string          `json:"label"`
	Profile  json.RawMessage `json:"profile"`
	Measured json.RawMessage `json:"measured,omitempty"`
}

// SolidFatPlotRequest is the body of POST /v1/plots/solid-fat.
type SolidFatPlotRequest struct {
	Samples []PlotSample               `json:"samples"`
	Melting map[string]json.RawMessage `json:"melting,omitempty"`
	Format  string                     `json:"format,omitempty"`
	Title   string                     `json:"title,omitempty"`
}

// HardeningPathPlotRequest is the body of POST /v1/plots/hardening-path.
type HardeningPathPlotRequest struct {
	Forecast json.RawMessage `json:"forecast"`
	Format   string          `json:"format,omitempty"`
	Title    string          `json:"title,omitempty"`
}

// CompositionPlotRequest is the body of POST /v1/plots/composition.
type CompositionPlotRequest struct {
	Samples    []PlotSample `json:"samples"`
	MinPercent *float64     `json:"min_percent,omitempty"`
	Format     string       `json:"format,omitempty"`
	Title      string       `json:"title,omitempty"`
}

// plotCSP lets an SVG plot's inline styles apply and nothing else.
const plotCSP = "default-src 'none'; style-src 'unsafe-inline'; frame-ancestors 'none'"

// Plot media types.
const (
	mimeSVG = "image/svg+xml"
	mimePNG = "image/png"
)

// plotFormat is the format asked for: the request's field, else Accept,
// else SVG.
func plotFormat(field string, accept string) string {
	switch field {
	case "svg":
		return mimeSVG
	case "png":
		return mimePNG
	}
	for _, part := range strings.Split(accept, ",") {
		mt, _, err := mime.ParseMediaType(strings.TrimSpace(part))
		if err != nil {
			continue
		}
		switch mt {
		case mimePNG:
			return mimePNG
		case mimeSVG:
			return mimeSVG
		}
	}
	return mimeSVG
}

// Print-readable styles: a palette that survives colour-blindness and
// grey-scale printing (Okabe & Ito 2008), and dashes for each series.
var (
	plotColors = []color.Color{
		color.RGBA{0, 114, 178, 255}, color.RGBA{213, 94, 0, 255}, color.RGBA{0, 158, 115, 255},
		color.RGBA{204, 121, 167, 255}, color.RGBA{86, 180, 233, 255}, color.RGBA{230, 159, 0, 255},
		color.RGBA{0, 0, 0, 255}, color.RGBA{240, 228, 66, 255},
	}
	plotDashes = [][]vg.Length{nil, {vg.Points(6), vg.Points(3)}, {vg.Points(2), vg.Points(2)},
		{vg.Points(8), vg.Points(3), vg.Points(2), vg.Points(3)}, {vg.Points(4), vg.Points(4)}}
	plotShapes = []draw.GlyphDrawer{draw.CircleGlyph{}, draw.SquareGlyph{}, draw.TriangleGlyph{}, draw.RingGlyph{}, draw.BoxGlyph{}, draw.CrossGlyph{}}
)

func lineStyle(i int) draw.LineStyle {
	return draw.LineStyle{Color: plotColors[i%len(plotColors)], Width: vg.Points(1.6), Dashes: plotDashes[i%len(plotDashes)]}
}

// newPlot is a plot with the house style.
func newPlot(title, xLabel, yLabel string) *plot.Plot {
	p := plot.New()
	p.Title.Text = title
	p.Title.TextStyle.Font.Size = vg.Points(13)
	p.X.Label.Text = xLabel
	p.Y.Label.Text = yLabel
	for _, a := range []*plot.Axis{&p.X, &p.Y} {
		a.Label.TextStyle.Font.Size = vg.Points(11)
		a.Tick.Label.Font.Size = vg.Points(10)
	}
	p.Legend.TextStyle.Font.Size = vg.Points(10)
	p.Legend.Top = true
	p.Add(plotter.NewGrid())
	return p
}

// stepTicks labels every multiple of step, with unlabelled minor ticks
// at half steps.
type stepTicks struct{ step float64 }

// Ticks implements plot.Ticker.
func (t stepTicks) Ticks(lo, hi float64) []plot.Tick {
	var out []plot.Tick
	half := t.step / 2
	for v := math.Ceil(lo/half) * half; v <= hi+1e-9; v += half {
		k := plot.Tick{Value: v}
		if math.Abs(math.Remainder(v, t.step)) < 1e-9 {
			k.Label = strconvFormat(v)
		}
		out = append(out, k)
	}
	return out
}

func strconvFormat(v float64) string {
	if v == math.Trunc(v) {
		return fmt.Sprintf("%.0f", v)
	}
	return fmt.Sprintf("%g", v)
}

// headroom sets the y axis from 0 to a round value above the data with
// room for the legend, which sits at the top.
func headroom(p *plot.Plot, maxY float64, legendLines int) {
	top := maxY * (1 + 0.075*float64(legendLines+1))
	step := 10.0
	if top <= 20 {
		step = 2
	}
	p.Y.Min, p.Y.Max = 0, math.Ceil(top/step)*step
	p.Y.Tick.Marker = stepTicks{step}
}

// render draws p at 16 × 10 cm in the format.
func render(p *plot.Plot, format string) ([]byte, error) {
	w, h := 16*vg.Centimeter, 10*vg.Centimeter
	var buf bytes.Buffer
	switch format {
	case mimePNG:
		c := vgimg.NewWith(vgimg.UseWH(w, h), vgimg.UseDPI(150), vgimg.UseBackgroundColor(color.White))
		p.Draw(draw.New(c))
		if _, err := (vgimg.PngCanvas{Canvas: c}).WriteTo(&buf); err != nil {
			return nil, err
		}
	default:
		c := vgsvg.New(w, h)
		p.Draw(draw.New(c))
		if _, err := c.WriteTo(&buf); err != nil {
			return nil, err
		}
	}
	return buf.Bytes(), nil
}

// sendPlot writes a rendered plot.
func sendPlot(c echo.Context, p *plot.Plot, format string) error {
	b, err := render(p, format)
	if err != nil {
		return fmt.Errorf("rendering a plot: %w", err)
	}
	// An SVG opened on its own is a document under the answer's policy;
	// gonum's SVG styles its elements inline, which the service's default
	// policy (default-src 'none') would block and draw black.
	c.Response().Header().Set("Content-Security-Policy", plotCSP)
	return c.Blob(http.StatusOK, format, b)
}

// sampleLabel is a sample's legend label.
func sampleLabel(s PlotSample, i int) string {
	if s.Label != "" {
		return s.Label
	}
	return fmt.Sprintf("sample %d", i+1)
}

// handleSolidFatPlot is POST /v1/plots/solid-fat.
func (d *Deps) handleSolidFatPlot() echo.HandlerFunc {
	run := runMelting(d.Catalogue, d.Recorder)
	return func(c echo.Context) error {
		var req SolidFatPlotRequest
		if err := decode(c, &req); err != nil {
			return err
		}
		title := req.Title
		if title == "" {
			title = "Solid fat content"
		}
		p := newPlot(title, "Temperature (°C)", "Solid fat content (%)")
		p.Y.Min, p.Y.Max = 0, 100
		p.Y.Tick.Marker = stepTicks{10}
		p.X.Tick.Marker = stepTicks{10}
		var keys []string
		for k := range req.Melting {
			keys = append(keys, k)
		}
		sort.Strings(keys)
		for i, s := range req.Samples {
			var b bytes.Buffer
			b.WriteString(`{"profile":`)
			b.Write(s.Profile)
			if len(s.Measured) > 0 {
				b.WriteString(`,"measured":`)
				b.Write(s.Measured)
			}
			for _, k := range keys {
				fmt.Fprintf(&b, `,%q:%s`, k, req.Melting[k])
			}
			b.WriteByte('}')
			sample := Pointer("samples", i)
			ans, err := d.runPart(c.Request().Context(), "POST /v1/melting", run, b.Bytes(), func(ptr string) string {
				if strings.HasPrefix(ptr, "/profile") || strings.HasPrefix(ptr, "/measured") {
					return sample + ptr
				}
				return "/melting" + ptr
			})
			if err != nil {
				return err
			}
			m := ans.(*MeltingResponse)
			xys := make(plotter.XYs, 0, len(m.Curve))
			for _, pt := range m.Curve {
				xys = append(xys, plotter.XY{X: pt.TemperatureC, Y: pt.SolidFatPercent})
			}
			line, err := plotter.NewLine(xys)
			if err != nil {
				return NewError(KindOutsideModel, "the curve cannot be drawn", FieldError{Pointer: sample, Reason: err.Error()})
			}
			line.LineStyle = lineStyle(i)
			p.Add(line)
			label := sampleLabel(s, i)
			if m.SlipMeltingPointC != nil {
				label += fmt.Sprintf(" (slip %.1f °C)", *m.SlipMeltingPointC)
			}
			p.Legend.Add(label, line)
			var measured MeltingMeasurements
			if len(s.Measured) > 0 && json.Unmarshal(s.Measured, &measured) == nil && len(measured.SFCPoints) > 0 {
				pts := make(plotter.XYs, len(measured.SFCPoints))
				for k, q := range measured.SFCPoints {
					pts[k] = plotter.XY{X: q.TemperatureC, Y: q.SolidFatPercent}
				}
				sc, err := plotter.NewScatter(pts)
				if err == nil {
					sc.GlyphStyle = draw.GlyphStyle{Color: plotColors[i%len(plotColors)], Radius: vg.Points(3.5), Shape: plotShapes[i%len(plotShapes)]}
					p.Add(sc)
					p.Legend.Add(sampleLabel(s, i)+", measured", sc)
				}
			}
		}
		return sendPlot(c, p, plotFormat(req.Format, c.Request().Header.Get(echo.HeaderAccept)))
	}
}

// handleHardeningPathPlot is POST /v1/plots/hardening-path.
func (d *Deps) handleHardeningPathPlot() echo.HandlerFunc {
	run := runForecast(d.Catalogue, d.Recorder)
	return func(c echo.Context) error {
		var req HardeningPathPlotRequest
		if err := decode(c, &req); err != nil {
			return err
		}
		ans, err := d.runPart(c.Request().Context(), "POST /v1/hardening/forecast", run, req.Forecast,
			func(ptr string) string { return "/forecast" + ptr })
		if err != nil {
			return err
		}
		f := ans.(*ForecastResponse)
		title := req.Title
		if title == "" {
			title = fmt.Sprintf("Hardening path, iodine value %.1f to %.1f", f.FeedIodineValue, f.IodineValue)
		}
		p := newPlot(title, "Iodine value (g I2/100 g), falling as the batch hardens", "Share of fatty acids (%)")
		p.X.Scale = plot.InvertedScale{Normalizer: plot.LinearScale{}}
		p.X.Tick.Marker = stepTicks{10}
		// Acids whose share changes along the path, largest change first,
		// then the trans total.
		change := map[string]float64{}
		for _, pt := range f.Path {
			for k, v := range pt.Composition {
				first := f.Path[0].Composition[k]
				change[k] = math.Max(change[k], math.Abs(v-first))
			}
		}
		var acids []string
		for k, v := range change {
			if v >= 0.5 {
				acids = append(acids, k)
			}
		}
		sort.Slice(acids, func(i, j int) bool {
			return change[acids[i]] > change[acids[j]] || change[acids[i]] == change[acids[j]] && acids[i] < acids[j]
		})
		if len(acids) > 7 {
			acids = acids[:7]
		}
		sort.Strings(acids)
		series := func(i int, label string, y func(ForecastPoint) float64, width float64) error {
			xys := make(plotter.XYs, len(f.Path))
			for k, pt := range f.Path {
				xys[k] = plotter.XY{X: pt.IodineValue, Y: y(pt)}
			}
			line, err := plotter.NewLine(xys)
			if err != nil {
				return err
			}
			line.LineStyle = lineStyle(i)
			line.LineStyle.Width = vg.Points(width)
			p.Add(line)
			p.Legend.Add(label, line)
			return nil
		}
		for i, a := range acids {
			if err := series(i, a, func(pt ForecastPoint) float64 { return pt.Composition[a] }, 1.6); err != nil {
				return NewError(KindOutsideModel, "the path cannot be drawn", FieldError{Pointer: "/forecast", Reason: err.Error()})
			}
		}
		if err := series(len(acids), "trans, total", func(pt ForecastPoint) float64 { return pt.TransPercent }, 2.6); err != nil {
			return NewError(KindOutsideModel, "the path cannot be drawn", FieldError{Pointer: "/forecast", Reason: err.Error()})
		}
		maxY := 0.0
		for _, pt := range f.Path {
			maxY = math.Max(maxY, pt.TransPercent)
			for _, a := range acids {
				maxY = math.Max(maxY, pt.Composition[a])
			}
		}
		headroom(p, maxY, len(acids)+1)
		return sendPlot(c, p, plotFormat(req.Format, c.Request().Header.Get(echo.HeaderAccept)))
	}
}

// handleCompositionPlot is POST /v1/plots/composition.
func (d *Deps) handleCompositionPlot() echo.HandlerFunc {
	run := runProperties(d.Catalogue, d.Recorder)
	return func(c echo.Context) error {
		var req CompositionPlotRequest
		if err := decode(c, &req); err != nil {
			return err
		}
		minPct := 0.5
		if req.MinPercent != nil {
			minPct = *req.MinPercent
		}
		type row struct {
			label  string
			shares map[string]float64
		}
		var rows []row
		maxShare := map[string]float64{}
		var order []string
		for i, s := range req.Samples {
			body := append(append([]byte(`{"profile":`), s.Profile...), '}')
			sample := Pointer("samples", i)
			ans, err := d.runPart(c.Request().Context(), "POST /v1/properties", run, body, func(ptr string) string { return sample + ptr })
			if err != nil {
				return err
			}
			pr := ans.(*PropertiesResponse)
			r := row{label: sampleLabel(s, i), shares: map[string]float64{}}
			for _, a := range pr.Acids {
				if _, seen := maxShare[a.Acid]; !seen {
					order = append(order, a.Acid)
				}
				r.shares[a.Acid] += a.Percent
				maxShare[a.Acid] = math.Max(maxShare[a.Acid], r.shares[a.Acid])
			}
			rows = append(rows, r)
		}
		var acids []string
		for _, a := range order {
			if maxShare[a] >= minPct {
				acids = append(acids, a)
			}
		}
		sort.SliceStable(acids, func(i, j int) bool { return acidSortKey(acids[i]) < acidSortKey(acids[j]) })
		if len(acids) > 24 {
			acids = acids[:24]
		}
		if len(acids) == 0 {
			return NewError(KindInvalidInput, "no acid reaches min_percent", FieldError{Pointer: "/min_percent",
				Reason: fmt.Sprintf("no acid of any sample reaches %g %%", minPct)})
		}
		title := req.Title
		if title == "" {
			title = "Fatty-acid composition"
		}
		p := newPlot(title, "", "Share (%, the profile's basis)")
		n := len(rows)
		groupWidth := vg.Points(math.Min(36, 380/float64(len(acids))))
		barWidth := groupWidth / vg.Length(n)
		for i, r := range rows {
			vals := make(plotter.Values, len(acids))
			for k, a := range acids {
				vals[k] = r.shares[a]
			}
			bars, err := plotter.NewBarChart(vals, barWidth)
			if err != nil {
				return NewError(KindInvalidInput, "the bars cannot be drawn", FieldError{Pointer: Pointer("samples", i), Reason: err.Error()})
			}
			bars.Color = plotColors[i%len(plotColors)]
			bars.LineStyle.Width = vg.Points(0.5)
			bars.Offset = barWidth*vg.Length(i) - groupWidth/2 + barWidth/2
			p.Add(bars)
			p.Legend.Add(r.label, bars)
		}
		maxY := 0.0
		for _, r := range rows {
			for _, a := range acids {
				maxY = math.Max(maxY, r.shares[a])
			}
		}
		headroom(p, maxY, len(rows))
		p.NominalX(acids...)
		if len(acids) > 5 {
			p.X.Tick.Label.Rotation = math.Pi / 4
			p.X.Tick.Label.XAlign = draw.XRight
			p.X.Tick.Label.YAlign = draw.YCenter
		}
		p.Legend.Left = false
		return sendPlot(c, p, plotFormat(req.Format, c.Request().Header.Get(echo.HeaderAccept)))
	}
}

// acidSortKey orders acids by chain length, then double bonds (a stable
// sort keeps the profile's order within).
func acidSortKey(id string) string {
	var cn, db int
	if _, err := fmt.Sscanf(id, "%d:%d", &cn, &db); err != nil {
		return "z" + id
	}
	return fmt.Sprintf("%03d:%02d", cn, db)
}
