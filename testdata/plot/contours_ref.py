#!/usr/bin/python3
# Reference level curves for the marching-squares test in lang/plot, computed
# with Debian's python3-contourpy (serial algorithm, no corner masking).
# Regenerate: /usr/bin/python3 testdata/plot/contours_ref.py > testdata/plot/contours_ref.json
import json
import numpy as np
import contourpy

xs = np.linspace(-2.0, 2.0, 37)
ys = np.linspace(-1.5, 1.5, 29)
X, Y = np.meshgrid(xs, ys, indexing="ij")          # X[i, j] = xs[i]
Z = np.sin(3 * X) * np.cos(2 * Y) + 0.3 * X          # z[i][j] = f(xs[i], ys[j])
levels = [-0.55, 0.05, 0.71]

# contourpy takes arrays indexed [row = y, column = x].
gen = contourpy.contour_generator(xs, ys, Z.T, name="serial", corner_mask=False,
                                  line_type=contourpy.LineType.Separate)
lines = [[seg.tolist() for seg in gen.lines(c)] for c in levels]
print(json.dumps({
    "source": "contourpy %s, serial algorithm" % contourpy.__version__,
    "xs": xs.tolist(), "ys": ys.tolist(), "z": Z.tolist(),
    "levels": levels, "lines": lines,
}))
