"""Layer 6, mutations: notation, the target and its numberings, judging mutations and ranking positions.

Every result here is a research prediction from family conservation: see
:data:`globcons.core.vocabulary.CAUTION`.
"""

from globcons._lazy import lazy_exports

_EXPORTS = {
    "Mutation": "globcons.mutations.notation",
    "parse_mutation": "globcons.mutations.notation",
    "parse_mutation_list": "globcons.mutations.notation",
    "read_mutation_file": "globcons.mutations.notation",
    "Target": "globcons.mutations.target",
    "prepare_target": "globcons.mutations.target",
    "check": "globcons.mutations.judge",
    "rank_sites": "globcons.mutations.judge",
    "CHECK_COLUMNS": "globcons.mutations.judge",
    "PLAN_COLUMNS": "globcons.mutations.judge",
    "StructureContext": "globcons.mutations.context",
    "STRUCTURE_COLUMNS": "globcons.mutations.context",
}
__all__ = list(_EXPORTS)
__getattr__, __dir__ = lazy_exports(__name__, _EXPORTS)
