"""Analysis on top of the envelopes: rules of design cases, permanent loads, factored
combinations, patterned and loaded-length-dependent live load, design checks."""
