"""Layer 6, mutations: notation, judging proposed mutations, ranking positions."""
