"""Efficiency and loss model (slipwise.physics.efficiency).

Sources beside each value:
* [IEC1]  IEC 60034-1, tolerance on efficiency: -15 % of (1 - eta) up to 150 kW,
          -10 % of (1 - eta) above (from memory of the standard's tolerance table).
* [DOE]   US DOE, "Determining Electric Motor Load and Efficiency" (loss categories).
* Rotor copper loss = s * P_airgap = s / (1 - s) * P_mech: the power balance of the
  induction machine in any machinery text (e.g. Chapman, Electric Machinery Fundamentals).
"""

import numpy as np
import pytest

from slipwise.physics import efficiency as ef


def test_loss_tolerance_both_sides_of_150_kw():
    # [IEC1]: up to and including 150 kW the losses may be 15 % higher, above 150 kW 10 %
    assert ef.loss_tolerance_high(150.0) == pytest.approx(1.15)
    assert ef.loss_tolerance_high(150.01) == pytest.approx(1.10)
    assert ef.loss_tolerance_high(0.75) == pytest.approx(1.15)
    assert ef.loss_tolerance_high(1000.0) == pytest.approx(1.10)
    # unknown rating: the wider value
    assert ef.loss_tolerance_high(np.nan) == pytest.approx(1.15)
    # scalar = array
    np.testing.assert_allclose(ef.loss_tolerance_high([150.0, 151.0]),
                               [ef.loss_tolerance_high(150.0), ef.loss_tolerance_high(151.0)])


def _budget(p_out=200e3, eta=0.95, s=0.01):
    return ef.rated_loss_budget(p_out, eta, s, 0.30, 0.35)


def _band(rated_kw, p_out):
    b = _budget(p_out)
    return ef.efficiency_band((b, b, b), p_out, p_out, p_out, 1.0, 1.0, 1.0, 1.0, 0.0, 0.01,
                              rated_power_kw=rated_kw)


def test_efficiency_band_low_end_uses_the_tolerance_of_the_rating():
    # rated point of a 95 % motor, no meter error, one loss split: the low end is the
    # nameplate losses times the IEC tolerance [IEC1]
    p = 200e3
    losses = p / 0.95 - p
    eta, low_200, _ = _band(200.0, p)
    _, low_150, _ = _band(150.0, p)
    assert eta == pytest.approx(0.95, abs=1e-9)                     # rated point
    assert low_200 == pytest.approx(p / (p + 1.10 * losses))        # above 150 kW: -10 % of (1 - eta)
    assert low_150 == pytest.approx(p / (p + 1.15 * losses))        # up to 150 kW: -15 %
    # expressed as the standard does: eta_low = eta - tol * (1 - eta) nearly
    assert 0.95 - low_200 == pytest.approx(0.10 * 0.05, rel=0.06)


def test_rated_loss_budget_adds_up_and_rotor_loss_is_s_over_1_minus_s():
    # rated point: P_out 11 kW, eta 0.914, s 0.0267 (an 11 kW 4-pole motor at 1460 rpm)
    p, eta, s = 11e3, 0.914, 40.0 / 1500.0
    b = ef.rated_loss_budget(p, eta, s, 0.30, 0.35)
    total = p / eta - p
    assert b.core_w + b.friction_windage_w + b.stator_w + b.rotor_w == pytest.approx(total)
    # rotor copper loss = s P_ag = s / (1 - s) (P_out + P_fw), not s (P_out + P_fw)
    assert b.rotor_w == pytest.approx(s / (1.0 - s) * (p + b.friction_windage_w))
    assert b.friction_windage_w == pytest.approx(0.35 * 0.30 * total)
    assert b.core_w == pytest.approx(0.65 * 0.30 * total)


