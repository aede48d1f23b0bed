"""Benchmarks behind `induct bench`: measured throughput and memory, never timed tests."""
