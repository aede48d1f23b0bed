"""Inversion of measured responses: priors, grid posterior, samplers, posterior summaries."""
