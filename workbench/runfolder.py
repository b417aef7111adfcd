"""A run folder that cannot lie: written whole into a sibling, then renamed into place.

A run writes every file into ``.<name>.incomplete`` beside the output folder ``<name>``,
``provenance.json`` last, and only then renames it to ``<name>``.  So a folder named like
the output is always a complete run; a killed run leaves only the ``.incomplete``
sibling, which the next run into the same folder removes (and says so).

A second run into the same folder while the first is going on is refused: the first
holds an exclusive lock on ``.<name>.lock`` (released by the system when a run dies, so a
killed run never blocks the next one); the message names the other run.

``--overwrite`` replaces the folder whole: the old folder is renamed aside, the new one
renamed into place, the old one removed; no file of the previous run survives.
"""
from __future__ import annotations

import datetime as _dt
import errno
import json
import os
import shutil
import socket
import sys
import tempfile
from pathlib import Path

from .errors import WorkbenchError

try:  # POSIX; elsewhere only the exclusive creation of the sibling guards a folder
    import fcntl
except ImportError:  # pragma: no cover
    fcntl = None


class OutputError(WorkbenchError):
    """The output folder cannot be used (not empty, holds an input, in use, unwritable)."""


#: What to do about an OS error while writing, by errno.
_HINTS = {
    errno.ENOSPC: "the disk is full: free some space or choose --out on another disk",
    errno.EDQUOT: "the disk quota is used up: free some space or choose --out elsewhere",
    errno.EFBIG: "a file-size limit stopped the write (see `ulimit -f`): raise the limit "
                 "or write to a file system without it",
    errno.EROFS: "the file system is read-only: choose --out on a writable disk",
    errno.EACCES: "no permission to write there: choose a folder you can write to",
    errno.EPERM: "no permission to write there: choose a folder you can write to",
    errno.ENOENT: "a folder on the way does not exist: create it or choose another --out",
    errno.ENOTDIR: "a part of the path is a file, not a folder: choose another --out",
}


def os_error_message(exc: OSError, path=None, what="write", option="--out") -> str:
    """One line for an OS error: the path, what happened and what to do (`option`: the
    command-line option that names the path, in the advice).

    >>> import errno
    >>> os_error_message(OSError(errno.ENOSPC, "No space left on device"), "/data/run/budget.nc")
    'could not write /data/run/budget.nc: No space left on device [ENOSPC]; the disk is full: free some space or choose --out on another disk'

    An error of no file (a socket, a pipe) names none:

    >>> os_error_message(BrokenPipeError(errno.EPIPE, "Broken pipe"), what="read or write")
    'could not read or write: Broken pipe [EPIPE]'
    """
    where = exc.filename if exc.filename is not None else path
    code = errno.errorcode.get(exc.errno, "") if exc.errno is not None else ""
    text = f"could not {what}{'' if where is None else f' {where}'}: {exc.strerror or exc}"
    if code:
        text += f" [{code}]"
    hint = _HINTS.get(exc.errno)
    if hint and option != "--out":
        hint = hint.replace("--out", option)
    return text + (f"; {hint}" if hint else "")


