"""Input and output at the edges: model-file paths and the like."""
