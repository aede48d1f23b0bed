"""Chunked execution of large sweeps, in this process or on a Dask cluster."""
