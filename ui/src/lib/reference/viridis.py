"""Prints matplotlib's published viridis table (256 RGB entries, 0-1) as JSON.

Reference for ui/src/lib/palette.test.ts: the UI's viridis scale is compared
live against the table matplotlib ships (matplotlib/_cm_listed.py).
"""
import json

from matplotlib import _cm_listed

print(json.dumps([list(map(float, rgb)) for rgb in _cm_listed._viridis_data]))
