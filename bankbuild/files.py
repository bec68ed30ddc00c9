"""Writing a set of files into a folder all or nothing, one run at a time.

A run's files (the documents of ``size``, the three of ``rerate``, the tables of ``catalog copy``) are a set:
a reader of the folder must see the previous set whole or the new set whole, never a mix, and never a file cut
short by a full disk or an interrupted run. :class:`FileSet` does that:

1. the folder is locked for the run (``.bankbuild.lock``, holding the holder's pid; a second run waits
   :data:`LOCK_WAIT_S`, then names the holder);
2. every file is written into a temporary folder inside the target folder (so the final renames never cross a
   filesystem) and flushed to the disk (``fsync``);
3. only when every file is there are they renamed into place, one after the other with SIGINT, SIGTERM and
   SIGHUP held back (a signal that arrives meanwhile takes effect once the set is whole), and files of the
   set's family (every name such a set may hold) that the new set does not hold are removed, so that nothing of
   a previous run's set survives beside the new one;
4. whatever happens, the temporary folder and the lock file are removed, and a folder this run created is
   removed again when nothing was committed to it.

A crash of the machine during step 3 (microseconds) can leave a mix; nothing else can. Errors are
:class:`bankbuild.errors.OptionError` naming the folder and the caller's ``field`` (the parameter that gave the
folder), one line each. This module is a leaf: every room may use it, it uses none.
"""

from __future__ import annotations

import os
import re
import shutil
import signal
import tempfile
import time
from pathlib import Path

from bankbuild.errors import OptionError

LOCK_NAME = ".bankbuild.lock"
PATH_MAX = 4096  # Linux's limit on a path, in bytes with the final NUL
LOCK_WAIT_S = 3.0  # how long a second run waits for the first before it gives up and names it
_POLL_S = 0.05
_SIGNALS = tuple(getattr(signal, n) for n in ("SIGINT", "SIGTERM", "SIGHUP") if hasattr(signal, n))
_SAFE_NAME = re.compile(r"[A-Za-z0-9][A-Za-z0-9._+-]{0,200}")


def _problem(exc: OSError) -> str:
    return exc.strerror or str(exc)


def check_folder(folder: str | Path, field: str, names: tuple[str, ...] = ()) -> None:
    """Refuse, before any work is done, a folder the set could not be written into.

    Parameters
    ----------
    folder : Path
        Where the set goes; created (with its parents) when missing.
    field : str
        The parameter that named the folder, for the error message.
    names : tuple of str
        File names the set will hold: one already taken by a folder is refused here.

    Raises
    ------
    OptionError
        An empty path, an existing file, a name or path too long for the system, a folder (or the nearest
        existing parent of a missing one) that cannot be written, or a document name taken by a folder.
    """
    where = str(folder)
    if where == "":
        raise OptionError(where, field, "an empty path; give a folder name (. for the current folder)")
    folder = Path(folder)
    if len(os.fsencode(os.path.abspath(folder))) >= PATH_MAX:
        raise OptionError(where, field, f"a path of {len(os.fsencode(os.path.abspath(folder))):,} bytes; the "
                                        f"system allows at most {PATH_MAX - 1:,}")
    try:
        name_max = os.pathconf(_nearest_existing(folder), "PC_NAME_MAX")
    except (OSError, ValueError):
        name_max = 255
    for part in folder.parts:
        if len(os.fsencode(part)) > name_max:
            raise OptionError(where, field, f"a folder name of {len(os.fsencode(part))} bytes; this filesystem "
                                            f"allows at most {name_max}")
    if folder.is_symlink() and not folder.exists():
        raise OptionError(where, field, "a link to a folder that is not there (or a loop of links)")
    if folder.exists():
        if not folder.is_dir():
            raise OptionError(where, field, "is a file, not a folder; give a folder for the documents")
        _writable(folder, where, field)
        for name in names:
            target = folder / name
            if target.is_dir() and not target.is_symlink():
                raise OptionError(str(target), field, "a folder has the name of a document; move it away")
        return
    parent = _nearest_existing(folder)
    if not parent.is_dir():
        raise OptionError(where, field, f"cannot create the folder: {parent} is a file")
    _writable(parent, where, field, f"cannot create the folder in {parent}")


def _nearest_existing(folder: Path) -> Path:
    path = Path(os.path.abspath(folder))
    while not path.exists() and path != path.parent:
        path = path.parent
    return path


def _writable(folder: Path, where: str, field: str, what: str = "cannot write into the folder") -> None:
    if not os.access(folder, os.W_OK | os.X_OK):
        import errno

        # access() answers EROFS for a read-only filesystem and EACCES for missing permission
        code = errno.EROFS if _read_only(folder) else errno.EACCES
        raise OptionError(where, field, f"{what} ({os.strerror(code)})")


