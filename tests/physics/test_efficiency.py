"""Loss relations and the nameplate power balance (moved out of the engine)."""

import numpy as np
import pytest

from slipwise.physics import efficiency as eff


def test_losses_from_efficiency():
    # 11 kW at 91.4 % efficiency: 11000/0.914 - 11000 = 1035 W
    assert eff.losses_w(11000.0, 0.914) == pytest.approx(11000 / 0.914 - 11000)


def test_rotor_copper_loss_is_slip_share_of_air_gap_power():
    # P_cu2 = s P_ag and P_mech = (1 - s) P_ag (standard induction-machine relation)
    s, p_mech = 0.04, 11000.0
    p_ag = p_mech / (1 - s)
    assert eff.rotor_copper_loss_w(s, p_mech) == pytest.approx(s * p_ag)


def test_max_efficiency_for_slip():
    # slip 4 %: rotor loss 1/24 of output; at most 90 % of losses -> losses >= output/21.6
    assert eff.max_efficiency_for_slip(0.04) == pytest.approx(1 / (1 + (0.04 / 0.96) / 0.9))
    # the bound is reached exactly when rotor loss is 90 % of the losses
    eta = eff.max_efficiency_for_slip(0.04)
    assert eff.rotor_copper_loss_w(0.04, 1.0) == pytest.approx(0.9 * eff.losses_w(1.0, eta))


def test_nameplate_power_balance():
    # P_out = sqrt(3) V I pf eta; 11 kW, 400 V, pf 0.81, eta 0.914 -> 21.45 A (typical 4-pole
    # 11 kW nameplate, common practice: 21.5 A printed)
    current = eff.line_current_a(11000.0, 400.0, 0.81, 0.914)
    assert current == pytest.approx(21.45, abs=0.01)
    s = eff.apparent_power_va(400.0, current)
    assert s == pytest.approx(np.sqrt(3) * 400 * current)
    # the balance gives back each factor from the other
    assert eff.balance_factor(11000.0, s, 0.81) == pytest.approx(0.914)
    assert eff.balance_factor(11000.0, s, 0.914) == pytest.approx(0.81)


def test_scaled_losses_follow_their_laws():
    budget = eff.LossBudget(np.array([300.0]), np.array([100.0]), np.array([400.0]), np.array([250.0]))
    core, fw, stator = eff.scaled_losses_w(budget, 0.9, 1.0, 0.5, 0.5)
    # core ~ flux^2 f, friction and windage ~ n^2, stator ~ I^2
    assert (core[0], fw[0], stator[0]) == pytest.approx((300 * 0.81, 25.0, 100.0))
