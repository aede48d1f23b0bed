"""induct: electromagnetic induction in icy moons with subsurface oceans."""
__version__ = "0.1.0"
