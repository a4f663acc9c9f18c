"""Writes machado2009.json: the dichromat simulation matrices (severity 1.0,
on linear sRGB) of Machado, Oliveira & Fernandes, "A physiologically-based
model for simulation of color vision deficiency", IEEE TVCG 15(6), 2009, as
tabulated by Debian's python3-colorspacious (colorspacious.cvd).

Run from this folder with Debian's python3: /usr/bin/python3 make_cvd.py
"""
import json

import colorspacious
from colorspacious.cvd import machado_et_al_2009_matrix

out = {
    "source": "Machado, Oliveira & Fernandes, IEEE TVCG 2009, via colorspacious %s machado_et_al_2009_matrix(kind, 100)" % colorspacious.__version__,
    "matrices": {
        name: machado_et_al_2009_matrix(kind, 100).tolist()
        for name, kind in [("protanopia", "protanomaly"), ("deuteranopia", "deuteranomaly"), ("tritanopia", "tritanomaly")]
    },
}
with open("machado2009.json", "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
