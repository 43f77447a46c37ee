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

__all__ = ["atomic_output"]


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
    final = Path(final)
    if not final.parent.is_dir():
        raise FileNotFoundError(f"Cannot write {final.name}: the folder {final.parent} does not "
                                "exist; create it first or choose another path.")
    staging = Path(tempfile.mkdtemp(prefix=f".{final.name}.", suffix=".partial", dir=final.parent))
    try:
        yield staging / final.name
        for part in sorted(staging.iterdir()):
            os.replace(part, final.parent / part.name)
    finally:
        shutil.rmtree(staging, ignore_errors=True)
