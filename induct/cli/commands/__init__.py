"""Sub-commands of the ``induct`` command line; see :mod:`induct.cli.main`."""
