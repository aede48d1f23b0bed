"""induct.planning."""
