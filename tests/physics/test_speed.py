import numpy as np
import pytest

from slipwise.physics import speed


def test_synchronous_speed_definition():
    # 120 f / p: common practice (IEC 60034-1 definition of synchronous speed)
    assert speed.synchronous_speed_rpm(50.0, 4) == pytest.approx(1500.0)
    assert speed.synchronous_speed_rpm(60.0, 4) == pytest.approx(1800.0)
    assert speed.synchronous_speed_rpm(60.0, 2) == pytest.approx(3600.0)
    # drive output at 35 Hz, 6 poles
    assert speed.synchronous_speed_rpm(35.0, 6) == pytest.approx(700.0)


@pytest.mark.parametrize("rated_rpm, hz, poles", [
    (1750, 60, 4),   # US DOE fact sheet example: 1800 rpm synchronous, 1750 full load
    (2950, 50, 2), (1460, 50, 4), (975, 50, 6), (730, 50, 8), (3560, 60, 2), (1185, 60, 6),
    (590, 50, 10), (245, 50, 24),
])
def test_infer_poles(rated_rpm, hz, poles):
    assert speed.infer_poles(rated_rpm, hz) == poles


def test_infer_poles_speed_at_synchronous_is_not_that_pole_count():
    # a rated speed equal to synchronous cannot belong to that pole count: the next
    # synchronous speed up is chosen (and the engine then rejects the huge rated slip)
    assert speed.infer_poles(1500, 50) == 2
    assert speed.infer_poles(1000, 50) == 4


def test_infer_poles_invalid_speed_is_nan():
    assert np.isnan(speed.infer_poles(0.0, 50))      # no speed
    assert np.isnan(speed.infer_poles(3100.0, 50))   # above 2-pole synchronous


def test_slip_doe_slip_example():
    # US DOE "Determining Electric Motor Load and Efficiency", slip example:
    # synchronous 1800 rpm, measured 1770 rpm -> slip 30 rpm (1.67 %)
    assert speed.slip_rpm(1770, 1800) == pytest.approx(30.0)
    assert speed.slip_pu(1770, 1800) == pytest.approx(30 / 1800)


def test_slip_limits():
    assert speed.slip_pu(1800, 1800) == 0.0       # synchronous speed
    assert speed.slip_pu(0.0, 1800) == 1.0        # standstill
    assert speed.slip_pu(1810, 1800) < 0          # generating


def test_array_equals_scalar():
    n = np.array([1770.0, 1455.0, 990.0])
    ns = np.array([1800.0, 1500.0, 1000.0])
    arr = speed.slip_pu(n, ns)
    assert arr.tolist() == [float(speed.slip_pu(a, b)) for a, b in zip(n, ns)]
    rated = np.array([1750.0, 2950.0, 975.0])
    hz = np.array([60.0, 50.0, 50.0])
    assert speed.infer_poles(rated, hz).tolist() == [float(speed.infer_poles(a, b)) for a, b in zip(rated, hz)]
