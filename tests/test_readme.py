"""The README's console blocks are what the tool prints: each `$ withstand ...` command in them
is run as a user would run it (the installed console script, in a fresh folder) and its output
compared with the block, so the tour cannot drift from the tool again.

In a block, a line "…" stands for any number of lines left out and "…" inside a line for any
text (a path); a 16-digit hex chain head stands for any head, since it hashes the time logged.
"""

from __future__ import annotations

import os
import re
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
README = ROOT / "README.md"
WITHSTAND = shutil.which("withstand", path=str(Path(sys.executable).parent)) or "withstand"
HEX_HEAD = re.compile(r"\bhead [0-9a-f]{16}\b")


def console_blocks(text: str) -> list[list[str]]:
    return [block.splitlines() for block in re.findall(r"```console\n(.*?)```", text, re.S)]


def commands_of(block: list[str]) -> list[tuple[str, list[str]]]:
    """(command, expected output lines) for each `$ ` line of a block."""
    out: list[tuple[str, list[str]]] = []
    for line in block:
        if line.startswith("$ "):
            out.append((line[2:], []))
        elif out:
            out[-1][1].append(line)
    for _, lines in out:
        while lines and not lines[-1].strip():
            lines.pop()
    return out


def _line_pattern(expected: str) -> re.Pattern:
    parts = [re.escape(p) for p in HEX_HEAD.sub("\0", expected.rstrip()).split("…")]
    return re.compile(".*".join(parts).replace("\0", r"head [0-9a-f]{16}") + r"\Z")


def matches(expected: list[str], actual: list[str]) -> bool:
    """Whether ``actual`` is ``expected`` with each lone "…" standing for any lines."""
    def go(i: int, j: int) -> bool:
        if i == len(expected):
            return j == len(actual)
        if expected[i].strip() == "…":
            return any(go(i + 1, k) for k in range(j, len(actual) + 1))
        return j < len(actual) and bool(_line_pattern(expected[i]).match(actual[j].rstrip())) \
            and go(i + 1, j + 1)
    return go(0, 0)


def test_the_matcher_itself():
    assert matches(["a", "…", "d"], ["a", "b", "c", "d"])
    assert matches(["path /…/x"], ["path /tmp/q/x"])
    assert matches(["intact: 1 event, head 0d17342bdaa5ba65."], ["intact: 1 event, head "
                                                                 "a1b2c3d4e5f60718."])
    assert not matches(["a", "d"], ["a", "b", "d"])
    assert not matches(["Event 2 logged"], ["Event 1 logged"])


def _prepare(folder: Path, command: str) -> None:
    """The files a tour command reads, made as the README says: fleet-edited.yaml is the
    export with NB-0002's custodian changed; broken.yaml gives hd-c40's AC volts mode a current
    where its maximum input must be a voltage."""
    if "fleet-edited.yaml" in command or "broken.yaml" in command:
        text = (folder / "fleet.yaml").read_text(encoding="utf-8")
        at = text.index("tag: NB-0002")
        c = text.index("custodian: Ines Marrow", at)
        edited = text[:c] + "custodian: Olek Brandt" + text[c + len("custodian: Ines Marrow"):]
        (folder / "fleet-edited.yaml").write_text(edited, encoding="utf-8")
        m = edited.index("- key: hd-c40")
        v = edited.index("max_input: 1 kV", edited.index("- key: vac", m))
        broken = edited[:v] + "max_input: 2 kA" + edited[v + len("max_input: 1 kV"):]
        (folder / "broken.yaml").write_text(broken, encoding="utf-8")


def tour_blocks() -> list[int]:
    """The blocks made only of `withstand` commands (an API example needs a server)."""
    blocks = console_blocks(README.read_text("utf-8"))
    return [i for i, b in enumerate(blocks)
            if commands_of(b) and all(c.startswith("withstand ") for c, _ in commands_of(b))]


def test_the_tour_has_its_blocks():
    assert len(tour_blocks()) >= 3


@pytest.mark.parametrize("number", tour_blocks())
def test_readme_console_block_is_what_the_tool_prints(number, tmp_path, templates):
    block = console_blocks(README.read_text("utf-8"))[number]
    env = {k: v for k, v in os.environ.items() if not k.startswith("WITHSTAND_")}
    env["XDG_DATA_HOME"] = str(tmp_path / "data")  # the tool's default database folder
    shutil.copytree(ROOT / "seeddata", tmp_path / "seeddata")
    if not any(cmd.startswith("withstand init") for cmd, _ in commands_of(block)):
        # A block that does not begin with `withstand init --with-demo` runs on what that
        # command leaves: the demo database at its default place (XDG_DATA_HOME/withstand) and
        # the key that signed it, copied from the session's template rather than made again.
        # The blocks that do run init, and the init tests in tests/test_cli.py, run it itself.
        templates.demo_instance(tmp_path / "data" / "withstand")
    for command, expected in commands_of(block):
        argv = shlex.split(command)
        assert argv[0] == "withstand", command
        _prepare(tmp_path, command)
        done = subprocess.run([WITHSTAND, *argv[1:]], cwd=tmp_path, env=env, text=True,
                              capture_output=True, timeout=300)
        actual = (done.stdout + done.stderr).rstrip("\n").splitlines()
        assert "Traceback" not in done.stderr, done.stderr
        assert matches(expected, actual), (
            f"README block {number}, `{command}` printed:\n" + "\n".join(actual))
