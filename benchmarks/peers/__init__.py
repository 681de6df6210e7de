"""Peer solvers of the benchmark problems, written for the benchmark (not part of fdwall)."""
