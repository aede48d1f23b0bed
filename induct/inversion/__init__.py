"""induct.inversion."""