def test_operating_losses_scale_each_with_its_own_variable():
    b = ef.LossBudget(np.array(300.0), np.array(100.0), np.array(500.0), np.array(200.0))
    # rated point: every ratio 1 and the rated slip's rotor loss
    s = 0.1
    base = ef.operating_losses_w(b, 1.0, 1.0, 1.0, 1.0, s, 1000.0)
    assert base == pytest.approx(300 + 100 + 500 + s / (1 - s) * (1000 + 100))
    # core loss ~ flux^2 * f [DOE]: 10 % more flux at rated f -> 1.21 x core loss
    assert ef.operating_losses_w(b, 1.1, 1.0, 1.0, 1.0, s, 1000.0) - base == pytest.approx(300 * 0.21)
    # ... and 2 % more frequency at constant flux -> 1.02 x
    assert ef.operating_losses_w(b, 1.0, 1.02, 1.0, 1.0, s, 1000.0) - base == pytest.approx(300 * 0.02)
    # stator copper + stray ~ current^2 (not load^2): half the current, a quarter of the loss
    assert base - ef.operating_losses_w(b, 1.0, 1.0, 1.0, 0.5, s, 1000.0) == pytest.approx(500 * 0.75)
    # friction and windage ~ speed^2
    assert ef.operating_losses_w(b, 1.0, 1.0, 0.9, 1.0, s, 1000.0) == pytest.approx(
        300 + 100 * 0.81 + 500 + s / (1 - s) * (1000 + 81))
    # synchronous speed (no load): no rotor loss
    assert ef.operating_losses_w(b, 1.0, 1.0, 1.0, 1.0, 0.0, 0.0) == pytest.approx(900.0)


def test_operating_losses_scalar_equals_array():
    b = ef.LossBudget(*(np.array([v, v]) for v in (300.0, 100.0, 500.0, 200.0)))
    arr = ef.operating_losses_w(b, [1.0, 1.1], [1.0, 0.98], [1.0, 0.99], [1.0, 0.7], [0.03, 0.02], [1e3, 7e2])
    b0 = ef.LossBudget(*(np.array(v) for v in (300.0, 100.0, 500.0, 200.0)))
    one = ef.operating_losses_w(b0, 1.1, 0.98, 0.99, 0.7, 0.02, 7e2)
    assert arr[1] == pytest.approx(one)


def test_efficiency_pu_limits():
    assert ef.efficiency_pu(900.0, 100.0) == pytest.approx(0.9)
    assert ef.efficiency_pu(0.0, 100.0) == pytest.approx(0.0)       # no load: no output
    assert np.isnan(ef.efficiency_pu(0.0, 0.0))




def test_losses_from_efficiency():
    # 11 kW at 91.4 % efficiency: 11000/0.914 - 11000 = 1035 W
    assert ef.losses_w(11000.0, 0.914) == pytest.approx(11000 / 0.914 - 11000)


def test_rotor_copper_loss_is_slip_share_of_air_gap_power():
    # P_cu2 = s P_ag and P_mech = (1 - s) P_ag (standard induction-machine relation)
    s, p_mech = 0.04, 11000.0
    p_ag = p_mech / (1 - s)
    assert ef.rotor_copper_loss_w(s, p_mech) == pytest.approx(s * p_ag)


def test_max_efficiency_for_slip():
    # slip 4 %: rotor loss 1/24 of output; at most 90 % of losses -> losses >= output/21.6
    assert ef.max_efficiency_for_slip(0.04) == pytest.approx(1 / (1 + (0.04 / 0.96) / 0.9))
    # the bound is reached exactly when rotor loss is 90 % of the losses
    eta = ef.max_efficiency_for_slip(0.04)
    assert ef.rotor_copper_loss_w(0.04, 1.0) == pytest.approx(0.9 * ef.losses_w(1.0, eta))


def test_nameplate_power_balance():
    # P_out = sqrt(3) V I pf eta; 11 kW, 400 V, pf 0.81, eta 0.914 -> 21.45 A (typical 4-pole
    # 11 kW nameplate, common practice: 21.5 A printed)
    current = ef.line_current_a(11000.0, 400.0, 0.81, 0.914)
    assert current == pytest.approx(21.45, abs=0.01)
    s = ef.apparent_power_va(400.0, current)
    assert s == pytest.approx(np.sqrt(3) * 400 * current)
    # the balance gives back each factor from the other
    assert ef.balance_factor(11000.0, s, 0.81) == pytest.approx(0.914)
    assert ef.balance_factor(11000.0, s, 0.914) == pytest.approx(0.81)


def test_scaled_losses_follow_their_laws():
    budget = ef.LossBudget(np.array([300.0]), np.array([100.0]), np.array([400.0]), np.array([250.0]))
    core, fw, stator = ef.scaled_losses_w(budget, 0.9, 1.0, 0.5, 0.5)
    # core ~ flux^2 f, friction and windage ~ n^2, stator ~ I^2
    assert (core[0], fw[0], stator[0]) == pytest.approx((300 * 0.81, 25.0, 100.0))
