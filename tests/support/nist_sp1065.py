"""Published test data of NIST SP 1065 (W. J. Riley, "Handbook of Frequency Stability Analysis",
2008), shared by the physics and the HTTP stability tests; where each value was read is cited in
tests/physics/clock/test_against_nist_sp1065.py.
"""

NBS9_Y = [892, 809, 823, 798, 671, 644, 883, 903, 677]
"""The NBS 9-point fractional-frequency data set, tau0 = 1 (SP 1065 Table 30; NBS Monograph 140)."""

TABLE_30 = [
    ("adev", 91.22945, 115.8082),
    ("oadev", 91.22945, 85.95287),
    ("mdev", 91.22945, 74.78849),
    ("tdev", 52.67135, 86.35831),
    ("hdev", 70.80607, 116.7980),
    ("ohdev", 70.80607, 85.61487),
]
"""(statistic, value at tau = 1, value at tau = 2), SP 1065 Table 30 / Riley Table II."""
