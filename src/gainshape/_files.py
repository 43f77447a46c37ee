"""Files written whole or not at all.

Vocabulary: the *final path* is the name the user asked for; the *staging
folder* is a hidden folder beside it where the file (and any split parts
MNE adds) is written first. Only when writing finishes are the files moved
to their final names (``os.replace``, atomic on one file system); on any
failure, Ctrl-C included, the staging folder is removed and nothing appears
under a final name.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from contextlib import contextmanager
from pathlib import Path

__all__ = ["atomic_output", "atomic_outputs"]


@contextmanager
def atomic_output(final):
    """Yield a path with the final file name inside a staging folder beside it.

    Everything written into the staging folder is moved beside ``final``
    when the block ends without error; otherwise it is deleted.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> with atomic_output(folder / "notes.txt") as path:
    ...     _ = path.write_text("complete")
    >>> (folder / "notes.txt").read_text(), sorted(p.name for p in folder.iterdir())
    ('complete', ['notes.txt'])
    """
    with atomic_outputs(final) as (staged,):
        yield staged


@contextmanager
def atomic_outputs(*finals):
    """Yield staged paths for several files of one folder, moved together.

    Nothing reaches a final name unless the whole block succeeds; then the
    files are moved in the order given (each move is atomic; a process
    killed between two moves leaves the earlier ones new, so write the
    file that vouches for the others, such as a sidecar, last).

    Examples
    --------
    >>> import tempfile, pathlib
    >>> folder = pathlib.Path(tempfile.mkdtemp())
    >>> try:
    ...     with atomic_outputs(folder / "data.bin", folder / "data.json") as (data, side):
    ...         _ = data.write_bytes(b"1234")
    ...         raise OSError("disk full while writing the sidecar")
    ... except OSError:
    ...     pass
    >>> sorted(p.name for p in folder.iterdir())
    []
    """
    finals = [Path(f) for f in finals]
    folder = finals[0].parent
    if any(f.parent != folder for f in finals):
        raise ValueError("atomic_outputs writes files of one folder; "
                         f"{', '.join(str(f) for f in finals)} are in several.")
    if not folder.is_dir():
        raise FileNotFoundError(f"Cannot write {finals[0].name}: the folder {folder} does not "
                                "exist; create it first or choose another path.")
    staging = Path(tempfile.mkdtemp(prefix=f".{finals[0].name}.", suffix=".partial", dir=folder))
    try:
        yield tuple(staging / f.name for f in finals)
        order = {f.name: i for i, f in enumerate(finals)}
        for part in sorted(staging.iterdir(), key=lambda p: order.get(p.name, -1)):  # splits first
            os.replace(part, folder / part.name)
    finally:
        shutil.rmtree(staging, ignore_errors=True)
