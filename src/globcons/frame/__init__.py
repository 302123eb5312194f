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

from globcons._lazy import lazy_exports

_EXPORTS = {
    "FRAME_ORDER": "globcons.core.labels",
    "HELICES": "globcons.core.labels",
    "NUMBERINGS": "globcons.frame.numbering",
    "ReferenceChain": "globcons.frame.reference",
    "Segment": "globcons.frame.reference",
    "Site": "globcons.frame.functional_sites",
    "column_sites": "globcons.frame.functional_sites",
    "hgvs_name": "globcons.frame.numbering",
    "is_helix": "globcons.core.labels",
    "is_label": "globcons.core.labels",
    "label_of": "globcons.frame.numbering",
    "position_of": "globcons.frame.numbering",
    "reference_chain": "globcons.frame.reference",
    "reference_chains": "globcons.frame.reference",
    "segment_of": "globcons.core.labels",
    "segments": "globcons.frame.reference",
    "sites": "globcons.frame.functional_sites",
    "sites_at": "globcons.frame.functional_sites",
    "split_label": "globcons.core.labels",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
