"""Layer 4, alignment onto the frame: dynamic programming, the scoring profile, placement, anchoring.

>>> from globcons.align import place
>>> from globcons.frame import reference_chain
>>> placed = place(reference_chain("human_hemoglobin_beta").full_sequence, id="beta")
>>> placed.residue_at("F8"), placed.nearest_reference, placed.is_globin
((93, 'H'), 'human_hemoglobin_beta', True)
"""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "PlacedSequence": "globcons.align.placement",
    "place": "globcons.align.placement",
    "place_many": "globcons.align.placement",
    "FrameAlignment": "globcons.align.layout",
    "align_to_frame": "globcons.align.layout",
    "ColumnMapping": "globcons.align.anchor",
    "map_columns": "globcons.align.anchor",
    "GLOBIN_EVALUE": "globcons.align.significance",
    "DEFAULT_SHUFFLES": "globcons.align.significance",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
