"""Presenters: physics results (SI units, TT seconds since the span start) -> response data.

budget.py is the only place where seconds become ns/us/ps and TT seconds become ISO 8601 UTC
strings; the routes, ``--json``, the CLI table, CSV, the clock-error block and contact plans all
go through it. figures.py draws figures (matplotlib) from that response data, as the page does.
"""
