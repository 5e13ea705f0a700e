"""The sensor catalogue: IEC 60751 coefficients and classes."""

from __future__ import annotations

from synth.sensors.tables import ntc_defaults, rtd_classes, rtd_coefficients


def test_iec60751_coefficients():
    # A, B, C of the standard [IEC60751-CVD]
    k = rtd_coefficients()
    assert (k.a, k.b, k.c) == (3.9083e-3, -5.775e-7, -4.183e-12)
    assert k.valid_c == (-200.0, 850.0)
    assert k.r0_usual == (100.0, 1000.0)


def test_classes():
    # [MEM-IEC60751-classes]
    got = {name: (c.fixed_c, c.per_degree) for name, c in rtd_classes().items()}
    assert got == {"AA": (0.1, 0.0017), "A": (0.15, 0.002), "B": (0.3, 0.005),
                   "C": (0.6, 0.01)}


def test_ntc_defaults():
    assert ntc_defaults().reference_c == 25.0  # the B value's usual reference [CP-ntc-beta]
    low, high = ntc_defaults().valid_c
    assert low < 25.0 < high
