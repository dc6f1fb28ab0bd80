"""What the scan's numbers mean: envelopes, absolute extremes, checks with their verdicts;
rules of design cases, permanent loads, factored combinations, patterned and
loaded-length-dependent live load, design envelopes."""
