"""Equivalent circuit against a textbook worked example.

Reference: S. J. Chapman, Electric Machinery Fundamentals (4th ed.), induction
motor chapter, the 460 V, 25 hp, 60 Hz, 4-pole, Y-connected motor with
R1 = 0.641, R2 = 0.332, X1 = 1.106, X2 = 0.464, XM = 26.3 ohm, 1100 W rotational
losses (core loss lumped in), slip 2.2 %. Published answers (from memory):
I = 18.88 A, PF 0.833 lagging, P_in 12.53 kW, P_AG 11.845 kW, P_out 10.485 kW,
tau_ind 62.8 N m, efficiency 83.7 %; and, for the same motor, maximum torque
229 N m at slip 0.198 and starting torque 104 N m (computed there with the
approximate Thevenin equivalent X_TH ~ X1, so ours differ by ~1-3 %).
"""

import numpy as np
import pytest

from slipwise.physics import circuit as ckt

RPM = 2 * np.pi / 60


def chapman_motor():
    values = dict(r1_ohm=0.641, x1_ohm=1.106, r2_ohm=0.332, x2_ohm=0.464, xm_ohm=26.3, rc_ohm=np.inf,
                  friction_windage_w=1100.0, rated_voltage_v=460.0, rated_frequency_hz=60.0, poles=4,
                  rated_speed_rpm=1800 * (1 - 0.022), breakdown_ratio=np.nan, fit_ok=True)
    return ckt.Circuit(**{k: np.atleast_1d(np.asarray(v, dtype=float if k != "fit_ok" else bool))
                          for k, v in values.items()})


def test_solve_matches_worked_example():
    op = ckt.solve(chapman_motor(), 460.0, 60.0, 0.022)
    assert op.current_a[0] == pytest.approx(18.88, rel=0.002)
    assert op.power_factor[0] == pytest.approx(0.833, abs=0.002)
    assert op.input_w[0] == pytest.approx(12530, rel=0.002)
    assert op.airgap_w[0] == pytest.approx(11845, rel=0.002)
    assert op.torque_em_nm[0] == pytest.approx(62.8, rel=0.002)
    assert op.output_w[0] == pytest.approx(10485, rel=0.002)
    assert op.efficiency[0] == pytest.approx(0.837, abs=0.001)


def test_breakdown_and_starting_torque():
    motor = chapman_motor()
    t_max, s_max = ckt.breakdown(motor, 460.0, 60.0)
    assert t_max[0] == pytest.approx(229, rel=0.015)
    assert s_max[0] == pytest.approx(0.198, rel=0.02)
    start = ckt.solve(motor, 460.0, 60.0, 1.0).torque_em_nm[0]
    assert start == pytest.approx(104, rel=0.03)
    # the breakdown torque is the maximum of the solved curve (exact Thevenin)
    s = np.linspace(0.01, 1.0, 20001)
    curve = ckt.solve(motor, 460.0, 60.0, s).torque_em_nm
    assert curve.max() == pytest.approx(t_max[0], rel=1e-6)
    assert s[curve.argmax()] == pytest.approx(s_max[0], abs=1e-4)


def test_breakdown_scales_with_voltage_squared():
    # on mains (fixed frequency) breakdown torque ~ V^2 (linear circuit); common practice
    motor = chapman_motor()
    t1, _ = ckt.breakdown(motor, 460.0, 60.0)
    t2, _ = ckt.breakdown(motor, 0.9 * 460.0, 60.0)
    assert t2[0] / t1[0] == pytest.approx(0.81, rel=1e-9)


def _rated_point_of_chapman():
    motor = chapman_motor()
    op = ckt.solve(motor, 460.0, 60.0, 0.022)
    n_r = 1800 * (1 - 0.022)
    t_rated = op.output_w[0] / (n_r * RPM)
    t_max, _ = ckt.breakdown(motor, 460.0, 60.0)
    ratio = (t_max[0] - 1100.0 / (n_r * RPM)) / t_rated
    return op, n_r, ratio


def test_fit_recovers_the_worked_example_circuit():
    # fit from the example's rated point (its own current, PF, efficiency, losses) and
    # get its parameters back: R1, R2, X1, X2, XM to 1e-6
    op, n_r, ratio = _rated_point_of_chapman()
    losses = op.input_w[0] - op.output_w[0]
    fit = ckt.fit_circuit(op.output_w[0], 460.0, op.current_a[0], 60.0, 4, n_r, op.power_factor[0],
                          op.efficiency[0], ratio, 1.106 / (1.106 + 0.464), 1100.0 / losses, 1.0)
    assert fit.fit_ok[0]
    for name, value in dict(r1_ohm=0.641, r2_ohm=0.332, x1_ohm=1.106, x2_ohm=0.464, xm_ohm=26.3).items():
        assert getattr(fit, name)[0] == pytest.approx(value, rel=1e-6), name


