"""Large responses are rendered off the event loop, in slices, to the same bytes as Starlette."""

from __future__ import annotations

import json

from fastapi.responses import JSONResponse
from taubudget.app.compute import RENDER_SLICE, render_json


def test_sliced_rendering_gives_starlettes_bytes():
    n = 3 * RENDER_SLICE + 7
    content = {
        "series": {"time_utc": [f"2027-03-01T00:00:{k % 60:02d}.000000Z" for k in range(n)],
                   "offset_ns": [(-1.0) ** k * k * 1.2345678901234567e-3 for k in range(n)]},
        "items": [{"id": k, "budget": None, "ok": k % 2 == 0, "nested": [[k, 0.5]]} for k in range(n)],
        "name": "périodique \"quoted\"", "empty": [], "caution": None,
    }
    assert render_json(content) == JSONResponse(content).body
    assert json.loads(render_json(content)) == content
