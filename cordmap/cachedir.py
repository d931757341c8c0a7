"""The atlas cache's folder: a folder cordmap owns, marked as such, and a clean-up that touches only its own entries.

The folder is ``~/.cache/cordmap`` (cordmap's by its name), or ``$CORDMAP_CACHE`` when cordmap made it, finds it
empty, or finds its marker file in it; a folder that already holds other things (``CORDMAP_CACHE`` pointed at a
shared or home folder) gets a subfolder ``cordmap-cache/`` instead, so nothing of the user's sits beside the cache.
The clean-up removes only entries that are cordmap's by name *and* content: an ``atlas-<16 hex>-<phase>`` folder
holding nothing but the files the atlas writes, in a folder carrying the marker.
"""
from __future__ import annotations

import os
import re
import shutil
from pathlib import Path

MARKER = "CORDMAP-CACHE.txt"
MARKER_TEXT = ("This folder is cordmap's atlas cache. cordmap removes only its own atlas-<version>-<phase> folders "
               "here; it is safe to delete the whole folder.\n")
SUBFOLDER = "cordmap-cache"
ENTRY = re.compile(r"atlas-[0-9a-f]{16}-(chronic|acute)")
ENTRY_FILES = {"logp.npy", "meta.npz", "likely.npy", "abnormal.npy"}


def root() -> Path:
    return Path(os.environ.get("CORDMAP_CACHE") or Path.home() / ".cache" / "cordmap")


def _mark(folder: Path) -> Path:
    marker = folder / MARKER
    if not marker.exists():
        marker.write_text(MARKER_TEXT, encoding="utf-8")
    return folder


def folder(create: bool = True) -> Path:
    """The cache folder (created and marked when `create`); raises OSError when it cannot be made."""
    base = root()
    if (base / MARKER).is_file():
        return base
    if not os.environ.get("CORDMAP_CACHE"):  # the default folder is named for cordmap: its own
        if create:
            base.mkdir(parents=True, exist_ok=True)
            _mark(base)
        return base
    if not base.exists():
        if not create:
            return base
        base.mkdir(parents=True, exist_ok=True)
        return _mark(base)
    if base.is_dir() and not any(base.iterdir()):
        return _mark(base) if create else base
    sub = base / SUBFOLDER
    if create:
        sub.mkdir(exist_ok=True)
        _mark(sub)
    return sub


def is_own_entry(path: Path) -> bool:
    """An atlas folder this cache wrote: the right name, a real folder, only the atlas' files inside."""
    if not ENTRY.fullmatch(path.name) or path.is_symlink() or not path.is_dir():
        return False
    return all(p.name in ENTRY_FILES and p.is_file() and not p.is_symlink() for p in path.iterdir())


def prune(keep_prefix: str) -> list[Path]:
    """Remove the cache's own atlas folders whose name does not start with `keep_prefix`; returns them."""
    here = folder(create=False)
    if not (here / MARKER).is_file():
        return []
    gone = []
    for entry in here.iterdir():
        if not entry.name.startswith(keep_prefix) and is_own_entry(entry):
            shutil.rmtree(entry, ignore_errors=True)
            gone.append(entry)
    return gone
