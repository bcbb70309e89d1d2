"""Subcommands of the ``pinlib`` command, one module each (see pinlib/cli/__init__.py)."""
