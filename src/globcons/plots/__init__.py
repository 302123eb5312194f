"""Layer 7, figures: palette, logos, the conservation profile, heat map."""
