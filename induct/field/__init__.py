"""induct.field."""