def _read_only(folder: Path) -> bool:
    try:
        return bool(os.statvfs(folder).f_flag & os.ST_RDONLY)
    except OSError:
        return False


class FileSet:
    """A set of files written into ``folder`` all or nothing, under the folder's lock. Use it as a context.

    ``family`` holds every name a set of this kind may hold (``family_pattern``, a regular expression, the
    names of a numbered kind): those the new set does not hold are removed when it is committed (none by
    default: files a user edits, such as rating tables, are never removed). With ``replace`` false an existing
    file of the same name refuses the whole set.

    >>> import tempfile
    >>> with tempfile.TemporaryDirectory() as tmp:
    ...     with FileSet(Path(tmp) / "out", "out_dir") as files:
    ...         files.add("a.txt", b"first")
    ...         written = files.commit()
    ...     sorted(p.name for p in (Path(tmp) / "out").iterdir())
    ['a.txt']
    """

    def __init__(self, folder: Path, field: str, family: tuple[str, ...] = (), replace: bool = True,
                 wait_s: float = LOCK_WAIT_S, family_pattern: str | None = None) -> None:
        self.folder = Path(folder)
        self.field = field
        self.family = family
        self.family_pattern = re.compile(family_pattern) if family_pattern else None
        self.replace = replace
        self.wait_s = wait_s
        self.names: list[str] = []
        self.created: list[Path] = []
        self.staging: Path | None = None
        self.lock_fd: int | None = None
        self.committed = False

    # -- the run's hold on the folder ------------------------------------------------------------------------

    def __enter__(self) -> FileSet:
        check_folder(self.folder, self.field)
        try:
            self._lock()
            self.staging = Path(tempfile.mkdtemp(prefix=".bankbuild-new-", dir=self.folder))
        except BaseException:
            self._release()
            raise
        return self

    def __exit__(self, *exc) -> None:
        self._release()

    def _error(self, problem: str, where: Path | None = None) -> OptionError:
        return OptionError(str(where or self.folder), self.field, problem)

    def _make_folder(self) -> None:
        missing = []
        path = self.folder
        while not path.exists() and not path.is_symlink() and path != path.parent:
            missing.append(path)
            path = path.parent
        for path in reversed(missing):
            try:
                path.mkdir()
                self.created.append(path)
            except FileExistsError:
                pass
            except OSError as exc:
                raise self._error(f"cannot create the folder ({_problem(exc)})") from None
        if not self.folder.is_dir():
            raise self._error("is not a folder")

    def _lock(self) -> None:
        """Take the folder's lock: ``flock`` on ``.bankbuild.lock`` (released by the system when this process and
        the workers it forked end, however they end), taken anew if the run that held it removed the file."""
        import fcntl

        deadline = time.monotonic() + self.wait_s
        path = self.folder / LOCK_NAME
        while True:
            self._make_folder()
            try:
                fd = os.open(path, os.O_RDWR | os.O_CREAT | os.O_NOFOLLOW | os.O_CLOEXEC, 0o644)
            except FileNotFoundError:
                if time.monotonic() >= deadline:
                    raise self._error("the folder keeps disappearing; is another program removing it?") from None
                continue  # the folder went away between the two calls (another run tidied up): make it again
            except OSError as exc:
                raise self._error(f"cannot write into the folder ({_problem(exc)})") from None
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except OSError:
                holder = _read_holder(fd)
                os.close(fd)
                if time.monotonic() >= deadline:
                    raise self._error(f"another bankbuild run is writing into this folder ({holder}); waited "
                                      f"{self.wait_s:g} s; run again when it has finished") from None
                time.sleep(_POLL_S)
                continue
            try:
                same = os.fstat(fd).st_ino == os.stat(path, follow_symlinks=False).st_ino
            except OSError:
                same = False
            if not same:  # the file was removed (and perhaps made again) by the run that held it: take it anew
                os.close(fd)
                continue
            self.lock_fd = fd
            for left in self.folder.glob(".bankbuild-new-*"):  # of a run that was killed outright: no one's now
                if left.is_dir() and not left.is_symlink():
                    shutil.rmtree(left, ignore_errors=True)
            stamp = time.strftime("%Y-%m-%d %H:%M:%S UTC", time.gmtime())
            try:
                os.ftruncate(fd, 0)
                os.write(fd, f"pid {os.getpid()}, started {stamp}\n".encode("ascii"))
            except OSError as exc:
                raise self._error(f"cannot write into the folder ({_problem(exc)})") from None
            return

    def _release(self) -> None:
        """Remove the temporary folder, the lock file, and the folders this run made if nothing went in."""
        if self.staging is not None:
            shutil.rmtree(self.staging, ignore_errors=True)
            self.staging = None
        if self.lock_fd is not None:
            try:
                os.unlink(self.folder / LOCK_NAME)
            except OSError:
                pass
            os.close(self.lock_fd)  # closing releases the lock
            self.lock_fd = None
        if not self.committed:
            for path in reversed(self.created):
                try:
                    path.rmdir()  # only when empty: another run may have put its files in meanwhile
                except OSError:
                    break
        self.created = []

    # -- the files -------------------------------------------------------------------------------------------

    def add(self, name: str, data: bytes) -> None:
        """Write one file of the set into the temporary folder and flush it to the disk."""
        if not _SAFE_NAME.fullmatch(name) or name.startswith(".bankbuild"):
            raise ValueError(f"not a plain file name: {name!r}")
        if name in self.names:
            raise ValueError(f"{name} is already in the set")
        assert self.staging is not None, "add() outside the with block"
        path = self.staging / name
        try:
            fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | os.O_CLOEXEC, 0o666)  # mode: less umask
            with os.fdopen(fd, "wb") as handle:
                handle.write(data)
                handle.flush()
                os.fsync(handle.fileno())
        except OSError as exc:
            raise self._error(f"cannot write {name} ({_problem(exc)}); nothing was changed") from None
        self.names.append(name)

    def commit(self) -> list[Path]:
        """Move every file into place together; remove the previous set's files the new one does not hold.

        Returns
        -------
        list of Path
            The files of the set in the order they were added.
        """
        assert self.staging is not None, "commit() outside the with block"
        for name in self.names:
            target = self.folder / name
            if target.is_dir() and not target.is_symlink():
                raise self._error("a folder has the name of a document; move it away; nothing was changed", target)
            if not self.replace and os.path.lexists(target):
                raise self._error("already exists; not overwritten; nothing was changed", target)
        _fsync_dir(self.staging)
        blocked = _block_signals()
        try:
            for name in self.names:
                os.replace(self.staging / name, self.folder / name)
            for name in self._family_present():
                stale = self.folder / name
                if name not in self.names and _SAFE_NAME.fullmatch(name) and (stale.is_symlink() or stale.is_file()):
                    stale.unlink(missing_ok=True)
            _fsync_dir(self.folder)
            self.committed = True
        except OSError as exc:
            raise self._error(f"cannot move the files into place ({_problem(exc)})") from None
        finally:
            _unblock_signals(blocked)
        return [self.folder / name for name in self.names]


    def _family_present(self) -> list[str]:
        """The names of the set's family: the fixed ones, and those in the folder that match the pattern."""
        names = list(self.family)
        if self.family_pattern is not None:
            try:
                names += [e.name for e in os.scandir(self.folder) if self.family_pattern.fullmatch(e.name)]
            except OSError:
                pass
        return names


