"""induct.flyby."""
