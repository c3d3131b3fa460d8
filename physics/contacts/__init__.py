"""Ground contacts and resynchronisation planning.

- passes: passes of a satellite over ground stations above an elevation mask.
- signal_path: light time, Sagnac correction, one-way frequency shift of a downlink.
- sync: sync policies, the time error between syncs, greedy sync planning.
"""

from .passes import GroundStation, Pass, elevation_deg, find_passes, satellite_itrs_m
from .signal_path import (
    SignalPath,
    downlink,
    one_way_fractional_shift,
    sagnac_correction_s,
    shapiro_delay_s,
    swept_area_m2,
)
from .sync import (
    POLICY_KINDS,
    SYNC_POINTS,
    ErrorModel,
    GreedyPlan,
    SyncPolicy,
    SyncSimulation,
    clock_error_model,
    contact_time_s,
    eligible_passes,
    error_under_syncs,
    greedy_syncs,
    largest_stride_meeting_budget,
    select_sync_passes,
    simulate_syncs,
    simulation_grid,
)

__all__ = [
    "ErrorModel", "GreedyPlan", "GroundStation", "POLICY_KINDS", "Pass", "SYNC_POINTS", "SignalPath",
    "SyncPolicy", "SyncSimulation", "clock_error_model", "contact_time_s", "downlink", "elevation_deg",
    "eligible_passes", "error_under_syncs", "find_passes", "greedy_syncs", "largest_stride_meeting_budget",
    "one_way_fractional_shift", "sagnac_correction_s", "satellite_itrs_m", "select_sync_passes",
    "shapiro_delay_s", "simulate_syncs", "simulation_grid", "swept_area_m2",
]
