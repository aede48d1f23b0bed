"""The command line: entry point, one module per command, text tables, the demo."""