def test_fitted_circuit_resolved_at_other_slips():
    # fit from the rated point, re-solve at half and double slip, compare with the original
    op, n_r, ratio = _rated_point_of_chapman()
    losses = op.input_w[0] - op.output_w[0]
    fit = ckt.fit_circuit(op.output_w[0], 460.0, op.current_a[0], 60.0, 4, n_r, op.power_factor[0],
                          op.efficiency[0], ratio, 1.106 / 1.570, 1100.0 / losses, 1.0)
    for s in (0.011, 0.044, 0.3, 1.0):
        a = ckt.solve(chapman_motor(), 460.0, 60.0, s)
        b = ckt.solve(fit, 460.0, 60.0, s)
        assert b.torque_em_nm[0] == pytest.approx(a.torque_em_nm[0], rel=1e-6)
        assert b.current_a[0] == pytest.approx(a.current_a[0], rel=1e-6)


def nameplate_fit(breakdown_ratio=2.5, x1_share=0.4, pf=0.85, eta=0.91, kw=11.0, rpm=1460.0):
    return ckt.fit_circuit(kw * 1000, 400.0, kw * 1000 / (np.sqrt(3) * 400 * pf * eta), 50.0, 4, rpm, pf, eta,
                           breakdown_ratio, x1_share, 0.30, 0.35)


def test_fit_from_nameplate_reproduces_the_rated_point():
    fit = nameplate_fit()
    assert fit.fit_ok[0]
    op = ckt.solve(fit, 400.0, 50.0, (1500 - 1460) / 1500)
    assert op.output_w[0] == pytest.approx(11000.0, rel=1e-6)
    assert op.power_factor[0] == pytest.approx(0.85, rel=1e-6)
    assert op.efficiency[0] == pytest.approx(0.91, rel=1e-6)
    assert fit.breakdown_ratio[0] == pytest.approx(2.5, rel=0.01)
    # IEEE 112 leakage split kept
    assert fit.x1_ohm[0] / (fit.x1_ohm[0] + fit.x2_ohm[0]) == pytest.approx(0.4)


def test_fit_vectorised_equals_one_by_one():
    ratios = np.array([2.0, 2.5, 3.0])
    many = nameplate_fit(breakdown_ratio=ratios)
    for k, r in enumerate(ratios):
        one = nameplate_fit(breakdown_ratio=r)
        for a, b in zip(many, one):
            assert np.asarray(a)[k] == pytest.approx(np.asarray(b)[0], rel=1e-9, nan_ok=True)


def test_fit_unreachable_breakdown_target_is_reported():
    # a 10x breakdown torque cannot go with an 0.85 PF: nearest feasible circuit, fit_ok False
    fit = nameplate_fit(breakdown_ratio=10.0)
    assert not fit.fit_ok[0]
    assert np.isfinite(fit.r2_ohm[0]) and fit.breakdown_ratio[0] < 10.0


def test_no_load_current_is_a_plausible_share_of_rated():
    # common practice: no-load current of an 11 kW 4-pole motor is roughly 30-50 % of rated
    fit = nameplate_fit()
    i_rated = 11000 / (np.sqrt(3) * 400 * 0.85 * 0.91)
    share = ckt.no_load_current_a(fit, 400.0, 50.0)[0] / i_rated
    assert 0.25 < share < 0.55


def test_deep_bar_rotor_starts_with_the_design_torque():
    # a design N motor starts with ~2.2x rated torque (typical catalogue value, from memory); a single
    # cage fitted at the running point starts with far less. The rise of rotor resistance with rotor
    # frequency gives the locked-rotor torque and keeps the running point and breakdown torque.
    plain = nameplate_fit()
    deep = ckt.fit_circuit(11000.0, 400.0, 11000 / (np.sqrt(3) * 400 * 0.85 * 0.91), 50.0, 4, 1460.0, 0.85, 0.91,
                           2.5, 0.4, 0.30, 0.35, locked_rotor_ratio=2.2)
    t_rated = 11000.0 / (1460 * RPM)
    assert ckt.solve(plain, 400.0, 50.0, 1.0).torque_em_nm[0] / t_rated < 1.5
    assert ckt.solve(deep, 400.0, 50.0, 1.0).torque_em_nm[0] / t_rated == pytest.approx(2.2, rel=1e-6)
    s_r = 40 / 1500
    assert ckt.solve(deep, 400.0, 50.0, s_r).output_w[0] == pytest.approx(11000.0, rel=1e-9)
    assert ckt.breakdown(deep, 400.0, 50.0)[0][0] == pytest.approx(ckt.breakdown(plain, 400.0, 50.0)[0][0])
    # breakdown slip is where the solved curve peaks
    s = np.linspace(0.01, 1.0, 20001)
    curve = ckt.solve(deep, 400.0, 50.0, s).torque_em_nm
    assert s[curve.argmax()] == pytest.approx(ckt.breakdown(deep, 400.0, 50.0)[1][0], abs=2e-4)
