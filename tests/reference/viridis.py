"""Prints matplotlib's viridis table (the 256 sRGB colours that define the
palette, ListedColormap.colors) as JSON, for tests/it/report.rs."""
import json

import matplotlib

colors = matplotlib.colormaps["viridis"].colors
print(json.dumps({"version": matplotlib.__version__, "colors": [list(map(float, c[:3])) for c in colors]}))
