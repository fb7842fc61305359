package api_test

import (
	"bytes"
	"encoding/json"
	"encoding/xml"
	"image"
	"image/color"
	_ "image/png"
	"io"
	"net/http"
	"strings"
	"testing"

	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

const plotPalm = `{"acids":[{"acid":"14:0","percent":1},{"acid":"16:0","percent":44},{"acid":"18:0","percent":4.5},
 {"acid":"18:1 c9","percent":39.5},{"acid":"18:2 c9,c12","percent":10.5},{"acid":"20:0","percent":0.5}]}`

const plotShortening = `{"acids":[{"acid":"16:0","percent":10.5},{"acid":"18:0","percent":30},{"acid":"18:1 c9","percent":30},
 {"acid":"18:1 t9","percent":20},{"acid":"18:2 c9,c12","percent":9.5}]}`

// svgTexts parses an SVG document (it must be well-formed XML with an svg
// root) and returns its text and the number of path elements.
func svgTexts(t *testing.T, b []byte) (string, int) {
	t.Helper()
	dec := xml.NewDecoder(bytes.NewReader(b))
	var texts strings.Builder
	paths, root := 0, ""
	inText := false
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		require.NoError(t, err, "the SVG is not well-formed XML")
		switch v := tok.(type) {
		case xml.StartElement:
			if root == "" {
				root = v.Name.Local
			}
			if v.Name.Local == "path" {
				paths++
			}
			inText = v.Name.Local == "text"
		case xml.EndElement:
			inText = false
		case xml.CharData:
			if inText {
				texts.Write(v)
				texts.WriteByte('\n')
			}
		}
	}
	require.Equal(t, "svg", root)
	return texts.String(), paths
}

// pngOf decodes a PNG and reports whether a colour of the palette's first
// series (the blue) is drawn.
func pngOf(t *testing.T, b []byte) (image.Image, bool) {
	t.Helper()
	img, format, err := image.Decode(bytes.NewReader(b))
	require.NoError(t, err)
	require.Equal(t, "png", format)
	blue := false
	bounds := img.Bounds()
	for y := bounds.Min.Y; y < bounds.Max.Y && !blue; y += 2 {
		for x := bounds.Min.X; x < bounds.Max.X; x += 2 {
			r, g, bb, _ := img.At(x, y).RGBA()
			c := color.RGBA{uint8(r >> 8), uint8(g >> 8), uint8(bb >> 8), 255}
			if c.R < 30 && c.G > 90 && c.G < 130 && c.B > 160 {
				blue = true
				break
			}
		}
	}
	return img, blue
}

func plotCall(t *testing.T, path, body string, header map[string]string) []byte {
	t.Helper()
	rec := do(t, newApp(t), call{method: http.MethodPost, path: path, body: body, header: header})
	require.Equal(t, http.StatusOK, rec.Code, rec.Body.String())
	// An SVG opened on its own must keep its inline styles.
	require.Contains(t, rec.Header().Get("Content-Security-Policy"), "style-src 'unsafe-inline'")
	return rec.Body.Bytes()
}

// Each kind of plot renders as SVG and PNG with its axis labels (units
// included) and its series.
func TestPlotsRender(t *testing.T) {
	sfc := `{"samples":[{"label":"NB palm 1203","profile":` + plotPalm + `,"measured":{"sfc_points":[{"temperature_c":10,"solid_fat_percent":52},
	  {"temperature_c":20,"solid_fat_percent":26},{"temperature_c":30,"solid_fat_percent":8}]}},{"label":"NB shortening","profile":` + plotShortening + `}]}`
	text, paths := svgTexts(t, plotCall(t, "/v1/plots/solid-fat", sfc, nil))
	for _, want := range []string{"Temperature (°C)", "Solid fat content (%)", "NB palm 1203 (slip", "NB palm 1203, measured", "NB shortening (slip"} {
		require.Contains(t, text, want)
	}
	require.Greater(t, paths, 10)

	forecast := readFile(t, "testdata", "load/forecast.json")
	text, _ = svgTexts(t, plotCall(t, "/v1/plots/hardening-path", `{"forecast":`+forecast+`}`, nil))
	for _, want := range []string{"Iodine value (g I2/100 g)", "Share of fatty acids (%)", "trans, total", "18:2 c9,c12", "18:1 t"} {
		require.Contains(t, text, want)
	}

	comp := `{"min_percent":0.8,"samples":[{"label":"palm","profile":` + plotPalm + `},{"label":"shortening","profile":` + plotShortening + `}]}`
	text, _ = svgTexts(t, plotCall(t, "/v1/plots/composition", comp, nil))
	for _, want := range []string{"Share (%", "16:0", "18:1 t9", "palm", "shortening"} {
		require.Contains(t, text, want)
	}
	require.NotContains(t, text, "20:0", "below min_percent in every sample")

	for path, body := range map[string]string{
		"/v1/plots/solid-fat":      sfc,
		"/v1/plots/hardening-path": `{"forecast":` + forecast + `}`,
		"/v1/plots/composition":    comp,
	} {
		img, blue := pngOf(t, plotCall(t, path, body, map[string]string{"Accept": "image/png"}))
		require.Equal(t, 945, img.Bounds().Dx(), path)
		require.Equal(t, 591, img.Bounds().Dy(), path)
		require.True(t, blue, "%s: the first series is drawn", path)
	}
}

// A plot's bad parts are refused with pointers into the plot request.
func TestPlotsBadRequests(t *testing.T) {
	app := newApp(t)
	for body, want := range map[string]string{
		`{"samples":[{"profile":` + plotPalm + `},{"profile":{"acids":[{"acid":"C18:7","percent":100}]}}]}`: "/samples/1/profile/acids/0/acid",
		`{"samples":[{"profile":` + plotPalm + `}],"melting":{"polymorph":"gamma"}}`:                        "/melting/polymorph",
		`{"samples":[{"profile":` + plotPalm + `}],"format":"gif"}`:                                         "/format",
		`{"samples":[]}`: "/samples",
	} {
		rec := do(t, app, call{method: http.MethodPost, path: "/v1/plots/solid-fat", body: body})
		require.Contains(t, []int{400, 422}, rec.Code, rec.Body.String())
		var p api.Problem
		require.NoError(t, json.Unmarshal(rec.Body.Bytes(), &p))
		require.Equal(t, want, p.Errors[0].Pointer, rec.Body.String())
	}
	rec := do(t, app, call{method: http.MethodPost, path: "/v1/plots/hardening-path", body: `{"forecast":{"profile":` + plotPalm + `,"target":{"iodine_value":90},"catalyst":{"preset":"nickel_selective"}}}`})
	require.Equal(t, http.StatusUnprocessableEntity, rec.Code, rec.Body.String())
	require.Contains(t, rec.Body.String(), `"pointer":"/forecast/target`)
}
