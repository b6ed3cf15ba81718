"""Safe writing: files replaced atomically, result folders replaced as one unit.

Two tools, used by every writer of thermonet (model files, provenance, study parts and
``thermonet run``):

:func:`write_file_atomic`
    Write a file through a uniquely named temporary file in the same folder, flush it to
    disk (``fsync``), give it the permissions a new file gets under the process's umask and
    rename it over the target, then ``fsync`` the folder. After a crash or power loss the
    target is either the old file or the new one, never a mixture or an empty file.
:class:`OutputFolder`
    Write a whole set of result files into a staging folder beside the target and swap it
    in at the end (an atomic exchange of the two folders where the system offers one).
    A lock file beside the target keeps two runs out of one folder; a folder that
    thermonet did not write (no ``provenance.json`` of ours) is refused unless the caller
    asks to overwrite it; an overwrite replaces the whole previous set, every format.

Notes
-----
On Linux the swap uses ``renameat2(RENAME_EXCHANGE)``, so at every instant the target
path holds either the complete old set or the complete new one. Elsewhere the old folder
is first renamed aside and the new one renamed in; a crash between those two renames
leaves the old set in ``.<name>.old-*`` beside the target, and the next run into the same
folder puts it back before it starts (:meth:`OutputFolder.recover`).
"""

from __future__ import annotations

import ctypes
import ctypes.util
import datetime as _dt
import json
import os
import shutil
import socket
import sys
import tempfile
from pathlib import Path

from thermonet.errors import OutputFolderError

__all__ = [
    "PROVENANCE_RECORD",
    "OutputFolder",
    "current_umask",
    "fsync_folder",
    "is_thermonet_folder",
    "lock_path",
    "pid_alive",
    "sync_file",
    "write_file_atomic",
]

#: Value of the ``"record"`` key that marks a provenance file written by thermonet.
PROVENANCE_RECORD = "thermonet-provenance"

#: Name of the provenance file inside a result folder (also in thermonet.io.provenance).
_PROVENANCE = "provenance.json"

#: Flag of ``renameat2`` that swaps two paths atomically (linux/fs.h).
_RENAME_EXCHANGE = 2
_AT_FDCWD = -100


def current_umask() -> int:
    """The process's file-mode creation mask (read without changing it where possible)."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    mask = os.umask(0o022)  # no other way to read it; set it straight back
    os.umask(mask)
    return mask


def fsync_folder(folder) -> None:
    """Flush a folder's entries (renames, new files) to disk; a no-op where unsupported.

    Parameters
    ----------
    folder : str or path-like
        The folder to flush.
    """
    try:
        fd = os.open(folder, os.O_RDONLY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass
    finally:
        os.close(fd)


def write_file_atomic(path, writer, *, mode: int | None = None) -> Path:
    """Write a file atomically: unique temporary file, ``fsync``, rename over the target.

    Parameters
    ----------
    path : str or os.PathLike
        Target file; replaced if it exists.
    writer : callable or str or bytes
        ``writer(tmp_path)`` writes the content to the temporary path it is given; a str is
        written as UTF-8 text, bytes as they are.
    mode : int, optional
        Permission bits of the new file; default ``0o666`` less the process's umask (what
        ``open()`` would give a new file), so a replaced file is not left owner-only.

    Returns
    -------
    pathlib.Path
        The target.

    Raises
    ------
    OSError
        If the file cannot be written (the temporary file is removed and the old target, if
        any, is left untouched).
    """
    path = Path(path)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        if isinstance(writer, (str, bytes)):
            data = writer.encode("utf-8") if isinstance(writer, str) else writer
            with os.fdopen(fd, "wb") as fh:
                fh.write(data)
                fh.flush()
                os.fsync(fh.fileno())
        else:
            os.close(fd)
            writer(tmp)
            sync_file(tmp)
        os.chmod(tmp, (0o666 & ~current_umask()) if mode is None else mode)
        os.replace(tmp, path)
    except BaseException:
        with _quiet():
            os.unlink(tmp)
        raise
    fsync_folder(path.parent)
    return path


def sync_file(path) -> None:
    """``fsync`` one file by path.

    Parameters
    ----------
    path : str or path-like
        An existing file.

    Raises
    ------
    OSError
        The file cannot be opened or flushed.
    """
    fd = os.open(path, os.O_RDONLY)
    try:
        os.fsync(fd)
    finally:
        os.close(fd)


class _quiet:
    """Context manager that swallows OSError (best-effort clean-up)."""

    def __enter__(self):
        return self

    def __exit__(self, kind, exc, tb):
        return kind is not None and issubclass(kind, OSError)


def is_thermonet_folder(folder) -> bool:
    """Whether ``folder`` holds a ``provenance.json`` written by thermonet.

    Parameters
    ----------
    folder : str or path-like
        The folder to look in (it need not exist).
    """
    p = Path(folder) / _PROVENANCE
    try:
        rec = json.loads(p.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, ValueError):
        return False
    return isinstance(rec, dict) and rec.get("record") == PROVENANCE_RECORD


def lock_path(target) -> Path:
    """The lock file of a result folder: ``.<name>.lock`` beside it.

    Parameters
    ----------
    target : str or path-like
        The result folder.

    Returns
    -------
    pathlib.Path
    """
    target = Path(target)
    return target.parent / f".{target.name}.lock"


def pid_alive(pid: int) -> bool:
    """Whether a process of this id runs on this machine (zombies count as running).

    Parameters
    ----------
    pid : int
        Process id (≤ 0: never running).
    """
    if pid <= 0:
        return False
    try:
        os.kill(pid, 0)
    except ProcessLookupError:
        return False
    except PermissionError:  # exists, owned by someone else
        return True
    except OSError:
        return False
    return True


def _exchange(a: Path, b: Path) -> bool:
    """Swap two paths atomically (Linux ``renameat2``); False if the system cannot."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(ctypes.util.find_library("c") or "libc.so.6", use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):
        return False
    fn.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint]
    rc = fn(_AT_FDCWD, os.fsencode(a), _AT_FDCWD, os.fsencode(b), _RENAME_EXCHANGE)
    if rc == 0:
        return True
    err = ctypes.get_errno()
    if err in (22, 38, 95):  # EINVAL, ENOSYS, EOPNOTSUPP: file system cannot exchange
        return False
    raise OSError(err, f"cannot swap {a} and {b}: {os.strerror(err)}")


