"""Configuration from the environment and the instance folder.

``WITHSTAND_DATABASE_URL`` selects the database (default: a SQLite file in the instance
folder); ``WITHSTAND_SECRET_KEY`` the session key (default: one generated once and kept in the
instance folder, so that sessions survive a restart without a key in the code);
``WITHSTAND_INSTANCE`` the instance folder itself (default: the per-user data folder,
``~/.local/share/withstand`` on Linux, so every command finds the same database wherever it is
run from); ``WITHSTAND_CHAIN_KEY`` the key that signs the
record's hash chains (default: one generated once into the instance folder, like the secret key).
"""

from __future__ import annotations

import os
import secrets
from pathlib import Path

import platformdirs

from .store.db import default_url


def instance_path() -> Path:
    env = os.environ.get("WITHSTAND_INSTANCE")
    if env:
        return Path(env).expanduser().resolve()
    return Path(platformdirs.user_data_dir("withstand", appauthor=False))


def database_url(instance: Path | None = None) -> str:
    return os.environ.get("WITHSTAND_DATABASE_URL") or default_url(instance or instance_path())


def _key_file(path: Path) -> str:
    """A random key kept in ``path``, made on first use: readable by the owner only, and
    created with O_EXCL so that two first starts agree on one key."""
    if not path.exists():
        path.parent.mkdir(parents=True, exist_ok=True)
        try:
            fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
        except FileExistsError:
            pass
        else:
            with os.fdopen(fd, "w") as f:
                f.write(secrets.token_hex(32))
    return path.read_text().strip()


def secret_key(instance: Path) -> str:
    return os.environ.get("WITHSTAND_SECRET_KEY") or _key_file(instance / "secret_key")


def chain_key(instance: Path | None = None) -> str:
    """The HMAC key of the record's chains (events, holds, changes): ``WITHSTAND_CHAIN_KEY``, or
    a key generated once into ``chain_key`` in the instance folder (mode 0600). It is kept out
    of the database on purpose: whoever can write the database but lacks this key cannot
    recompute valid links. Back it up apart from the database."""
    return (os.environ.get("WITHSTAND_CHAIN_KEY")
            or _key_file((instance or instance_path()) / "chain_key"))
