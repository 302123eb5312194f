"""Layer 3, the globin reference frame: reference chains, helix labels and numbering, functional sites.

The frame names every residue of a reference chain by the trade's helix notation: helices ``A``-``H``,
corners named by their two helices (``AB``, ``CD``, ``EF``, ``FG``, ``GH``; alpha's ``CE``), termini
``NA`` and ``HC``, each followed by the residue's place in its segment (beta His92 is ``F8``).

>>> from globcons import frame
>>> frame.label_of("human_hemoglobin_beta", 6), frame.position_of("human_hemoglobin_alpha", "F8", "hgvs")
('A3', 88)
>>> frame.hgvs_name("human_hemoglobin_beta", 6, "V")
'p.Glu7Val'
"""

from globcons.core.labels import FRAME_ORDER, HELICES, is_helix, is_label, segment_of, split_label
from globcons.frame.numbering import NUMBERINGS, hgvs_name, label_of, position_of
from globcons.frame.reference import ReferenceChain, Segment, reference_chain, reference_chains, segments
from globcons.frame.sites import Site, column_sites, sites, sites_at

__all__ = [
    "FRAME_ORDER",
    "HELICES",
    "NUMBERINGS",
    "ReferenceChain",
    "Segment",
    "Site",
    "column_sites",
    "hgvs_name",
    "is_helix",
    "is_label",
    "label_of",
    "position_of",
    "reference_chain",
    "reference_chains",
    "segment_of",
    "segments",
    "sites",
    "sites_at",
    "split_label",
]
