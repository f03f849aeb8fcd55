"""Jupyter server extension: the route that streams a kernel's handover file to the page.

``GET <base_url>polyadic/handover`` answers ``{"version": 1, "available": bool}`` so the page
knows whether to ask the kernel for a file; ``GET <base_url>polyadic/handover/<token>``
streams the Arrow IPC file the kernel wrote under that token (polyadic/_handover.py) and
deletes it. Both need an authenticated user (``@tornado.web.authenticated``, as every Jupyter
API). The route takes nothing but a token: a value that is not shaped like one is refused
before any file is looked at, and a token is served once, since the file is renamed away
before it is read and removed whatever happens to the transfer.

Enabled by ``jupyter-config/server-config/polyadic.json``, which ``pip install`` puts in
``etc/jupyter/jupyter_server_config.d`` (pyproject.toml's shared-data).
"""

from __future__ import annotations

import json
import os
import secrets
from pathlib import Path
from typing import Any

import tornado.iostream
import tornado.web
from jupyter_server.base.handlers import APIHandler
from jupyter_server.utils import url_path_join

from ._handover import HandoverUnavailable, final_path, handover_dir, is_token, sweep

#: Version of the route's replies; the page checks it.
ROUTE_VERSION = 1
#: Bytes read from the file and written to the response at a time.
READ_BYTES = 4 * 1024 * 1024
#: IANA media type of an Arrow IPC stream.
ARROW_STREAM_TYPE = "application/vnd.apache.arrow.stream"


class HandoverHandler(APIHandler):
    """Serves handover files by token, once each."""

    def initialize(self, folder: Path | None = None) -> None:
        self._folder = folder

    def _handover_folder(self) -> Path:
        return self._folder if self._folder is not None else handover_dir()

    @tornado.web.authenticated
    async def get(self, token: str = "") -> None:
        if token == "":
            try:
                sweep(self._handover_folder())
                available = True
            except HandoverUnavailable:
                available = False
            self.set_header("Cache-Control", "no-store")
            self.finish(json.dumps({"version": ROUTE_VERSION, "available": available}))
            return
        if not is_token(token):
            raise tornado.web.HTTPError(400, "not a handover token")
        try:
            folder = self._handover_folder()
        except HandoverUnavailable as error:
            raise tornado.web.HTTPError(404, "no handover folder") from error
        sweep(folder)
        source = final_path(folder, token)
        # Claim the file: a second request for the same token finds nothing to rename.
        claimed = folder / f".{token}.{secrets.token_hex(8)}.serving"
        try:
            os.rename(source, claimed)
        except FileNotFoundError as error:
            raise tornado.web.HTTPError(404, "no such handover (served already, expired or never issued)") from error
        try:
            fd = os.open(claimed, os.O_RDONLY | os.O_NOFOLLOW)
        except OSError as error:
            _unlink(claimed)
            raise tornado.web.HTTPError(404, "the handover file cannot be opened") from error
        # Unlinked at once: the open descriptor keeps the bytes until it is closed.
        _unlink(claimed)
        with os.fdopen(fd, "rb", buffering=0) as stream:
            size = os.fstat(stream.fileno()).st_size
            self.set_header("Content-Type", ARROW_STREAM_TYPE)
            self.set_header("Content-Length", str(size))
            self.set_header("Cache-Control", "no-store")
            while True:
                chunk = stream.read(READ_BYTES)
                if not chunk:
                    break
                self.write(chunk)
                try:
                    await self.flush()
                except tornado.iostream.StreamClosedError:
                    return
        self.finish()

    def write_error(self, status_code: int, **kwargs: Any) -> None:
        # A short JSON reply (APIHandler's own would include a traceback in debug mode).
        self.set_header("Content-Type", "application/json")
        self.finish(json.dumps({"message": self._reason, "status": status_code}))


def _unlink(path: Path) -> None:
    try:
        os.unlink(path)
    except OSError:
        pass


def handlers(base_url: str, folder: Path | None = None) -> list[tuple[str, Any, dict[str, Any]]]:
    """The route's URL patterns under ``base_url``."""
    pattern = url_path_join(base_url, "polyadic", "handover")
    options = {"folder": folder}
    return [
        (pattern, HandoverHandler, options),
        (pattern + r"/([^/]+)", HandoverHandler, options),
    ]


def load(server_app: Any) -> None:
    """Add the route to a running Jupyter server."""
    web_app = server_app.web_app
    web_app.add_handlers(".*$", handlers(web_app.settings["base_url"]))
    server_app.log.info("polyadic: handover route at %s", url_path_join(web_app.settings["base_url"], "polyadic/handover"))


#: The name jupyter_server calls when it loads this module as an extension.
_load_jupyter_server_extension = load
