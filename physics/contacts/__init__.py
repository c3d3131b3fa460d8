"""Ground contacts and resynchronisation planning.

- passes: passes of a satellite over ground stations above an elevation mask.
- windows: a pass as a contact window [AOS, LOS] in which a sync can be made.
- policy: sync policies (per pass, or a fixed interval over the windows) and their schedules.
- signal_path: light time, Sagnac correction, one-way frequency shift of a downlink.
- sync: the time error between syncs and its simulation over the span.
- recommend: the fewest syncs inside the windows that meet a budget (greedy), pass strides.
"""

from .passes import GroundStation, Pass, elevation_deg, find_passes, satellite_itrs_m
from .policy import (
    PER_PASS_KINDS,
    POLICY_KINDS,
    SYNC_POINTS,
    SyncPolicy,
    SyncSchedule,
    contact_time_s,
    eligible_passes,
    eligible_windows,
    fixed_interval_times_s,
    schedule_syncs,
    select_sync_passes,
)
from .recommend import GreedyPlan, fixed_interval_meeting_budget, greedy_syncs, largest_stride_meeting_budget
from .signal_path import (
    SignalPath,
    downlink,
    one_way_fractional_shift,
    sagnac_correction_s,
    shapiro_delay_s,
    swept_area_m2,
)
from .sync import (
    ErrorModel,
    SyncSimulation,
    clock_error_model,
    error_under_syncs,
    run_envelope_s,
    simulate_syncs,
    simulation_grid,
)
from .windows import ContactWindows

__all__ = [
    "ContactWindows", "ErrorModel", "GreedyPlan", "GroundStation", "PER_PASS_KINDS", "POLICY_KINDS", "Pass",
    "SYNC_POINTS", "SignalPath", "SyncPolicy", "SyncSchedule", "SyncSimulation", "clock_error_model",
    "contact_time_s", "downlink", "elevation_deg", "eligible_passes", "eligible_windows", "error_under_syncs",
    "find_passes", "fixed_interval_meeting_budget", "fixed_interval_times_s", "greedy_syncs",
    "largest_stride_meeting_budget", "one_way_fractional_shift", "run_envelope_s", "sagnac_correction_s",
    "satellite_itrs_m", "schedule_syncs", "select_sync_passes", "shapiro_delay_s", "simulate_syncs",
    "simulation_grid", "swept_area_m2",
]
