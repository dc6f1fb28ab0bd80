"""The structure: the beam, its finite-element model, exact influence lines, fixed-load statics."""
