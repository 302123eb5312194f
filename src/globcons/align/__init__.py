"""Layer 4, alignment onto the frame: dynamic programming, the scoring profile, placement, anchoring."""
