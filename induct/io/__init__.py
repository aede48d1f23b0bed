"""induct.io."""
