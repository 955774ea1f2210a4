"""Benchmarks of a load at scale: a reproducible data generator and a runner that prints ratios."""
