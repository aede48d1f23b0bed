"""induct.parallel."""
