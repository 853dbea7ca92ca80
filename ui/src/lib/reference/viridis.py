"""Prints matplotlib's published viridis table (256 RGB entries, 0-1) as JSON.

Reference for ui/src/lib/palette.test.ts: the UI's viridis scale is compared
live against the table matplotlib ships (matplotlib is installed with music21,
tests/reference/requirements.txt). `colormaps["viridis"].colors` is the listed
table of matplotlib/_cm_listed.py, through the public API.
"""
import json

import matplotlib

print(json.dumps([[float(c) for c in rgb[:3]] for rgb in matplotlib.colormaps["viridis"].colors]))
