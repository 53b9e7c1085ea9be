"""Write output files atomically, so an interrupted run never leaves a half-written file."""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

from protolint.errors import ProtolintError


def write_atomic(target: str | os.PathLike[str], content: str | bytes) -> None:
    """Write ``content`` to a temporary file beside ``target``, then rename it into place."""
    path = Path(target)
    data = content.encode("utf-8") if isinstance(content, str) else content
    folder = path.parent if str(path.parent) else Path(".")
    try:
        folder.mkdir(parents=True, exist_ok=True)
        handle, temporary = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=folder)
    except OSError as error:
        raise ProtolintError(f"{path}: cannot write: {error.strerror}") from None
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(data)
            stream.flush()
            os.fsync(stream.fileno())
        os.chmod(temporary, 0o644)
        os.replace(temporary, path)
    except BaseException as error:
        try:
            os.unlink(temporary)
        except OSError:
            pass
        if isinstance(error, OSError):
            raise ProtolintError(f"{path}: cannot write: {error.strerror}") from None
        raise
