"""A local HTTP server that records every request it gets, for the rendering lock-down tests.

A hostile plan points at this server; a render that fetched anything from the plan would show
up as a recorded request. Each server has its own list, so one test's server cannot see (or
clear) another's requests.
"""

from __future__ import annotations

import http.server
import threading
from collections.abc import Iterator
from contextlib import contextmanager
from dataclasses import dataclass, field


@dataclass
class LeakServer:
    """The server's base URL (``http://127.0.0.1:<port>``) and the paths it was asked for."""

    url: str
    requests: list[str] = field(default_factory=list)


def _handler(requests: list[str]) -> type[http.server.BaseHTTPRequestHandler]:
    class Recorder(http.server.BaseHTTPRequestHandler):
        def do_GET(self) -> None:  # noqa: N802 - http.server's name
            requests.append(self.path)
            self.send_response(200)
            self.send_header("Content-Type", "image/png")
            self.end_headers()

        def log_message(self, *args) -> None:  # keep test output quiet
            pass

    return Recorder


@contextmanager
def leak_server() -> Iterator[LeakServer]:
    """Run a recording server on a free local port for the duration of the block."""
    requests: list[str] = []
    server = http.server.ThreadingHTTPServer(("127.0.0.1", 0), _handler(requests))
    thread = threading.Thread(target=server.serve_forever, daemon=True)
    thread.start()
    try:
        yield LeakServer(f"http://127.0.0.1:{server.server_address[1]}", requests)
    finally:
        server.shutdown()
        server.server_close()
        thread.join(timeout=5)
