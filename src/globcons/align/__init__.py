"""Layer 4, alignment onto the frame: dynamic programming, the scoring profile, placement, anchoring.

>>> from globcons.align import place
>>> from globcons.frame import reference_chain
>>> placed = place(reference_chain("human_hemoglobin_beta").full_sequence, id="beta")
>>> placed.residue_at("F8"), placed.nearest_reference, placed.is_globin
((93, 'H'), 'human_hemoglobin_beta', True)
"""

from globcons.align.anchor import ColumnMapping, map_columns
from globcons.align.layout import FrameAlignment, align_to_frame
from globcons.align.place import PlacedSequence, place, place_many
from globcons.align.significance import DEFAULT_SHUFFLES, GLOBIN_EVALUE

__all__ = ["PlacedSequence", "place", "place_many", "FrameAlignment", "align_to_frame", "ColumnMapping",
           "map_columns", "GLOBIN_EVALUE", "DEFAULT_SHUFFLES"]
