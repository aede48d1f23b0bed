"""Figures: one shared style and one module per figure type (no pyplot, no backend selection)."""
