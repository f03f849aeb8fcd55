"""Errors of the kernel side of the bridge: values the front end shows, naming what is at fault."""

from __future__ import annotations

from typing import Any


class BridgeError(Exception):
    """A request the bridge cannot serve, with a message a person understands.

    ``detail`` locates the problem (frame, column, option, the types found, …); it travels to
    the front end unchanged in the error reply, so every value in it must be plain JSON.
    """

    def __init__(self, message: str, **detail: Any) -> None:
        super().__init__(message)
        self.message = message
        self.detail = detail
