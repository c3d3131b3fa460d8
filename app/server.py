"""How ``taubudget serve`` runs uvicorn: bounded header time, keep-alive and header size.

uvicorn bounds idle keep-alive connections (``timeout_keep_alive``) and the size of a header
block (h11's ``max_incomplete_event_size``), but a connection that sends half its headers and
then waits is kept open indefinitely (a slow-headers attack holds a socket per connection).
``BoundedH11Protocol`` closes such a connection after ``HEADER_TIMEOUT_SECONDS``: the timer
runs from the connection's start (and from the end of each response on a kept-alive
connection) until a request's header block is complete. Bodies are bounded in size by the app
(``MAX_BODY_BYTES``), not in time: a reverse proxy in front must enforce a body read timeout
(deploy/SCALING.md).
"""

from __future__ import annotations

import asyncio

from uvicorn.protocols.http.h11_impl import H11Protocol

from .settings import get_settings


class BoundedH11Protocol(H11Protocol):
    """uvicorn's h11 protocol with a deadline for each request's header block."""

    def connection_made(self, transport: asyncio.Transport) -> None:  # type: ignore[override]
        self._header_timer: asyncio.TimerHandle | None = None
        super().connection_made(transport)
        self._arm_header_timer()

    def _arm_header_timer(self) -> None:
        self._disarm_header_timer()
        self._header_timer = self.loop.call_later(get_settings().HEADER_TIMEOUT_SECONDS,
                                                  self._header_timeout)

    def _disarm_header_timer(self) -> None:
        if self._header_timer is not None:
            self._header_timer.cancel()
            self._header_timer = None

    def handle_events(self) -> None:
        cycle = self.cycle
        super().handle_events()
        if self.cycle is not cycle:  # a request's headers are complete: it is the app's now
            self._disarm_header_timer()

    def on_response_complete(self) -> None:
        self._arm_header_timer()  # before a pipelined request is taken up (which disarms it)
        super().on_response_complete()
        if self.transport.is_closing():
            self._disarm_header_timer()

    def connection_lost(self, exc: Exception | None) -> None:
        self._disarm_header_timer()
        super().connection_lost(exc)

    def _header_timeout(self) -> None:
        self._header_timer = None
        if (self.cycle is None or self.cycle.response_complete) and not self.transport.is_closing():
            self.transport.close()


def uvicorn_options(settings) -> dict:
    """Keyword arguments of ``uvicorn.run`` that bound connections (see the module docstring)."""
    return {
        "http": "taubudget.app.server:BoundedH11Protocol",
        "timeout_keep_alive": settings.KEEP_ALIVE_SECONDS,
        "h11_max_incomplete_event_size": settings.MAX_HEADER_BYTES,
    }
