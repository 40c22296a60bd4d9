"""The terminal app and the command line: the only layer that talks to people."""
