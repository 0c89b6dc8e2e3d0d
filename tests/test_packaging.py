"""The package as pip installs it: a built wheel carries every file under registry/ (the
templates, migrations and demo data reached through the symbolic links included) and an
installed copy finds them through importlib.resources from any folder; an editable install
builds without a setuptools notice or warning.

The reference is pip and setuptools themselves (their build output and the wheel they write),
not the project's code."""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import venv
import zipfile
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent


def _pip_noise(output: str) -> list[str]:
    """Lines of pip/setuptools output that are warnings or notices about the project.

    pip's "Location '...' is ignored" lines come from this machine's pip configuration (an
    extra index with folders missing), not from the project, so they are left out."""
    lines = []
    for line in output.splitlines():
        if "is ignored: it is neither a file nor a directory" in line:
            continue
        if any(word in line for word in ("Warning", "WARNING", "warning", "!!",
                                          "Editable installation", "Deprecat", "notice")):
            lines.append(line)
    return lines


def _source_copy(target: Path) -> Path:
    """The files git tracks (and new ones not ignored), symbolic links kept as links."""
    names = subprocess.run(["git", "ls-files", "-co", "--exclude-standard", "-z"], cwd=ROOT,
                           check=True, capture_output=True).stdout.decode().split("\0")
    for name in filter(None, names):
        src = ROOT / name
        if not os.path.lexists(src):
            continue  # deleted in the worktree, not yet committed
        dst = target / name
        dst.parent.mkdir(parents=True, exist_ok=True)
        if src.is_symlink():
            os.symlink(os.readlink(src), dst)
        else:
            shutil.copy2(src, dst)
    return target


@pytest.fixture(scope="module")
def wheel(tmp_path_factory):
    src = _source_copy(tmp_path_factory.mktemp("src"))
    out = tmp_path_factory.mktemp("wheel")
    done = subprocess.run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-w", str(out),
                           str(src)], capture_output=True, text=True)
    assert done.returncode == 0, done.stdout + done.stderr
    assert _pip_noise(done.stdout + done.stderr) == []
    (path,) = out.glob("withstand-*.whl")
    return path


def test_wheel_carries_every_file_under_registry(wheel):
    in_wheel = {n for n in zipfile.ZipFile(wheel).namelist() if n.startswith("registry/")}
    in_tree = {f"registry/{p.relative_to(ROOT / 'registry').as_posix()}"
               for p in (ROOT / "registry").rglob("*")
               if p.is_file() and "__pycache__" not in p.parts}
    # rglob does not follow the links; walk the linked folders themselves
    for link in ("templates", "migrations", "seeddata"):
        assert (ROOT / "registry" / link).is_symlink()
        in_tree |= {f"registry/{link}/{p.relative_to(ROOT / link).as_posix()}"
                    for p in (ROOT / link).rglob("*")
                    if p.is_file() and "__pycache__" not in p.parts}
    assert in_tree - in_wheel == set()
    assert in_wheel - in_tree == set()
    assert {"registry/templates/base.html", "registry/migrations/env.py",
            "registry/seeddata/fleet.yaml", "registry/seeddata/plans/mains-panel.yaml"} <= in_wheel


def test_installed_wheel_finds_templates_migrations_and_demo_data(wheel, tmp_path):
    """The wheel unpacked as site-packages would hold it, first on the path, run from another
    folder: it migrates a database, loads the demo fleet and renders a page from its own
    files."""
    site = tmp_path / "site"
    zipfile.ZipFile(wheel).extractall(site)
    work = tmp_path / "elsewhere"
    work.mkdir()
    env = dict(os.environ, PYTHONPATH=str(site), WITHSTAND_INSTANCE=str(tmp_path / "inst"))
    env.pop("WITHSTAND_DATABASE_URL", None)
    script = (
        "import registry, sys\n"
        "from importlib import resources\n"
        f"assert registry.__file__.startswith({str(site)!r}), registry.__file__\n"
        "print(resources.files('registry.templates').joinpath('base.html').is_file())\n"
        "from registry.cli import main\n"
        "sys.argv = ['withstand', 'init', '--with-demo']\n"
        "try:\n    main()\nexcept SystemExit as e:\n    assert not e.code, e.code\n"
        "from registry.app import create_app\n"
        "app = create_app()\n"
        "page = app.test_client().get('/login')\n"
        "print(page.status_code, b'password' in page.data.lower())\n"
    )
    done = subprocess.run([sys.executable, "-P", "-c", script], cwd=work, env=env,
                          capture_output=True, text=True)
    assert done.returncode == 0, done.stdout + done.stderr
    lines = done.stdout.splitlines()
    assert lines[0] == "True"
    assert "migrated from empty to" in done.stdout
    assert "Loaded the demo fleet." in done.stdout
    assert lines[-1] == "200 True"


def test_editable_install_prints_no_notice(tmp_path):
    src = _source_copy(tmp_path / "src")
    env_dir = tmp_path / "venv"
    venv.EnvBuilder(with_pip=True, system_site_packages=True).create(env_dir)
    python = env_dir / "bin" / "python"
    done = subprocess.run([str(python), "-m", "pip", "install", "--quiet", "--no-deps", "-e",
                           str(src)], capture_output=True, text=True)
    assert done.returncode == 0, done.stdout + done.stderr
    assert _pip_noise(done.stdout + done.stderr) == []
    # a plain path entry, no import hook
    pth = list((env_dir / "lib").glob("python3*/site-packages/__editable__.withstand-*.pth"))
    assert [p.read_text().strip() for p in pth] == [str(src.resolve())]
