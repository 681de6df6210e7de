"""fdwall benchmark suite: fdwall against peer solvers at matched accuracy (see README.md)."""
