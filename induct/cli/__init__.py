"""induct.cli."""
