"""The atlas disk cache: a memory-mapped logp that loads back equal, old model versions cleaned away, and nothing
removed that the cache did not write (its own marked folder; entries checked by name and content)."""
from __future__ import annotations

import numpy as np

from cordmap import atlas as atlas_mod
from cordmap import cachedir


def test_cache_round_trip_and_prune(tmp_path, monkeypatch):
    cache = tmp_path / "cache"
    monkeypatch.setenv("CORDMAP_CACHE", str(cache))
    at = atlas_mod.get("chronic")  # from memory or the user's cache: the cache under test is tmp_path
    path = atlas_mod._cache_path("chronic")
    assert path.parent == cache and (cache / cachedir.MARKER).is_file()  # made by cordmap: its own, marked
    stale_dir = cache / "atlas-0000000000000000-chronic"  # an older version's entry, as the cache writes them
    stale_dir.mkdir()
    (stale_dir / "logp.npy").write_bytes(b"old")
    other = cache / "notes.txt"
    other.write_text("not ours")
    atlas_mod._save(at, path)
    assert path.is_dir() and not stale_dir.exists() and other.exists()
    back = atlas_mod._load(path, "chronic")
    assert isinstance(back.logp, np.memmap) and not back.logp.flags.writeable
    assert np.array_equal(back.logp, at.logp) and np.array_equal(back.likely, at.likely)
    assert np.array_equal(back.abnormal, at.abnormal) and np.array_equal(back.area, at.area)
    atlas_mod._save(at, path)  # a second writer finds the folder there and leaves it intact
    assert np.array_equal(atlas_mod._load(path, "chronic").logp, at.logp)
    assert not [p for p in cache.iterdir() if p.name.startswith(".atlas-")]


def test_shared_folder_keeps_the_users_files(tmp_path, monkeypatch):
    """CORDMAP_CACHE pointed at a folder that holds a user's things: the cache takes a subfolder of its own, and
    nothing of the user's is removed, even entries named like the cache's."""
    shared = tmp_path / "shared"
    shared.mkdir()
    mine = {"atlas-notes.txt": b"mine", "atlas-0000000000000000-chronic.npz": b"mine"}
    for name, data in mine.items():
        (shared / name).write_bytes(data)
    (shared / "atlas-2023").mkdir()
    (shared / "atlas-2023" / "scan.dcm").write_bytes(b"mine")
    monkeypatch.setenv("CORDMAP_CACHE", str(shared))
    at = atlas_mod.get("chronic")
    path = atlas_mod._cache_path("chronic")
    assert path.parent == shared / cachedir.SUBFOLDER
    own = path.parent
    lookalike = own / "atlas-1111111111111111-acute"  # right name, but holds a file the cache never writes
    lookalike.mkdir()
    (lookalike / "results.csv").write_text("mine")
    atlas_mod._save(at, path)
    assert path.is_dir() and (lookalike / "results.csv").exists()
    assert {p.name for p in shared.iterdir()} == {*mine, "atlas-2023", cachedir.SUBFOLDER}
    assert all((shared / n).read_bytes() == d for n, d in mine.items())
    assert (shared / "atlas-2023" / "scan.dcm").exists()
    assert cachedir.prune(path.name) == [] and path.is_dir()  # the look-alike is not its own entry
