"""Where the database lives when nothing says otherwise: one per-user data folder (through
platformdirs, which follows the XDG base-directory specification on Linux), so the command line
finds it from any folder; a command that only reads names the path it looked at and creates
nothing there."""

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
WITHSTAND = str(Path(sys.executable).parent / "withstand")
PLAN = ROOT / "seeddata" / "plans" / "mains-panel.yaml"


def _env(data_home: Path) -> dict:
    env = {k: v for k, v in os.environ.items() if not k.startswith("WITHSTAND_")}
    env["XDG_DATA_HOME"] = str(data_home)  # XDG base-directory spec: the user's data folder
    return env


def _run(args, cwd, env):
    return subprocess.run([WITHSTAND, *args], cwd=cwd, env=env, capture_output=True,
                          text=True, timeout=300)


def test_a_read_before_init_names_the_path_and_creates_nothing(tmp_path):
    data = tmp_path / "data"
    done = _run(["check", str(PLAN)], tmp_path, _env(data))
    assert done.returncode == 2
    expected = data / "withstand" / "withstand.sqlite3"
    assert f"there is no database at {expected}" in done.stderr + done.stdout
    assert "Traceback" not in done.stderr
    assert not data.exists() and not (tmp_path / "instance").exists()


def test_init_says_where_and_any_folder_finds_the_same_database(tmp_path):
    data = tmp_path / "data"
    env = _env(data)
    first, second = tmp_path / "a", tmp_path / "b"
    first.mkdir()
    second.mkdir()
    done = _run(["init", "--with-demo"], first, env)
    assert done.returncode == 0, done.stderr
    assert str(data / "withstand" / "withstand.sqlite3") in done.stdout
    check = _run(["check", str(PLAN), "--on", "2026-12-02"], second, env)
    assert check.returncode == 0, check.stderr
    assert check.stdout.startswith("Best setup: ")
    assert not (first / "instance").exists() and not (second / "instance").exists()