def _now() -> str:
    return _dt.datetime.now(_dt.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ")


def siblings(out: Path) -> dict:
    """The lock file, the temporary sibling and the aside folder of output folder `out`."""
    out = Path(out)
    return {"lock": out.parent / f".{out.name}.lock",
            "incomplete": out.parent / f".{out.name}.incomplete",
            "replaced": out.parent / f".{out.name}.replaced"}


def atomic_write(path: Path, writer) -> Path:
    """Write via a temporary file in the same folder, then rename over `path`.

    Parameters
    ----------
    path : Path
    writer : callable
        Called with the temporary path; writes the content there.
    """
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    os.close(fd)
    try:
        writer(Path(tmp))
        umask = os.umask(0)
        os.umask(umask)
        os.chmod(tmp, 0o666 & ~umask)  # mkstemp makes 0600; give the usual file mode
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


def check_out_dir(out: Path, inputs: dict, overwrite: bool = False) -> Path:
    """Check that `out` can take a run; returns it resolved.

    Raises
    ------
    OutputError
        When the folder holds an input file, is a file, or is not empty and `overwrite`
        is False.
    """
    out = Path(out).resolve()
    for role, p in inputs.items():
        p = Path(p).resolve()
        if p.parent == out or out in p.parents or p == out:
            raise OutputError(f"output folder {out} holds the {role} input {p.name}: "
                              "choose another folder (outputs never go beside or over inputs)")
    if out.exists() or out.is_symlink():
        if not out.is_dir() or out.is_symlink():
            raise OutputError(f"output path {out} exists and is not a folder: choose another --out")
        if any(out.iterdir()) and not overwrite:
            raise OutputError(f"output folder {out} is not empty: use --overwrite to replace "
                              "it whole, or choose a new folder")
    return out


class RunFolder:
    """Write a run into a temporary sibling of `out` and rename it into place.

    Use as a context manager: entering checks the folder, takes the lock and makes the
    sibling (:attr:`path`, where the files go); :meth:`commit` renames it into place;
    leaving without a commit (an error, Ctrl-C) removes the sibling, so nothing that
    looks like a run is left.

    Parameters
    ----------
    out : path
        The output folder.
    inputs : dict
        role -> path of every input (outputs never go beside or over them).
    overwrite : bool
        Replace a non-empty `out` whole.
    say : callable, optional
        Called with a line of text for what the user should know (a removed leftover).
    """

    def __init__(self, out, inputs=None, overwrite=False, say=None):
        self.inputs = dict(inputs or {})
        self.out = check_out_dir(out, self.inputs, overwrite)
        self.overwrite = overwrite
        self.say = say or (lambda text: print(text, file=sys.stderr))
        s = siblings(self.out)
        self.lock_path, self.path, self.aside = s["lock"], s["incomplete"], s["replaced"]
        self._lock = None
        self.committed = False

    # ------------------------------------------------------------------ locking
    def _acquire(self):
        if not self.out.parent.exists():
            self.out.parent.mkdir(parents=True)
        me = {"pid": os.getpid(), "host": socket.gethostname(), "started_utc": _now(),
              "command": " ".join(sys.argv)}
        while True:
            fd = os.open(self.lock_path, os.O_RDWR | os.O_CREAT, 0o644)
            if fcntl is None:  # pragma: no cover
                break
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except OSError as exc:
                os.close(fd)
                if exc.errno not in (errno.EWOULDBLOCK, errno.EAGAIN, errno.EACCES):
                    raise
                raise OutputError(f"another run is writing into {self.out} "
                                  f"({self._other()}): wait for it to end, or choose "
                                  "another --out") from None
            try:  # the file we locked is still the one at the path (not one removed meanwhile)
                if os.stat(self.lock_path).st_ino == os.fstat(fd).st_ino:
                    break
            except FileNotFoundError:
                pass
            os.close(fd)
        os.ftruncate(fd, 0)
        os.write(fd, json.dumps(me).encode())
        self._lock = fd

    def _other(self) -> str:
        try:
            o = json.loads(self.lock_path.read_text() or "{}")
        except (OSError, ValueError):
            o = {}
        if not o:
            return "a run that is just starting"
        return (f"process {o.get('pid')} on {o.get('host')}, started {o.get('started_utc')}: "
                f"{o.get('command')}")

    def _release(self):
        if self._lock is not None:
            try:
                self.lock_path.unlink(missing_ok=True)  # while still held: see _acquire
            finally:
                os.close(self._lock)
                self._lock = None

    # ------------------------------------------------------------------ leftovers
    def _clean_leftovers(self):
        if self.aside.exists():
            if not self.out.exists():  # killed between the two renames: the old run is whole
                os.rename(self.aside, self.out)
                self.say(f"note: restored {self.out} from {self.aside.name}, left by a run "
                         "interrupted while replacing it")
            else:
                shutil.rmtree(self.aside)
                self.say(f"note: removed {self.aside}, left by an interrupted run")
        if self.path.exists():
            shutil.rmtree(self.path)
            self.say(f"note: removed {self.path}, the unfinished folder of an interrupted run")

    # ------------------------------------------------------------------ protocol
    def __enter__(self) -> "RunFolder":
        try:
            self._enter()
        except OSError as exc:
            raise OutputError(os_error_message(exc)) from exc
        return self

    def _enter(self):
        self._acquire()
        try:
            self._clean_leftovers()
            # again, under the lock: a run that ended meanwhile may have filled `out`
            self.out = check_out_dir(self.out, self.inputs, self.overwrite)
            os.mkdir(self.path)
        except BaseException:
            self._release()
            raise

    def commit(self) -> Path:
        """Rename the finished sibling into place (replacing `out` whole)."""
        if self.out.exists():
            os.rename(self.out, self.aside)
            os.rename(self.path, self.out)
            shutil.rmtree(self.aside, ignore_errors=True)
        else:
            os.rename(self.path, self.out)
        self.committed = True
        return self.out

    def __exit__(self, exc_type, exc, tb):
        try:
            if not self.committed:
                shutil.rmtree(self.path, ignore_errors=True)
        finally:
            self._release()
        return False
