"""Layer 6, mutations: notation, the target and its numberings, judging mutations and ranking positions.

Every result here is a research prediction from family conservation: see
:data:`globcons.core.vocabulary.CAUTION`.
"""

from globcons.mutations.judge import CHECK_COLUMNS, PLAN_COLUMNS, check, rank_sites
from globcons.mutations.notation import Mutation, parse_mutation, parse_mutation_list, read_mutation_file
from globcons.mutations.target import Target, prepare_target

__all__ = ["Mutation", "parse_mutation", "parse_mutation_list", "read_mutation_file", "Target", "prepare_target",
           "check", "rank_sites", "CHECK_COLUMNS", "PLAN_COLUMNS"]
