"""Output files that never lose or damage a file.

``write_atomic`` writes the whole content to a temporary file in the target's folder, then
renames it into place, so a reader sees the old file or the new one, never half of either.
Before writing it refuses a target that

- is an input of the same run (the same file by device and inode: ``-o plan.yaml`` on
  ``check plan.yaml``, or a hard link or symlink to it),
- is a folder, a device, a FIFO or a socket, or a symbolic link to one (a rename would
  replace ``/dev/null`` or a pipe with a regular file),
- is a symbolic link to nothing.

The null device (``os.devnull``, or any name or link for the same character device) is the
one device taken: CI scripts give ``-o /dev/null`` to run a command for its exit code only,
so the content is discarded and nothing is renamed over the device.

A symbolic link to a regular file is followed: the file it points to is replaced and the link
stays. The new file keeps the mode of the file it replaces; a new file gets 0666 minus the
umask, as ``>`` in a shell would.

A file with other names (hard links, ``st_nlink > 1``) is replaced like any other, and a
one-line warning on standard error says that its other names keep the previous content.
Writing in place instead would keep every name in step but give up the all-or-nothing write,
and would change files that backup snapshots and package caches share by hard link; refusing
would stop every run in such a folder. Replacing is what an editor's "save by rename" does.

The temporary file has no name while it is written where Linux allows it (``O_TMPFILE``): it
is linked under a temporary name only once complete, and renamed at once. Elsewhere it is
``<name>.protolint-<random>.part`` beside the target, removed on any error, on Ctrl-C and on
SIGTERM (``protolint.cli`` turns SIGTERM into an exception so clean-up runs). Nothing can
clean up after SIGKILL or a power cut: with ``O_TMPFILE`` nothing is left; otherwise a
``.part`` file may remain, named so that it is clearly ours.
"""

from __future__ import annotations

import errno
import os
import secrets
import stat
from collections.abc import Iterable
from pathlib import Path

from protolint.errors import ProtolintError

# ``-`` as an output means standard output (text formats; see ``commands._shared``).
STDOUT = "-"

_KINDS = (
    (stat.S_ISDIR, "a folder"),
    (stat.S_ISCHR, "a character device"),
    (stat.S_ISBLK, "a block device"),
    (stat.S_ISFIFO, "a FIFO (named pipe)"),
    (stat.S_ISSOCK, "a socket"),
)


def _kind(mode: int) -> str | None:
    for test, name in _KINDS:
        if test(mode):
            return name
    return None


def _same_file(a: os.stat_result, b: os.stat_result) -> bool:
    return (a.st_dev, a.st_ino) == (b.st_dev, b.st_ino)


def _null_device_identity() -> int | None:
    # The null device's device number, so /dev/null, a symlink to it or a second device node
    # for it are all recognised; None where os.devnull is no character device (Windows' "nul").
    try:
        info = os.stat(os.devnull)
    except OSError:
        return None
    return info.st_rdev if stat.S_ISCHR(info.st_mode) else None


def _is_null_device(info: os.stat_result) -> bool:
    if not stat.S_ISCHR(info.st_mode):
        return False
    null = _null_device_identity()
    return null is not None and info.st_rdev == null


def is_discard(target: str | os.PathLike[str]) -> bool:
    """Whether ``target`` is the null device, where output is discarded instead of written."""
    if os.fspath(target) == os.devnull:
        return True
    try:
        return _is_null_device(os.stat(target))
    except (OSError, ValueError):
        return False


def _current_inputs() -> tuple[str, ...]:
    # The command class records the run's input files in the click context (see
    # ``commands.base``); library callers outside a command pass ``inputs`` themselves.
    try:
        import click
    except ImportError:  # pragma: no cover - click is a core dependency
        return ()
    context = click.get_current_context(silent=True)
    if context is None:
        return ()
    return tuple(context.find_root().meta.get("protolint.inputs", ()))


def check_output(target: str | os.PathLike[str], inputs: Iterable[str | os.PathLike[str]] | None = None) -> Path:
    """The path to write for ``target`` (a symbolic link resolved), or a one-line error.

    The null device is returned as it is given (see :func:`is_discard`).

    Raises
    ------
    ProtolintError
        When the target is an input of the run, not a regular file (other than the null
        device), or a dangling link.
    """
    path = Path(target)
    return path if is_discard(path) else _writable_path(path, inputs)


