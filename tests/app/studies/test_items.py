"""One study item through the shared compute path: a study's own span and deadline limits."""

from __future__ import annotations

from support.studies import POINT_MASS_BASE
from taubudget.app.settings import Settings
from taubudget.app.studies.items import item_settings, run_item


def test_an_item_past_the_study_deadline_records_a_504_naming_the_study_setting():
    settings = item_settings(Settings(STUDY_ITEM_DEADLINE_SECONDS=1e-6))
    defaults = {**POINT_MASS_BASE, "duration_days": 30.0}
    status, problem = run_item("budget", defaults, {"orbit.semi_major_axis_km": 7000.0}, None,
                               settings.model_dump_json())
    assert status == 504 and problem["limit_name"] == "STUDY_ITEM_DEADLINE_SECONDS"
    assert "TAUBUDGET_STUDY_ITEM_DEADLINE_SECONDS" in problem["detail"]
    ok, budget = run_item("budget", defaults, {"orbit.semi_major_axis_km": 7000.0}, None,
                          item_settings(Settings()).model_dump_json())
    assert ok == 200 and budget["span_s"] == 30 * 86400.0
