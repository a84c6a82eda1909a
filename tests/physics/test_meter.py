import numpy as np
import pytest

from slipwise.physics import meter


def test_stated_resolution_is_the_last_digit():
    # a reading is good to half its last stated digit (common practice)
    assert meter.stated_resolution(0.7) == pytest.approx(0.1)        # 0.7 kW: a 0.1 kW step
    assert meter.stated_resolution(24.25) == pytest.approx(0.01)
    assert meter.stated_resolution(3.0) == pytest.approx(1.0)        # whole number: step of 1
    assert meter.stated_resolution(1.5e-05) == pytest.approx(1e-6)   # exponent form
    assert np.isnan(meter.stated_resolution(np.nan))                  # no reading
    # scalar = array
    arr = meter.stated_resolution(np.array([0.7, 24.25, 3.0]))
    assert arr == pytest.approx([0.1, 0.01, 1.0])


def test_reading_accuracy_adds_half_the_last_digit():
    # 0.7 kW read on a 2 % meter: rounding 0.05/0.7 = 7.14 %, in quadrature with 2 %
    # (GUM: independent errors) -> 7.42 %; the virtual bench's 2.2 kW motor at 25 % load
    # draws 739 W and the 0.1 kW display shows 0.7 kW, 5.3 % low, beyond the 2 % alone
    assert meter.reading_accuracy_pct(2.0, 0.7) == pytest.approx(np.hypot(2.0, 100 * 0.05 / 0.7))
    assert abs(739.2 - 700.0) / 700.0 * 100 < meter.reading_accuracy_pct(2.0, 0.7)
    # a zero reading (motor idle, meter at zero): no relative rounding to state, the meter's own
    assert meter.reading_accuracy_pct(2.0, 0.0) == pytest.approx(2.0)
    # a reading with many digits: the meter's accuracy alone
    assert meter.reading_accuracy_pct(2.0, 24.213) == pytest.approx(2.0, abs=1e-3)
    # scalar = array
    assert meter.reading_accuracy_pct(2.0, np.array([0.7, 24.213])) == pytest.approx(
        [meter.reading_accuracy_pct(2.0, 0.7), meter.reading_accuracy_pct(2.0, 24.213)])


def test_stated_resolution_keeps_the_shape():
    # a 2-D batch (rows x readings) comes back as it went in, blanks as NaN
    got = meter.stated_resolution(np.array([[0.7, 24.25], [3.0, np.nan]]))
    assert got.shape == (2, 2)
    assert got[0] == pytest.approx([0.1, 0.01]) and got[1, 0] == pytest.approx(1.0) and np.isnan(got[1, 1])
