"""Handover files: the kernel writes a fetched Arrow IPC stream to a private file that the
Jupyter server's ``polyadic`` route (polyadic/_server.py) streams to the page over HTTP.

Both processes run as the same user on the same machine and find the files in one
directory, ``<jupyter runtime dir>/polyadic-handover``, created with mode 0700. A file is named
by a random token the kernel issues (32 bytes from :mod:`secrets`, URL-safe base64); the page
learns the token only from the kernel's reply on the comm and never names a path. Files are
created with mode 0600 under a temporary name and renamed when complete, so the server never
sees half a stream. The server serves a token once: it renames the file away before reading
it and deletes it after, whether the transfer finished or not. Files nobody asked for are
removed after :data:`EXPIRY_SECONDS` by whichever side looks first (every issue and every
request sweeps), and the kernel removes its own at exit.

The page falls back to the comm whenever this does not work (no server extension, a kernel
on another machine, a directory that is not private): the kernel's file then simply expires.
"""

from __future__ import annotations

import atexit
import os
import re
import secrets
import stat
import threading
import time
from pathlib import Path
from typing import Iterable

#: Seconds after which an unserved handover file is deleted.
EXPIRY_SECONDS = 300.0
#: Name of the folder under the Jupyter runtime directory.
FOLDER_NAME = "polyadic-handover"
#: Suffix of a complete handover file.
SUFFIX = ".arrows"
#: What a token looks like: 32 random bytes in URL-safe base64 without padding.
TOKEN_PATTERN = re.compile(r"^[A-Za-z0-9_-]{43}$")

_issued_lock = threading.Lock()
#: Files this process issued and has not seen removed, for the exit clean-up.
_issued: set[Path] = set()


class HandoverUnavailable(Exception):
    """The handover directory cannot be used safely; the caller falls back to the comm."""


def handover_dir(create: bool = True) -> Path:
    """The private handover directory, created (mode 0700) when missing.

    Raises HandoverUnavailable when the runtime directory is unknown, or when the folder is a
    symbolic link, is not a directory, belongs to another user or is open to group or others.
    """
    try:
        from jupyter_core.paths import jupyter_runtime_dir
    except ImportError as error:  # pragma: no cover - jupyter_core comes with ipykernel
        raise HandoverUnavailable("jupyter_core is not installed") from error
    folder = Path(jupyter_runtime_dir()) / FOLDER_NAME
    if create:
        try:
            folder.parent.mkdir(parents=True, exist_ok=True, mode=0o700)
            folder.mkdir(mode=0o700)
        except FileExistsError:
            pass
        except OSError as error:
            raise HandoverUnavailable(f"cannot create {folder}: {error}") from error
    check_private_dir(folder)
    return folder


def check_private_dir(folder: Path) -> None:
    """Refuse a folder that another user could read or write, or that is a link."""
    try:
        info = os.lstat(folder)
    except OSError as error:
        raise HandoverUnavailable(f"{folder} is missing: {error}") from error
    if not stat.S_ISDIR(info.st_mode):
        raise HandoverUnavailable(f"{folder} is not a directory (or is a link)")
    if info.st_uid != os.geteuid():
        raise HandoverUnavailable(f"{folder} belongs to another user")
    if info.st_mode & 0o077:
        raise HandoverUnavailable(f"{folder} is open to other users (mode {stat.S_IMODE(info.st_mode):o})")


def is_token(value: object) -> bool:
    """Whether ``value`` has the shape of a token this module issues."""
    return isinstance(value, str) and TOKEN_PATTERN.match(value) is not None


def new_token() -> str:
    """A fresh random token."""
    return secrets.token_urlsafe(32)


def final_path(folder: Path, token: str) -> Path:
    """Where the complete file of ``token`` lives; refuses anything that is not a token."""
    if not is_token(token):
        raise ValueError("not a handover token")
    return folder / f"{token}{SUFFIX}"


def create_private(path: Path) -> None:
    """Create an empty file at ``path`` with mode 0600; fails if anything exists there."""
    fd = os.open(path, os.O_WRONLY | os.O_CREAT | os.O_EXCL | os.O_NOFOLLOW, 0o600)
    os.close(fd)


def publish(partial: Path, token: str) -> Path:
    """Rename a completely written file to its token's name and remember it for clean-up."""
    target = final_path(partial.parent, token)
    os.rename(partial, target)
    with _issued_lock:
        _issued.add(target)
    return target


def forget(paths: Iterable[Path]) -> None:
    """Delete files (missing ones are fine) and stop tracking them."""
    for path in paths:
        try:
            os.unlink(path)
        except FileNotFoundError:
            pass
        except OSError:
            continue
        with _issued_lock:
            _issued.discard(path)


def sweep(folder: Path, now: float | None = None, expiry: float = EXPIRY_SECONDS) -> int:
    """Delete files in ``folder`` older than ``expiry`` seconds; return how many went."""
    now = time.time() if now is None else now
    removed = 0
    try:
        entries = list(os.scandir(folder))
    except OSError:
        return 0
    for entry in entries:
        try:
            info = entry.stat(follow_symlinks=False)
        except OSError:
            continue
        if now - info.st_mtime < expiry:
            continue
        try:
            os.unlink(entry.path)
            removed += 1
        except OSError:
            continue
        with _issued_lock:
            _issued.discard(Path(entry.path))
    return removed


def _remove_issued() -> None:
    with _issued_lock:
        paths = list(_issued)
    forget(paths)


atexit.register(_remove_issued)
