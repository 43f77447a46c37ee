"""Is a study's output up to date? Decided from file stamps, before any cluster starts.

Vocabulary: a file's *stamp* is its size and modification time in
nanoseconds; a recording's *stamps* are those of its file and of the
companions named like it (BrainVision and EEGLAB keep the data beside the
header). Its *fingerprint* is the XXH3-128 hash of the same files' bytes.
A derivative's sidecar records the recipe, the source's stamps and
fingerprint, and the filtered file's own stamp. A recording is up to date
when the recipe is the same, the filtered file still has its recorded
stamp, and the source has its recorded stamps; when only the times moved,
the fingerprint decides (a touched file is not redone, a replaced one is,
whatever the clock says).

The study's *state* (``.gainshape-study.json`` in the output folder) keeps
what the last complete run saw: the recipe file's hash, the inputs and
selection, every candidate input file's stamp, and the recordings. When
all of it holds, ``gainshape run`` answers "up to date" without importing
MNE or starting a cluster. Only the standard library and xxhash are used.
"""

from __future__ import annotations

import json
import os
from pathlib import Path

import xxhash

__all__ = ["SIDECAR_KEY", "file_fingerprint", "file_stamps", "verdict"]

SIDECAR_KEY = "gainshape"
STATE_NAME = ".gainshape-study.json"
_HASH_CHUNK = 8 * 2**20


def companions(source: Path) -> list:
    """The source and the files named like it in its folder, sorted."""
    stem = source.name.split(".")[0]
    return sorted(p for p in source.parent.glob(stem + ".*") if p.is_file()) or [source]


def stamp(path: Path) -> list:
    """[size in bytes, modification time in ns] of one file."""
    info = os.stat(path)
    return [info.st_size, info.st_mtime_ns]


def file_stamps(source: Path) -> dict:
    """{name: stamp} of the recording's files.

    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> _ = (folder / "a.vhdr").write_text("header"); _ = (folder / "a.eeg").write_text("data")
    >>> sorted(file_stamps(folder / "a.vhdr")), file_stamps(folder / "a.vhdr")["a.eeg"][0]
    (['a.eeg', 'a.vhdr'], 4)
    """
    return {p.name: stamp(p) for p in companions(source)}


def file_fingerprint(source: Path) -> str:
    """XXH3-128 of the recording's file and its companions.

    >>> import tempfile
    >>> folder = Path(tempfile.mkdtemp())
    >>> _ = (folder / "a.vhdr").write_text("header"); _ = (folder / "a.eeg").write_text("data")
    >>> before = file_fingerprint(folder / "a.vhdr")
    >>> _ = (folder / "a.eeg").write_text("other data")
    >>> file_fingerprint(folder / "a.vhdr") == before
    False
    """
    h = xxhash.xxh3_128()
    for path in companions(source):
        h.update(path.name.encode())
        with open(path, "rb") as stream:
            while chunk := stream.read(_HASH_CHUNK):
                h.update(chunk)
    return "xxh3_128:" + h.hexdigest()


def sidecar_record(output: Path) -> dict | None:
    """The gainshape record of a derivative's sidecar (None if absent or damaged)."""
    try:
        record = json.loads(output.with_suffix(".json").read_text(encoding="utf-8"))[SIDECAR_KEY]
    except (OSError, ValueError, KeyError, TypeError):
        return None
    return record if isinstance(record, dict) else None


def verdict(source: Path, output: Path, content: dict) -> str:
    """"up to date" or "redo" for one recording (``content``: the recipe).

    The fingerprint is computed only when the source's names and sizes are
    as recorded but its times are not.
    """
    record = sidecar_record(output)
    if record is None or record.get("recipe") != content:
        return "redo"
    try:
        if "output_stamp" in record and stamp(output) != record["output_stamp"]:
            return "redo"
        now = file_stamps(source)
    except OSError:
        return "redo"
    if now == record.get("source_stamps"):
        return "up to date"
    recorded = record.get("source_stamps") or {}
    if recorded and {n: s for n, (s, _) in now.items()} != {n: s for n, (s, _) in recorded.items()}:
        return "redo"
    return "up to date" if file_fingerprint(source) == record.get("source_fingerprint") else "redo"


# -- the study's state ----------------------------------------------------------------------
def candidates(inputs) -> dict:
    """{path: stamp} of every file that could be an input: under a BIDS root,
    each file of an ``eeg`` folder; for a list, each file and its companions."""
    if isinstance(inputs, (str, Path)):
        found = {}
        for folder, _, names in os.walk(inputs):
            if Path(folder).name == "eeg":
                found.update({str(Path(folder) / n): stamp(Path(folder) / n) for n in names})
        return found
    return {str(p): stamp(p) for source in inputs for p in companions(Path(source))}


def recipe_hash(recipe) -> str | None:
    """XXH3-128 of a recipe file's bytes (None for a recipe given as a dict)."""
    if isinstance(recipe, dict):
        return None
    return xxhash.xxh3_128(Path(recipe).read_bytes()).hexdigest()


def state_key(inputs, selection: dict, band_change: bool) -> str:
    """What the run was asked, as one string (inputs, selection, band change; the state
    file keeps the key "summary" it has had since version 1)."""
    listed = str(inputs) if isinstance(inputs, (str, Path)) else [str(p) for p in inputs]
    return json.dumps({"inputs": listed, "selection": selection, "summary": band_change},
                      sort_keys=True)


def unchanged_study(recipe, inputs, out_dir: Path, selection: dict, band_change: bool) -> list | None:
    """The recordings of the last complete run, if nothing it depends on changed; else None.

    Each is (source, subject, session, task, output). Checked: the recipe
    file's bytes, the question asked, every candidate input's stamp, each
    derivative's sidecar (recipe) and filtered file (stamp), and the study's
    files.
    """
    try:
        state = json.loads((Path(out_dir) / STATE_NAME).read_text(encoding="utf-8"))
        if (state.get("recipe_hash") is None or state["recipe_hash"] != recipe_hash(recipe)
                or state["key"] != state_key(inputs, selection, band_change)
                or state["candidates"] != candidates(inputs)):
            return None
        study_files = ["methods.txt", "methods_full.txt", "report.html"]
        study_files += ["band_change.nc"] if band_change else []
        if not all((Path(out_dir) / name).is_file() for name in study_files):
            return None
        content = state["recipe"]
        for source, *_, output in state["recordings"]:
            if verdict(Path(source), Path(output), content) != "up to date":
                return None
    except (OSError, ValueError, KeyError, TypeError):
        return None
    return [tuple(row) for row in state["recordings"]]


def state(recipe, content: dict, inputs, selection: dict, band_change: bool, recordings) -> dict:
    """The state to write after a run in which every recording succeeded."""
    return {"recipe_hash": recipe_hash(recipe), "recipe": content,
            "key": state_key(inputs, selection, band_change), "candidates": candidates(inputs),
            "recordings": [[str(r[0]), *r[1:4], str(r[4])] for r in recordings]}
