"""The atlas disk cache: a memory-mapped logp that loads back equal, and old model versions cleaned away."""
from __future__ import annotations

import numpy as np

from cordmap import atlas as atlas_mod


def test_cache_round_trip_and_prune(tmp_path, monkeypatch):
    monkeypatch.setenv("CORDMAP_CACHE", str(tmp_path))
    at = atlas_mod.get("chronic")  # from memory or the user's cache: the cache under test is tmp_path
    stale_dir = tmp_path / "atlas-0000000000000000-chronic"
    stale_dir.mkdir()
    stale_file = tmp_path / "atlas-0000000000000000-acute.npz"
    stale_file.write_bytes(b"old")
    other = tmp_path / "notes.txt"
    other.write_text("not ours")
    path = atlas_mod._cache_path("chronic")
    atlas_mod._save(at, path)
    assert path.is_dir() and not stale_dir.exists() and not stale_file.exists() and other.exists()
    back = atlas_mod._load(path, "chronic")
    assert isinstance(back.logp, np.memmap) and not back.logp.flags.writeable
    assert np.array_equal(back.logp, at.logp) and np.array_equal(back.likely, at.likely)
    assert np.array_equal(back.abnormal, at.abnormal) and np.array_equal(back.area, at.area)
    atlas_mod._save(at, path)  # a second writer finds the folder there and leaves it intact
    assert np.array_equal(atlas_mod._load(path, "chronic").logp, at.logp)
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".atlas-")]