def _read_holder(fd: int) -> str:
    try:
        os.lseek(fd, 0, os.SEEK_SET)
        text = os.read(fd, 200).decode("ascii", errors="replace").strip()
    except OSError:
        text = ""
    return text if re.fullmatch(r"pid \d+, started [0-9: -]+UTC", text) else "its pid not yet written"


def _fsync_dir(folder: Path) -> None:
    try:
        fd = os.open(folder, os.O_RDONLY | os.O_DIRECTORY)
    except OSError:
        return
    try:
        os.fsync(fd)
    except OSError:
        pass  # some filesystems cannot sync a folder; the files themselves are synced
    finally:
        os.close(fd)


def _block_signals():
    if not hasattr(signal, "pthread_sigmask"):
        return None
    try:
        return signal.pthread_sigmask(signal.SIG_BLOCK, _SIGNALS)
    except (OSError, ValueError):
        return None


def _unblock_signals(previous) -> None:
    if previous is not None:
        signal.pthread_sigmask(signal.SIG_SETMASK, previous)


def write_atomic(path: Path, data: bytes, field: str = "") -> Path:
    """Write one file whole or not at all: a temporary file beside it, flushed to the disk, then renamed."""
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as handle:
            handle.write(data)
            handle.flush()
            os.fsync(handle.fileno())
        # mkstemp makes the file private (0600); a document is for sharing, so give it the mode a plain
        # open() would: 0666 less the process umask.
        os.chmod(tmp, 0o666 & ~_umask())
        blocked = _block_signals()
        try:
            os.replace(tmp, path)
        finally:
            _unblock_signals(blocked)
    except OSError as exc:
        raise OptionError(str(path), field, f"cannot write ({_problem(exc)})") from None
    finally:
        Path(tmp).unlink(missing_ok=True)
    return path


def _umask() -> int:
    """The process umask (read by setting it and putting it straight back)."""
    mask = os.umask(0o022)
    os.umask(mask)
    return mask
