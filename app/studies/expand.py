"""A study's request body, and its expansion into items (a batch, or a sweep over request fields).

A sweep names request fields by dotted path (``orbit.semi_major_axis_km``, ``clock.preset``) and
gives each either a list of ``values`` or an inclusive evenly spaced range (``start``, ``stop``,
``count``). ``grid`` takes every combination (the first parameter varies slowest); ``list`` pairs
the i-th values of every parameter (equal lengths). The number of items is known before anything
is expanded, so a study is bounded in items before it is built; expansion is lazy.
"""

from __future__ import annotations

import copy
import itertools
import math
from collections.abc import Iterator
from typing import Any, Literal

from pydantic import Field, model_validator

from ..model_base import Integer, StrictModel

KINDS = ("budget", "contact_plan")
MAX_SWEEP_PARAMETERS = 8
MAX_VALUES_PER_PARAMETER = 100_000


class SweepParameter(StrictModel):
    """One swept request field: explicit ``values``, or ``start``/``stop``/``count`` (inclusive)."""

    field: str = Field(min_length=1, max_length=200,
                       pattern=r"^[A-Za-z_][A-Za-z0-9_]*(\.[A-Za-z_][A-Za-z0-9_]*)*$",
                       description="Dotted path of a request field, e.g. orbit.semi_major_axis_km")
    values: list[Any] | None = Field(None, min_length=1, max_length=MAX_VALUES_PER_PARAMETER)
    start: float | None = None
    stop: float | None = None
    count: Integer | None = Field(None, ge=1, le=MAX_VALUES_PER_PARAMETER,
                              description="Number of evenly spaced values from start to stop inclusive")

    @model_validator(mode="after")
    def _one_form(self):
        ranged = (self.start, self.stop, self.count)
        if self.values is not None and any(v is not None for v in ranged):
            raise ValueError("give either values or start/stop/count, not both")
        if self.values is None and any(v is None for v in ranged):
            raise ValueError("give values, or all of start, stop and count")
        if self.field == "id" or self.field.startswith("id."):
            raise ValueError("the item id is assigned by the study; sweep a request field")
        return self

    def length(self) -> int:
        return len(self.values) if self.values is not None else int(self.count)

    def value_list(self) -> list:
        if self.values is not None:
            return self.values
        if self.count == 1:
            return [self.start]
        step = (self.stop - self.start) / (self.count - 1)
        return [self.start + k * step if k < self.count - 1 else self.stop for k in range(self.count)]


class Sweep(StrictModel):
    mode: Literal["grid", "list"] = Field("grid", description="grid: every combination; list: i-th values")
    parameters: list[SweepParameter] = Field(min_length=1, max_length=MAX_SWEEP_PARAMETERS)

    @model_validator(mode="after")
    def _consistent(self):
        fields = [p.field for p in self.parameters]
        for a in fields:
            for b in fields:
                if a != b and b.startswith(a + "."):
                    raise ValueError(f"fields {a} and {b} overlap")
        if len(set(fields)) != len(fields):
            raise ValueError("each field may be swept once")
        if self.mode == "list" and len({p.length() for p in self.parameters}) > 1:
            raise ValueError("in list mode every parameter needs the same number of values")
        return self

    def size(self) -> int:
        lengths = [p.length() for p in self.parameters]
        return math.prod(lengths) if self.mode == "grid" else lengths[0]

    def combinations(self) -> Iterator[dict]:
        names = [p.field for p in self.parameters]
        values = [p.value_list() for p in self.parameters]
        rows = itertools.product(*values) if self.mode == "grid" else zip(*values, strict=True)
        for row in rows:
            yield dict(zip(names, row, strict=True))


class StudyRequest(StrictModel):
    """A study: budgets or contact plans, from ``items`` over ``defaults`` or a ``sweep`` of ``defaults``."""

    kind: Literal["budget", "contact_plan"] = "budget"
    name: str | None = Field(None, max_length=200, description="A label of your own")
    defaults: dict = Field(default_factory=dict,
                           description="Keys shared by every item (a batch), or the request a sweep varies")
    items: list[Any] | None = Field(None, min_length=1,
                                    description="Requests with an 'id' each, merged over defaults")
    sweep: Sweep | None = None

    @model_validator(mode="after")
    def _one_source(self):
        if (self.items is None) == (self.sweep is None):
            raise ValueError("give either items (a batch) or sweep (a sweep over the defaults)")
        return self


def set_path(body: dict, field: str, value: Any) -> None:
    """Set a dotted path in a request dict, creating the objects on the way."""
    keys = field.split(".")
    node = body
    for key in keys[:-1]:
        nxt = node.get(key)
        if not isinstance(nxt, dict):
            nxt = {}
            node[key] = nxt
        node = nxt
    node[keys[-1]] = value


def swept_request(base: dict, parameters: dict) -> dict:
    out = copy.deepcopy(base)
    for field, value in parameters.items():
        set_path(out, field, value)
    return out
