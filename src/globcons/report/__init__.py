"""Layer 8, the offline report and its methods text."""
