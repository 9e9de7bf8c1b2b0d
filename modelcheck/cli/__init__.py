"""The ``modelcheck`` command line: ``main`` (parser, entry, every error one line) and a module
per command (``check``, ``members``, ``rules``, ``size``), with the project configuration file
(``config``) and what the commands share (``common``). ``run`` is the console script's entry."""

from modelcheck.cli.main import build_parser, main, run

__all__ = ["build_parser", "main", "run"]
