"""induct.plot."""
