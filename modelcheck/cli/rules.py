"""`modelcheck rules`: list the shipped rule sets, show one, or validate a rule file."""

from __future__ import annotations

import argparse
import sys

from modelcheck.cli.common import (
    EXIT_INPUT,
    EXIT_OK,
    report_console,
    say,
)
from modelcheck.common.errors import UsageError


def cmd_rules(args: argparse.Namespace) -> int:
    from modelcheck.common.files import writing
    from modelcheck.rules import ruleset as rs
    from modelcheck.rules import show

    con = report_console()
    if args.action == "list":
        view = show.ruleset_list(rs.list_rulesets())
        with writing(None):
            con.print(view)
            sys.stdout.flush()
        return EXIT_OK
    if not args.target:
        raise UsageError(f"'modelcheck rules {args.action}' needs a rule-set name or file")
    if args.action == "show":
        view = show.ruleset_view(rs.load_ruleset(args.target))
        with writing(None):
            con.print(view)
            sys.stdout.flush()
        return EXIT_OK
    errors = rs.validate_ruleset_file(args.target)
    for e in errors:
        say(e)
    if errors:
        say(f"modelcheck: error: {args.target}: {len(errors)} error(s)")
        return EXIT_INPUT
    for w in rs.ruleset_warnings(rs.load_ruleset(args.target)):
        say(w)
    from rich.markup import escape

    from modelcheck.report.text import shown

    con.print(f"{escape(shown(args.target, None))}: valid", highlight=False)
    return EXIT_OK


