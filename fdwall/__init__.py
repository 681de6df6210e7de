"""fdwall: 1-D transient finite-volume model of the walls of heated equipment."""
