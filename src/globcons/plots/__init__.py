"""Layer 7, figures: the project's palette, logos, the conservation profile, the departure heat map, contrast.

Figures are matplotlib ``Figure`` objects built without pyplot, coloured only from
:mod:`globcons.plots.palette`, written by extension (.png, .svg, .pdf) and atomically.
"""

from globcons.plots.conservation import PROFILE_SCORES, draw_profile
from globcons.plots.contrast import draw_contrast
from globcons.plots.heatmap import draw_departure_heatmap
from globcons.plots.logo import draw_logo
from globcons.plots.output import FIGURE_FORMATS, save_figure

__all__ = ["FIGURE_FORMATS", "PROFILE_SCORES", "draw_logo", "draw_profile", "draw_departure_heatmap",
           "draw_contrast", "save_figure"]
