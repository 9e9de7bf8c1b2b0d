from modelcheck.cli import run

run()
