"""Where wordkin keeps its files: one lookup for the cache, the notebook's data folder and the configuration.

Each folder is the environment variable when it is set, else the platform's per-user folder (``platformdirs``):
``$WORDKIN_CACHE`` or the user cache dir, ``$WORDKIN_DATA`` or the user data dir, ``$WORDKIN_CONFIG`` or the user
config dir.
"""

from __future__ import annotations

import os
from pathlib import Path
from typing import Literal

import platformdirs

Kind = Literal["cache", "data", "config"]

_VARIABLES: dict[Kind, str] = {"cache": "WORDKIN_CACHE", "data": "WORDKIN_DATA", "config": "WORDKIN_CONFIG"}
_PLATFORM = {
    "cache": platformdirs.user_cache_dir,
    "data": platformdirs.user_data_dir,
    "config": platformdirs.user_config_dir,
}


def folder(kind: Kind) -> Path:
    """The folder for ``kind``: its environment variable when set and not empty, else the platform's user folder."""
    env = os.environ.get(_VARIABLES[kind])
    if env:
        return Path(env)
    return Path(_PLATFORM[kind]("wordkin", appauthor=False))


def cache_root() -> Path:
    return folder("cache")


def notebook_path() -> Path:
    return folder("data") / "notebook.wkn"


def keymap_path() -> Path:
    return folder("config") / "keymap.toml"
