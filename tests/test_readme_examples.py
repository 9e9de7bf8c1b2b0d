"""The README's quick-start example is what the tool prints: the command as written, run from the
repository at 100 columns (as the README says), gives the README's lines — the summary of each
model, the warnings, the failing members and the first groups of the unchecked list — and the
exit code the README states."""

from __future__ import annotations

import re
import shlex

from tests.helpers import REPO, run_modelcheck


def _quick_start() -> tuple[list[str], list[str]]:
    """The quick-start `modelcheck check` command's arguments and the example output block under it."""
    readme = (REPO / "README.md").read_text(encoding="utf-8")
    command = re.search(r"pip install -e \. && modelcheck (check [^\n]+)", readme)
    assert command, "the README's quick start runs `modelcheck check`"
    after = readme[command.end():]
    after = after[after.index("\n```") + 4:]           # past the end of the command's block
    block = re.search(r"\n```\n(.*?)\n```", after, re.S)
    assert block, "the README shows the quick start's output"
    return shlex.split(command.group(1)), block.group(1).splitlines()


def test_the_quick_start_output_is_what_the_readme_shows():
    args, shown = _quick_start()
    r = run_modelcheck(*args, timeout=600, env={"COLUMNS": "100"})
    assert r.returncode == 1, r.stderr      # README: exits with code 1 (the samples' deliberate failures)
    printed = [line.rstrip() for line in r.stdout.splitlines()]
    cut = shown.index("…") if "…" in shown else len(shown)
    head, tail = [line.rstrip() for line in shown[:cut]], [line.rstrip() for line in shown[cut + 1:]]
    assert printed[:len(head)] == head
    assert printed[len(printed) - len(tail):] == tail


def test_every_code_block_of_the_readmes_closes():
    # CommonMark: a closing fence is the fence alone on its line (text after it makes it no fence,
    # and the block runs on into the prose below)
    for path in (REPO / "README.md", REPO / "DEVELOPERS.md", REPO / "sample_models" / "README.md"):
        inside = False
        for n, line in enumerate(path.read_text(encoding="utf-8").splitlines(), 1):
            if not line.startswith("```"):
                continue
            if inside:
                assert line.strip() == "```", f"{path.name}:{n}: a code block closed by {line!r}"
            inside = not inside
        assert not inside, f"{path.name}: a code block never closes"