def _writable_path(path: Path, inputs: Iterable[str | os.PathLike[str]] | None) -> Path:
    """:func:`check_output` for a target already known not to be the null device."""
    try:
        link = os.lstat(path)
    except FileNotFoundError:
        return path
    except OSError as error:
        raise ProtolintError(f"{path}: cannot write: {error.strerror}") from None
    real = path
    if stat.S_ISLNK(link.st_mode):
        try:
            info = os.stat(path)
        except FileNotFoundError:
            raise ProtolintError(f"{path}: is a symbolic link to a file that does not exist; "
                                 "refusing to write through it (give the real path)") from None
        except OSError as error:
            raise ProtolintError(f"{path}: cannot write: {error.strerror}") from None
        real = Path(os.path.realpath(path))
        kind = _kind(info.st_mode)
        if kind:
            raise ProtolintError(f"{path}: is a symbolic link to {kind}; refusing to replace it with a file")
    else:
        info = link
        kind = _kind(info.st_mode)
        if kind:
            raise ProtolintError(f"{path}: is {kind}; refusing to replace it with a file (give a file name)")
    for source in _current_inputs() if inputs is None else inputs:
        try:
            if _same_file(os.stat(source), info):
                raise ProtolintError(f"{path}: is an input of this run ({source}); refusing to overwrite it "
                                     "(write the output to another file)")
        except OSError:
            continue
    return real


def _new_mode(real: Path) -> int:
    try:
        return stat.S_IMODE(os.stat(real).st_mode)
    except OSError:
        pass
    # A new file: 0666 minus the umask. os.umask can only be read by setting it, so it is set
    # back at once (this runs once per output, on the main thread of a command).
    mask = os.umask(0o022)
    os.umask(mask)
    return 0o666 & ~mask


def _write_all(fd: int, data: bytes) -> None:
    view = memoryview(data)
    while view:
        written = os.write(fd, view)
        view = view[written:]
    os.fsync(fd)


def _part_name(folder: Path, real: Path) -> Path:
    # Beside the target (a rename stays on one file system), and named so it is clearly ours.
    return folder / f"{real.name}.protolint-{secrets.token_hex(6)}.part"


def _link_anonymous(folder: Path, real: Path, data: bytes, mode: int) -> bool:
    """Write ``data`` to an unnamed file in ``folder`` and rename it onto ``real``.

    False when the platform or file system has no ``O_TMPFILE`` (the caller then uses a
    named temporary file)."""
    flag = getattr(os, "O_TMPFILE", 0)
    if not flag or not os.path.isdir("/proc/self/fd"):
        return False
    try:
        fd = os.open(folder, flag | os.O_WRONLY, mode)
    except OSError as error:
        if error.errno in (errno.EOPNOTSUPP, errno.EISDIR, errno.EINVAL, errno.ENOENT):
            return False
        raise
    temporary = _part_name(folder, real)
    try:
        _write_all(fd, data)
        os.fchmod(fd, mode)
        os.link(f"/proc/self/fd/{fd}", temporary)
    except OSError as error:
        os.close(fd)
        if error.errno in (errno.ENOENT, errno.EPERM, errno.EXDEV):
            return False  # /proc not usable for linkat here: fall back
        raise
    try:
        os.close(fd)
        os.replace(temporary, real)
    except BaseException:
        _remove(temporary)
        raise
    return True


def _remove(path: Path) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def write_atomic(target: str | os.PathLike[str], content: str | bytes,
                 inputs: Iterable[str | os.PathLike[str]] | None = None) -> bool:
    """Write ``content`` to ``target`` through a temporary file and a rename; False when the
    target is the null device and the content was discarded (nothing written), else True.

    ``inputs`` are the files the run read (default: those the running command recorded);
    the target may not be one of them. See the module docstring for what is refused.
    """
    path = Path(target)
    if is_discard(path):
        return False
    real = _writable_path(path, inputs)
    data = content.encode("utf-8") if isinstance(content, str) else content
    folder = real.parent if str(real.parent) else Path(".")
    other_names = _other_names(real)
    try:
        folder.mkdir(parents=True, exist_ok=True)
        mode = _new_mode(real)
        if _link_anonymous(folder, real, data, mode):
            _warn_other_names(path, other_names)
            return True
        temporary = _part_name(folder, real)
        fd = os.open(temporary, os.O_WRONLY | os.O_CREAT | os.O_EXCL, 0o600)
    except OSError as error:
        raise ProtolintError(f"{path}: cannot write: {error.strerror}") from None
    try:
        try:
            _write_all(fd, data)
            os.fchmod(fd, mode)
        finally:
            os.close(fd)
        os.replace(temporary, real)
    except BaseException as error:
        # Ctrl-C and SIGTERM arrive here as exceptions too (see protolint.cli).
        _remove(temporary)
        if isinstance(error, OSError):
            raise ProtolintError(f"{path}: cannot write: {error.strerror}") from None
        raise
    _warn_other_names(path, other_names)
    return True


def _other_names(real: Path) -> int:
    """How many other names (hard links) the file about to be replaced has."""
    try:
        return max(os.stat(real).st_nlink - 1, 0)
    except OSError:
        return 0


def _warn_other_names(path: Path, others: int) -> None:
    if not others:
        return
    import click

    from protolint.errors import one_line
    from protolint.wording import plural

    them = "it keeps" if others == 1 else "they keep"
    click.echo(one_line(f"protolint: warning: {path} had {plural(others, 'other name')} (hard links); it was replaced "
                        f"by a new file, and {them} the previous content"), err=True)
