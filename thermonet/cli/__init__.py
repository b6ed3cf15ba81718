"""Command line: ``thermonet demo | run | check | batch`` (also ``python -m thermonet``)."""

from thermonet.cli.main import build_parser, main

__all__ = ["build_parser", "main"]
