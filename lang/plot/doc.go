// Package plot draws small, stable figures — lines, markers, bands between
// bounds, contour lines, heat maps with a colour bar, reference lines and text
// annotations, on linear or logarithmic axes — as SVG (standard library only)
// and as PNG (golang.org/x/image's vector rasteriser and the embedded Go
// Regular font).
//
// One layout, two back ends. The renderer lays a figure out once (margins,
// scales, ticks, legend place) and draws it through the canvas interface;
// svgCanvas writes elements, rasterCanvas paints pixels at PixelDensity per
// px. Both receive the same calls, so the PNG shows what the SVG shows
// (raster_test.go probes one against the other). The PNG needs no font on
// the reader's machine and survives where SVG does not (an untrusted
// notebook, a static renderer, a document).
//
// It exists instead of gonum.org/v1/plot for three measured reasons: gonum/plot
// names fonts without a fallback family, so a browser lacking the named font
// substitutes one of different metrics and labels overlap or clip; it labels
// embedded raster images with the wrong MIME type; and its files are large. Here
// every SVG text element uses the family list in FontFamily, which ends with the
// generic family sans-serif; text widths are estimated conservatively (see
// TextWidth) and margins, tick thinning and title wrapping are derived from those
// estimates; embedded rasters are written as data:image/png;base64; and every
// coordinate is written with at most two decimals.
//
// The look is our own: colours built by rules in OKLab (color.go: a heat-map
// path from night blue through plum and rose to cream, contour colours set
// against the map under them, line colours 0.1 apart in lightness), only the
// two data axes ruled, and a legend on a paper-coloured panel in an empty
// inner corner, or beside the plot when no corner is empty.
//
// Conventions. A Figure holds Series and is turned into SVG by Figure.SVG or
// Figure.WriteSVG, into PNG by Figure.PNG or Figure.WritePNG. Gridded data
// z[i][j] always means the value at (xs[i], ys[j]): the first index runs along
// x, the second along y (as in a pseudospectrum grid indexed by real part,
// then imaginary part). Non-finite data (NaN, ±Inf) are
// skipped and counted; on a logarithmic axis non-positive data are an error
// unless Figure.DropNonPositive is set, in which case they are dropped and
// counted. The counts are returned in Notes and written as a small note in the
// figure. Rendering never writes NaN or Inf into the SVG.
//
// Number formatting is fixed so that golden files are stable:
//   - Linear tick labels share the number of decimals implied by the tick step
//     (step 0.2 → one decimal, so 0 is written 0.0; step 50 → none). When the largest |tick| is at
//     least 1e5 or below 1e-3 each nonzero tick is written m×10ᵉ, where m carries
//     as many decimals as the step needs at that exponent.
//   - Decade ticks on a logarithmic axis are written 10ᵉ with a raised exponent
//     (a <tspan> shifted by dy, which every SVG renderer honours).
//   - Legend entries and annotations use FormatValue: four significant digits,
//     a decimal for 10⁻² ≤ |v| < 10⁴, otherwise an exponent written "1e−3"
//     (U+2212 minus, no leading zeros, no plus sign); the levels of one
//     contour set share one style (FormatLevels).
//   - Negative numbers use U+2212 minus; −0 is written 0.
//
// Text (titles, axis labels, legend entries, annotations) writes "_x",
// "_min" or "_{…}" after a symbol as a subscript, 70% high and lowered
// 0.21 of the size, in both back ends: σ_min, u_i(t), ‖·‖_W (textLabel).
// An underscore inside a longer word stays (decay_rate).
package plot