class OutputFolder:
    """A result folder written as one unit (staging folder, lock, atomic swap).

    Parameters
    ----------
    target : str or os.PathLike
        The result folder.
    overwrite : bool, default False
        Replace a folder that holds files already. Without it, a non-empty folder is
        refused, whether it holds an earlier run's results or files thermonet did not
        write.
    what : str, default "--out"
        How the folder is named in error messages (the option or argument that gave it).
    owned : collection of str, optional
        Names of the files the writer puts in the folder. With ``overwrite``, a folder that
        holds anything else (another file, a sub-folder) is still refused: an overwrite
        replaces the folder as a whole, so it must not take a user's other files with it.
        None: no such check.

    Examples
    --------
    >>> with OutputFolder("results", overwrite=True) as folder:   # doctest: +SKIP
    ...     (folder.staging / "summary.csv").write_text("...")
    ...     folder.commit()
    """

    def __init__(self, target, *, overwrite: bool = False, what: str = "--out",
                 owned=None):
        self.target = Path(target)
        self.owned = None if owned is None else frozenset(owned)
        self.overwrite = bool(overwrite)
        self.what = what
        self.lock = lock_path(self.target)
        self.staging: Path | None = None
        self.committed = False
        self._locked = False

    # ------------------------------------------------------------------ checks
    def check(self) -> None:
        """Refuse a target that is a file, or a non-empty folder without ``overwrite``.

        Raises
        ------
        OutputFolderError
        """
        t = self.target
        if t.exists() and not t.is_dir():
            raise OutputFolderError(f"{self.what} {t} exists and is not a folder; give a "
                                    "folder path")
        if not t.is_dir():
            return
        try:
            entries = [p.name for p in t.iterdir()]
        except OSError as exc:
            raise OutputFolderError(f"{self.what} {t} cannot be listed ({exc})") from exc
        if not entries:
            return
        if self.overwrite:
            other = sorted(p.name for p in t.iterdir()
                           if self.owned is not None and (p.name not in self.owned
                                                          or not p.is_file()))
            if other:
                shown = ", ".join(other[:5]) + (" …" if len(other) > 5 else "")
                raise OutputFolderError(
                    f"{self.what} {t} holds {len(other)} entr{'y' if len(other) == 1 else 'ies'}"
                    f" thermonet never writes there ({shown}); --overwrite replaces the folder "
                    "as a whole and would delete them: move them away or choose a folder of "
                    "its own for the results")
            return
        if is_thermonet_folder(t):
            raise OutputFolderError(
                f"{self.what} {t} holds the results of an earlier run ({_PROVENANCE}); "
                "choose another folder or pass --overwrite to replace them all")
        shown = ", ".join(sorted(entries)[:5]) + (" …" if len(entries) > 5 else "")
        raise OutputFolderError(
            f"{self.what} {t} holds files thermonet did not write ({shown}) and no "
            f"{_PROVENANCE} of a thermonet run; choose an empty or new folder, or pass "
            "--overwrite to replace them with this run's results")

    # ------------------------------------------------------------------ lock
    def acquire(self) -> None:
        """Take the lock file; recover what a killed earlier run left behind.

        Raises
        ------
        OutputFolderError
            If another live process holds the lock (its pid, host and start time are named).
        """
        self.target.parent.mkdir(parents=True, exist_ok=True)
        info = {"pid": os.getpid(), "host": socket.gethostname(),
                "started_utc": _dt.datetime.now(_dt.timezone.utc).isoformat(
                    timespec="seconds")}
        for _ in range(3):
            try:
                fd = os.open(self.lock, os.O_CREAT | os.O_EXCL | os.O_WRONLY, 0o644)
            except FileExistsError:
                other = self._read_lock()
                if self._holder_alive(other):
                    raise OutputFolderError(
                        f"{self.what} {self.target} is being written by another thermonet "
                        f"process (pid {other.get('pid')} on {other.get('host')}, started "
                        f"{other.get('started_utc')}, lock file {self.lock}); wait for it "
                        "to finish or choose another folder (delete the lock file only if "
                        "that process is gone)") from None
                with _quiet():
                    os.unlink(self.lock)  # stale: its process is gone
                continue
            with os.fdopen(fd, "w", encoding="utf-8") as fh:
                json.dump(info, fh)
            self._locked = True
            self.recover()
            return
        raise OutputFolderError(f"{self.what} {self.target}: cannot take the lock file "
                                f"{self.lock}; remove it if no thermonet run is writing there")

    def _read_lock(self) -> dict:
        try:
            data = json.loads(self.lock.read_text(encoding="utf-8"))
            return data if isinstance(data, dict) else {}
        except (OSError, UnicodeDecodeError, ValueError):
            return {}

    @staticmethod
    def _holder_alive(other: dict) -> bool:
        pid = other.get("pid")
        if not isinstance(pid, int):
            return True  # being written right now, or not ours: do not break it
        if other.get("host") not in (None, socket.gethostname()):
            return True  # another machine: cannot tell, assume alive
        return pid_alive(pid)

    def recover(self) -> None:
        """Remove staging folders of killed runs; restore a set left aside mid-swap."""
        parent, name = self.target.parent, self.target.name
        for p in parent.glob(f".{name}.staging-*"):
            shutil.rmtree(p, ignore_errors=True)
        olds = sorted(parent.glob(f".{name}.old-*"))
        if olds and not self.target.exists():
            os.replace(olds.pop(), self.target)
        for p in olds:
            shutil.rmtree(p, ignore_errors=True)

    def release(self) -> None:
        """Remove the staging folder (unless committed) and the lock file."""
        if self.staging is not None and not self.committed:
            shutil.rmtree(self.staging, ignore_errors=True)
        if self._locked:
            with _quiet():
                os.unlink(self.lock)
            self._locked = False

    # ------------------------------------------------------------------ staging
    def start(self) -> Path:
        """Create the staging folder beside the target (permissions from the umask)."""
        self.staging = Path(tempfile.mkdtemp(prefix=f".{self.target.name}.staging-",
                                             dir=self.target.parent))
        os.chmod(self.staging, 0o777 & ~current_umask())
        return self.staging

    def commit(self) -> Path:
        """Flush the staged files to disk and swap the staging folder in for the target.

        Returns
        -------
        pathlib.Path
            The target, now holding exactly the staged files.
        """
        if self.staging is None:
            raise RuntimeError("OutputFolder.commit() before start()")
        for p in self.staging.iterdir():
            if p.is_file():
                sync_file(p)
        fsync_folder(self.staging)
        t = self.target
        if not t.exists():
            os.rename(self.staging, t)
        elif _exchange(self.staging, t):
            shutil.rmtree(self.staging, ignore_errors=True)  # now holds the old set
        else:
            aside = Path(tempfile.mkdtemp(prefix=f".{t.name}.old-", dir=t.parent))
            os.rmdir(aside)
            os.rename(t, aside)
            os.rename(self.staging, t)
            shutil.rmtree(aside, ignore_errors=True)
        self.committed = True
        fsync_folder(t.parent)
        return t

    # ------------------------------------------------------------------ context
    def __enter__(self) -> OutputFolder:
        self.check()
        self.acquire()
        try:
            self.check()  # again under the lock: another run may have finished meanwhile
            self.start()
        except BaseException:
            self.release()
            raise
        return self

    def __exit__(self, kind, exc, tb) -> None:
        self.release()
