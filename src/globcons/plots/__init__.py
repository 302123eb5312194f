"""Layer 7, figures: the project's palette, logos, the conservation profile, the departure heat map, contrast.

Figures are matplotlib ``Figure`` objects built without pyplot, coloured only from
:mod:`globcons.plots.palette`, written by extension (.png, .svg, .pdf) and atomically.
"""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "FIGURE_FORMATS": "globcons.plots.output",
    "PROFILE_SCORES": "globcons.plots.conservation",
    "draw_logo": "globcons.plots.logo",
    "draw_profile": "globcons.plots.conservation",
    "draw_departure_heatmap": "globcons.plots.heatmap",
    "draw_contrast": "globcons.plots.contrast",
    "save_figure": "globcons.plots.output",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
