#!/bin/sh
# Rasterise the golden SVG figures for viewing; keeps PNGs under 60 kB.
set -e
cd "$(dirname "$0")/.."
for f in *.svg; do
	out="png/${f%.svg}.png"
	rsvg-convert "$f" -o "$out"
	if [ "$(wc -c <"$out")" -ge 60000 ]; then rm "$out"; fi
done
