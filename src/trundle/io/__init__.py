"""Input and output at the edges: safe reading of model files, limits, output sets."""
