"""Reading at most a limit of bytes: the one loop every input (plan, policy, SOP text, data file) goes through.

The limit is enforced while reading, never by asking the file its size first: a device, a pipe
or a growing file has no honest size, and ``/dev/zero`` must cost no more than a file at the
limit. Each caller keeps its own policy: which error it raises, and how it words the limit.
"""

from __future__ import annotations

from collections.abc import Callable

_CHUNK = 1024 * 1024


def read_at_most(read: Callable[[int], bytes], limit: int) -> bytes:
    """The bytes ``read(n)`` yields until the end, but never more than ``limit + 1`` of them.

    A result longer than ``limit`` means the input is over the limit; the caller refuses it.
    ``OSError`` from ``read`` passes through for the caller to word.
    """
    chunks: list[bytes] = []
    size = 0
    while size <= limit:
        chunk = read(min(_CHUNK, limit + 1 - size))
        if not chunk:
            break
        chunks.append(chunk)
        size += len(chunk)
    return b"".join(chunks)
