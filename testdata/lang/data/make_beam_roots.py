#!/usr/bin/python3
"""Roots of the characteristic equations of the Euler–Bernoulli beam,
u'''' = mu u on [0, L] with mu = (beta/L)^4, for testdata/lang/beams.sf:
clamped at both ends, cos(beta) cosh(beta) = 1; clamped at one end and
simply supported at the other, tan(beta) = tanh(beta). Run with Debian's
python3-mpmath: /usr/bin/python3 make_beam_roots.py
"""
import mpmath as mp

mp.mp.dps = 30
for name, f, guesses in [
    ("clamped-clamped", lambda b: mp.cos(b) * mp.cosh(b) - 1, [4.7, 7.85, 11.0]),
    ("clamped-supported", lambda b: mp.tan(b) - mp.tanh(b), [3.93, 7.07, 10.2]),
]:
    roots = [mp.findroot(f, g) for g in guesses]
    print(name, " ".join(mp.nstr(r, 12) for r in roots))
