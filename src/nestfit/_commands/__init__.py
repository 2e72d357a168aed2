"""Subcommands of the ``nestfit`` command line, one module each (see :mod:`nestfit.cli`)."""
