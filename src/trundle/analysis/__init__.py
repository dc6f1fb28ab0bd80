"""What the scan's numbers mean: envelopes, absolute extremes, checks with their verdicts."""
