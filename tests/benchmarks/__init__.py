"""Benchmarks of a load at scale: a seeded data generator and a runner that prints ratios."""
