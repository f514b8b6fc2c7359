"""snrgain.model: the pipeline's stages and what they produce: gains, temperatures, near sources, spreads, results."""
