// Package plot draws small, stable SVG figures using only the standard library:
// lines, markers, bands between bounds, contour lines, heat maps with a colour
// bar, reference lines and text annotations, on linear or logarithmic axes.
//
// It exists instead of gonum.org/v1/plot for three measured reasons: gonum/plot
// names fonts without a fallback family, so a browser lacking the named font
// substitutes one of different metrics and labels overlap or clip; it labels
// embedded raster images with the wrong MIME type; and its files are large. Here
// every text element uses the family list in FontFamily, which ends with the
// generic family sans-serif; text widths are estimated conservatively (see
// TextWidth) and margins, tick thinning and title wrapping are derived from those
// estimates; embedded rasters are written as data:image/png;base64; and every
// coordinate is written with at most two decimals.
//
// Conventions. A Figure holds Series and is turned into SVG by Figure.SVG or
// Figure.WriteSVG. Gridded data z[i][j] always means the value at (xs[i], ys[j]):
// the first index runs along x, the second along y (as in a pseudospectrum grid
// indexed by real part, then imaginary part). Non-finite data (NaN, ±Inf) are
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
//     (U+2212 minus, no leading zeros, no plus sign).
//   - Negative numbers use U+2212 minus; −0 is written 0.
package plot
