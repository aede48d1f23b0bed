"""induct.model."""
