"""Writing a whole set of output files safely: into a fresh folder beside the target, then moved
into place, the file that marks the set complete last.

Every writer of a folder (``audit``, ``report``, ``demo``, ``portfolio``) goes through
:func:`output_folder`::

    with output_folder(out, complete="summary.json") as stage:
        write_everything(stage.path)       # a fresh, empty folder on the same file system

What it guarantees (docs/outputs.md, "How the files are written"):

- Nothing is written outside ``out``: the staging folder is a new folder in ``out``'s parent,
  named ``.schedcheck-partial-<name>-<random>``, and files are moved (``os.replace``, which never
  follows a symbolic link at the destination) into ``out``. A link planted inside ``out`` (as
  ``out/summary.json``, ``out/runs.csv`` or a sub-folder) is replaced by the new file or folder,
  never written through; a dangling link never creates a file elsewhere.
- Nothing half-written looks complete. While files are moved into an existing folder, the file
  :data:`INCOMPLETE_NAME` is present and the completing file (``summary.json``) is absent; it is
  moved last and the marker removed after it. A run that fails or is interrupted while writing
  removes its staging folder and leaves ``out`` as it was; a run killed outright (SIGKILL, power
  loss) leaves at most a ``.schedcheck-partial-*`` folder beside ``out`` (safe to delete) or an
  ``out`` with the marker and no ``summary.json``.
"""

from __future__ import annotations

import os
import secrets
import shutil
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field
from pathlib import Path

from schedcheck.errors import InputError

#: prefix of the staging folder made beside ``out`` (left behind only by a killed run)
PARTIAL_PREFIX = ".schedcheck-partial-"

#: present in ``out`` only while a new set is being moved in, or after a run killed meanwhile
INCOMPLETE_NAME = "INCOMPLETE"

INCOMPLETE_TEXT = (
    "These files are an incomplete set: a schedcheck run was stopped while it moved its new\n"
    "files into this folder. Run the command again; until then do not rely on these files.\n"
)


@dataclass
class Staging:
    """The fresh folder a set of output files is written into before it is moved into place."""

    path: Path
    target: Path
    complete: tuple[str, ...] = field(default_factory=tuple)

    def file(self, name: str) -> Path:
        """The staging path of ``name`` (a relative path; sub-folders are created)."""
        p = self.path / name
        p.parent.mkdir(parents=True, exist_ok=True)
        return p

    def write_text(self, name: str, text: str) -> Path:
        """Write ``text`` (UTF-8) as ``name``; returns the path it will have in the target."""
        try:
            self.file(name).write_text(text, encoding="utf-8")
        except OSError as e:
            raise InputError(f"cannot write the file ({e.strerror or e})",
                             path=self.target / name) from None
        return self.target / name

    def write_bytes(self, name: str, data: bytes) -> Path:
        """Write ``data`` as ``name``; returns the path it will have in the target."""
        try:
            self.file(name).write_bytes(data)
        except OSError as e:
            raise InputError(f"cannot write the file ({e.strerror or e})",
                             path=self.target / name) from None
        return self.target / name


def _check_target(out: Path) -> None:
    if out.is_symlink() and not out.exists():
        raise InputError("is a link to nothing; give another --out", path=out)
    if out.exists() and not out.is_dir():
        raise InputError("exists and is not a folder; give another --out", path=out)


@contextmanager
def output_folder(out: str | Path, *, complete: str | tuple[str, ...] = "summary.json"
                  ) -> Iterator[Staging]:
    """Stage a set of files and move it into ``out`` when the ``with`` block ends normally.

    Parameters
    ----------
    out : str or Path
        The folder the files belong in; created (with its parents) if missing. ``out`` itself
        may be a link to a folder (the user's choice); links inside it are never followed.
    complete : str or tuple of str
        The file(s) whose presence marks the set complete (``summary.json`` for an audit,
        ``site.toml`` for the demo); removed from ``out`` first and moved in last. Names the set
        does not contain are left alone (``report`` re-renders one file).

    Raises
    ------
    InputError
        ``out`` is a file or a dangling link, or a file cannot be written or moved (the message
        names it).
    """
    out = Path(out)
    done = (complete,) if isinstance(complete, str) else tuple(complete)
    _check_target(out)
    parent = out.absolute().parent
    try:
        parent.mkdir(parents=True, exist_ok=True)
        tmp = parent / f"{PARTIAL_PREFIX}{out.name or 'out'}-{secrets.token_hex(4)}"
        tmp.mkdir(mode=0o777)        # the umask applies, as to a folder made by mkdir
    except OSError as e:
        raise InputError(f"cannot write here ({e.strerror or e})", path=out) from None
    stage = Staging(path=tmp, target=out, complete=done)
    try:
        try:
            yield stage
        except OSError as e:
            raise InputError(f"cannot write the file ({e.strerror or e})",
                             path=_named(e, stage)) from None
        _commit(stage)
    finally:
        shutil.rmtree(tmp, ignore_errors=True)


def _commit(stage: Staging) -> None:
    """Move the staged files into the target, the completing files last."""
    out, tmp = stage.target, stage.path
    try:
        if not out.exists() and not out.is_symlink():
            os.rename(tmp, out)          # one step: the whole set appears at once
            return
        names = sorted(str(p.relative_to(tmp)) for p in tmp.rglob("*")
                       if p.is_file() and not p.is_symlink())
        last = [n for n in names if n in stage.complete]
        first = [n for n in names if n not in stage.complete]
        if last:
            _replace(_marker(tmp), out / INCOMPLETE_NAME)
            for name in last:
                _remove(out / name)
        for name in first:
            _move(tmp, out, name)
        for name in last:
            _move(tmp, out, name)
        if last:
            os.unlink(out / INCOMPLETE_NAME)
    except OSError as e:
        raise InputError(f"cannot move the new files into place ({e.strerror or e}); the "
                         f"folder is marked {INCOMPLETE_NAME}", path=out) from None


def _named(e: OSError, stage: Staging) -> Path:
    """The target path of the file an error was about (its staged copy named as in ``out``)."""
    name = getattr(e, "filename", None)
    if not name:
        return stage.target
    try:
        return stage.target / Path(name).relative_to(stage.path)
    except ValueError:
        return Path(name)


def _marker(tmp: Path) -> Path:
    p = tmp / f".{INCOMPLETE_NAME}"
    p.write_text(INCOMPLETE_TEXT, encoding="utf-8")
    return p


def _remove(path: Path) -> None:
    """Remove a file or link (never what a link points to); a real folder is removed whole."""
    if path.is_symlink() or path.is_file():
        path.unlink()
    elif path.is_dir():
        shutil.rmtree(path)
    elif os.path.lexists(path):
        path.unlink()


def _move(tmp: Path, out: Path, name: str) -> None:
    """Move ``tmp/name`` to ``out/name``, replacing links and non-folders on the way."""
    dest = out
    for part in Path(name).parts[:-1]:
        dest = dest / part
        if dest.is_symlink() or (os.path.lexists(dest) and not dest.is_dir()):
            dest.unlink()
        dest.mkdir(exist_ok=True)
    _replace(tmp / name, out / name)


def _replace(src: Path, dest: Path) -> None:
    if dest.is_dir() and not dest.is_symlink():
        shutil.rmtree(dest)
    os.replace(src, dest)        # rename(2): a link at dest is replaced, not followed
