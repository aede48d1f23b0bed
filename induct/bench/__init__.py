"""induct.bench."""
