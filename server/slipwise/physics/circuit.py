"""Per-phase equivalent circuit: fitted from the nameplate, solved at any point.

The circuit is the IEEE Std 112 steady-state model referred to the stator,
in an equivalent star::

    V --- R1 + jX1 ---+--- jX2 --- R2/s
                      |
                 Rc || jXm

All quantities per phase; voltages [V] line-to-neutral of the equivalent star,
impedances [ohm]. Friction and windage are a mechanical loss outside the
circuit.

Fitting (``fit_circuit``)
-------------------------
From the rated point (output, voltage, current, power factor, efficiency,
slip) the loss budget fixes R1 (stator copper plus stray load loss), Rc (core
loss) and the air-gap power. For a trial total leakage ``X1 + X2`` (split by
design class as IEEE Std 112 does) the rated current then fixes R2 and Xm in
closed form; the one remaining unknown, the total leakage, is found with
``scipy.optimize.elementwise.find_root`` so that the circuit's breakdown torque
equals the design's. All nameplates are fitted at once, vectorised.
"""

from __future__ import annotations

from typing import NamedTuple

import numpy as np
from scipy.optimize import elementwise

from .units import RPM_TO_RAD_S, SQRT3
from .efficiency import rated_loss_budget
from .speed import synchronous_speed_rpm


class Circuit(NamedTuple):
    """Fitted per-phase parameters (arrays of one shape, one entry per nameplate)."""

    r1_ohm: np.ndarray
    x1_ohm: np.ndarray
    r2_ohm: np.ndarray
    x2_ohm: np.ndarray
    xm_ohm: np.ndarray
    rc_ohm: np.ndarray          # inf where no core loss is modelled
    friction_windage_w: np.ndarray
    rated_voltage_v: np.ndarray  # line-to-line
    rated_frequency_hz: np.ndarray
    poles: np.ndarray
    rated_speed_rpm: np.ndarray
    breakdown_ratio: np.ndarray  # achieved breakdown / rated shaft torque
    fit_ok: np.ndarray           # bool: breakdown target reached within 1 %
    r2_rise: np.ndarray = np.zeros(1)  # deep-bar rise: R2(s) = R2 (1 + r2_rise s^2); 0 for a plain cage

    def take(self, index) -> "Circuit":
        """Rows of this circuit table picked by an index array."""
        return Circuit(*(np.asarray(a)[index] for a in self))


def _parallel(za, zb):
    with np.errstate(divide="ignore", invalid="ignore"):
        out = za * zb / (za + zb)
    return np.where(np.isinf(za), zb, np.where(np.isinf(zb), za, out))


def _core_branch(rc_ohm, xm_ohm):
    """Impedance of Rc in parallel with jXm [ohm] (Rc may be inf)."""
    with np.errstate(divide="ignore", invalid="ignore"):
        y = np.where(np.isinf(rc_ohm), 0.0, 1.0 / rc_ohm) + 1.0 / (1j * xm_ohm)
    return 1.0 / y


class _Trial(NamedTuple):
    r2_ohm: np.ndarray
    xm_ohm: np.ndarray
    x1_ohm: np.ndarray
    x2_ohm: np.ndarray
    rc_ohm: np.ndarray
    breakdown_em_nm: np.ndarray
    valid: np.ndarray


def _trial(x_total, v_phase, i1, r1, p_core, slip, x1_share, omega_sync):
    """Closed-form Rc, R2, Xm for a trial total leakage, and the breakdown torque."""
    x1 = x1_share * x_total
    x2 = (1.0 - x1_share) * x_total
    e = v_phase - i1 * (r1 + 1j * x1)
    with np.errstate(divide="ignore", invalid="ignore"):
        # the core branch dissipates the core loss at the air-gap voltage E
        rc = np.where(p_core > 0, 3.0 * np.abs(e) ** 2 / np.where(p_core > 0, p_core, 1.0), np.inf)
        y = i1 / e
        g2 = y.real - np.where(np.isinf(rc), 0.0, 1.0 / rc)
        disc = 1.0 - 4.0 * g2 ** 2 * x2 ** 2
        r_over_s = (1.0 + np.sqrt(np.maximum(disc, 0.0))) / (2.0 * g2)
        b2 = -x2 / (r_over_s ** 2 + x2 ** 2)
        xm = -1.0 / (y.imag - b2)
    valid = (g2 > 0) & (disc >= 0) & (xm > 0) & np.isfinite(xm)
    r2 = r_over_s * slip
    zm = _core_branch(rc, np.where(valid, xm, 1.0))
    z1 = r1 + 1j * x1
    with np.errstate(divide="ignore", invalid="ignore"):
        vth = v_phase * zm / (z1 + zm)
        zth = z1 * zm / (z1 + zm)
        tmax = 3.0 * np.abs(vth) ** 2 / (
            2.0 * omega_sync * (zth.real + np.sqrt(zth.real ** 2 + (zth.imag + x2) ** 2)))
    return _Trial(r2, xm, x1, x2, rc, tmax, valid)


def fit_circuit(rated_output_w, rated_voltage_v, rated_current_a, rated_frequency_hz, poles,
                rated_speed_rpm, rated_power_factor, rated_efficiency, breakdown_ratio,
                x1_share, fixed_loss_share, friction_windage_share, locked_rotor_ratio=np.nan):
    """Fit the per-phase equivalent circuit to the nameplate's rated point.

    Parameters
    ----------
    rated_output_w : numeric
        Rated shaft output [W].
    rated_voltage_v : numeric
        Rated line-to-line voltage [V].
    rated_current_a : numeric
        Rated line current [A].
    rated_frequency_hz : numeric
        Rated frequency [Hz].
    poles : numeric
        Poles [-].
    rated_speed_rpm : numeric
        Full-load speed [rpm].
    rated_power_factor : numeric
        Full-load power factor [-]; together with efficiency and current it
        must close the power balance ``P = sqrt(3) V I pf eta``: the engine
        passes a consistent set.
    rated_efficiency : numeric
        Full-load efficiency [pu].
    breakdown_ratio : numeric
        Breakdown torque over rated shaft torque [-].
    x1_share : numeric
        Stator share of the total leakage reactance, X1 / (X1 + X2) [-].
    fixed_loss_share : numeric
        Share of the rated losses that is core plus friction and windage [-].
    friction_windage_share : numeric
        Share of those fixed losses that is friction and windage [-].
    locked_rotor_ratio : numeric, optional
        Locked-rotor over rated shaft torque [-]. Where given, the rotor
        resistance is made to rise with the square of rotor frequency
        (deep-bar and double-cage rotors: skin effect grows as f^2 at low
        rotor frequency) so that the circuit starts with this torque; the
        running point and the breakdown torque are unchanged. NaN: a plain
        single cage.

    Returns
    -------
    Circuit
        Fitted parameters; ``fit_ok`` is False where the breakdown target
        could not be met (the nearest feasible circuit is returned).

    Notes
    -----
    Loss budget at the rated point from :func:`efficiency.rated_loss_budget`:
    losses ``P_L = P_out / eta - P_out``; rotor copper loss ``s P_ag`` with
    air-gap power ``P_ag = (P_out + P_fw) / (1 - s)``; stator copper (with
    stray load) loss the remainder, never below 10 % of ``P_L`` (the fixed
    losses give way instead). Breakdown torque of the circuit from its Thevenin equivalent:
    ``T_max = 3 V_th^2 / (2 w_s (R_th + sqrt(R_th^2 + (X_th + X2)^2)))``.

    References
    ----------
    .. [1] IEEE Std 112, Standard Test Procedure for Polyphase Induction
       Motors and Generators (equivalent circuit, leakage distribution).
    .. [2] S. J. Chapman, Electric Machinery Fundamentals, chapter on
       induction motors (Thevenin form of the torque equation).
    """
    args = np.broadcast_arrays(*(np.asarray(a, dtype=float) for a in (
        rated_output_w, rated_voltage_v, rated_current_a, rated_frequency_hz, poles, rated_speed_rpm,
        rated_power_factor, rated_efficiency, breakdown_ratio, x1_share, fixed_loss_share,
        friction_windage_share)))
    (p_out, v_ll, i_r, f_r, poles, n_r, pf, eta, bd_ratio, x1_share, fixed_share, fw_share) = (
        np.atleast_1d(a).astype(float) for a in args)

    n_s = synchronous_speed_rpm(f_r, poles)
    slip = (n_s - n_r) / n_s
    omega_sync = n_s * RPM_TO_RAD_S
    omega_rated = n_r * RPM_TO_RAD_S
    v_phase = v_ll / SQRT3
    # the same loss split as the efficiency model, so the two never disagree
    budget = rated_loss_budget(p_out, eta, slip, fixed_share, fw_share)
    p_core, p_fw, p_cu1 = budget.core_w, budget.friction_windage_w, budget.stator_w
    r1 = p_cu1 / (3.0 * i_r ** 2)
    phi = np.arccos(np.minimum(np.maximum(pf, 0.0), 1.0))
    i1 = i_r * (np.cos(phi) - 1j * np.sin(phi))

    t_rated = p_out / omega_rated
    t_fw = p_fw / omega_rated
    target_em = bd_ratio * t_rated + t_fw
    z_base = v_phase / i_r

    # scan a log grid of total leakage for the first bracket of the target
    grid = np.geomspace(0.002, 3.0, 64)[:, None] * z_base[None, :]
    t = _trial(grid, v_phase, i1, r1, p_core, slip, x1_share, omega_sync)
    resid = np.where(t.valid, t.breakdown_em_nm - target_em, np.nan)
    above = resid > 0
    below = resid <= 0
    crossing = above[:-1] & below[1:]
    has_bracket = crossing.any(axis=0)
    k = np.argmax(crossing, axis=0)
    cols = np.arange(grid.shape[1])
    lo = grid[k, cols]
    hi = grid[k + 1, cols]
    # no bracket: the largest valid leakage if the target is never reached from
    # above, the smallest valid one if breakdown is always below target
    valid_any = t.valid.any(axis=0)
    last_valid = grid.shape[0] - 1 - np.argmax(t.valid[::-1], axis=0)
    first_valid = np.argmax(t.valid, axis=0)
    always_above = np.nanmin(np.where(t.valid, resid, np.inf), axis=0) > 0
    fallback = np.where(always_above, grid[last_valid, cols], grid[first_valid, cols])

    x_total = fallback.copy()
    if has_bracket.any():
        idx = np.flatnonzero(has_bracket)

        def f(x, vp, i, r1_, pc_, s_, xs, ws, tgt):
            tr = _trial(x, vp, i, r1_, pc_, s_, xs, ws)
            return tr.breakdown_em_nm - tgt

        res = elementwise.find_root(
            f, (lo[idx], hi[idx]),
            args=(v_phase[idx], i1[idx], r1[idx], p_core[idx], slip[idx], x1_share[idx], omega_sync[idx],
                  target_em[idx]),
            tolerances={"xrtol": 1e-10})
        x_total[idx] = res.x

    fin = _trial(x_total, v_phase, i1, r1, p_core, slip, x1_share, omega_sync)
    achieved = (fin.breakdown_em_nm - t_fw) / t_rated
    fit_ok = valid_any & fin.valid & (np.abs(achieved / bd_ratio - 1.0) < 0.01)
    plain = Circuit(r1, fin.x1_ohm, fin.r2_ohm, fin.x2_ohm, fin.xm_ohm, fin.rc_ohm, p_fw, v_ll, f_r, poles, n_r,
                    achieved, fit_ok, np.zeros_like(r1))
    rise = _deep_bar_rise(plain, np.broadcast_to(np.asarray(locked_rotor_ratio, dtype=float), r1.shape) * t_rated,
                          slip)
    # R2(s) = R2_0 (1 + k s^2) equals the fitted R2 at rated slip: the running point is kept
    return plain._replace(r2_ohm=plain.r2_ohm / (1.0 + rise * slip ** 2), r2_rise=rise)


def _deep_bar_rise(circuit: "Circuit", locked_rotor_nm, rated_slip):
    """Rise factor k of ``R2(s) = R2_0 (1 + k s^2)``, ``R2_0 = R2 / (1 + k s_r^2)``, so
    that the circuit's torque at standstill is the locked-rotor torque.

    At standstill ``T = 3 V_th^2 r / (w_s ((R_th + r)^2 + X^2))`` with
    ``X = X_th + X2``: a quadratic in ``r``; its smaller root is the first
    resistance reaching the torque as ``r`` grows from R2. A target above the
    breakdown torque takes ``r = sqrt(R_th^2 + X^2)`` (start at breakdown, as
    a design D motor nearly does); one below the plain cage's keeps ``k = 0``.
    """
    vth, zth, omega_sync = _thevenin(circuit, circuit.rated_voltage_v, circuit.rated_frequency_hz)
    x = zth.imag + circuit.x2_ohm
    t = np.asarray(locked_rotor_nm, dtype=float) * omega_sync
    a, b, c = t, 2.0 * t * zth.real - 3.0 * np.abs(vth) ** 2, t * (zth.real ** 2 + x ** 2)
    with np.errstate(invalid="ignore", divide="ignore"):
        disc = b ** 2 - 4.0 * a * c
        r = np.where(disc >= 0, (-b - np.sqrt(np.maximum(disc, 0.0))) / (2.0 * a), np.sqrt(zth.real ** 2 + x ** 2))
        q = r / circuit.r2_ohm
        k = (q - 1.0) / (1.0 - q * np.asarray(rated_slip, dtype=float) ** 2)
    return np.where(np.isfinite(t) & np.isfinite(k) & (k > 0), k, 0.0)


def _thevenin(circuit: "Circuit", voltage_v, frequency_hz):
    """Thevenin voltage [V] and impedance [ohm] seen by the rotor branch, and w_s [rad/s]."""
    _, x1, _, xm, rc = _scaled(circuit, frequency_hz)
    v_phase = np.asarray(voltage_v, dtype=float) / SQRT3
    zm = _core_branch(rc, xm)
    z1 = circuit.r1_ohm + 1j * x1
    with np.errstate(divide="ignore", invalid="ignore"):
        vth = v_phase * zm / (z1 + zm)
        zth = z1 * zm / (z1 + zm)
    omega_sync = synchronous_speed_rpm(frequency_hz, circuit.poles) * RPM_TO_RAD_S
    return vth, zth, omega_sync


class OperatingPoint(NamedTuple):
    """Circuit solution at one (voltage, frequency, slip); per-phase quantities in an equivalent star."""

    current_a: np.ndarray          # line current magnitude
    power_factor: np.ndarray
    input_w: np.ndarray
    airgap_w: np.ndarray
    torque_em_nm: np.ndarray       # electromagnetic torque
    output_w: np.ndarray           # shaft output after friction and windage
    efficiency: np.ndarray         # [pu]; NaN where input <= 0


def _scaled(circuit: Circuit, frequency_hz):
    ratio = np.asarray(frequency_hz, dtype=float) / circuit.rated_frequency_hz
    # reactances scale with frequency; core resistance taken to scale with it too
    # (eddy-current loss ~ (V/f)^2 f^2, hysteresis ~ (V/f)^2 f: Rc ~ f between the two)
    return ratio, circuit.x1_ohm * ratio, circuit.x2_ohm * ratio, circuit.xm_ohm * ratio, circuit.rc_ohm * ratio


def solve(circuit: Circuit, voltage_v, frequency_hz, slip):
    """Solve the circuit at a line voltage, frequency and slip.

    Parameters
    ----------
    circuit : Circuit
        Fitted parameters (broadcastable against the other arguments).
    voltage_v : numeric
        Line-to-line voltage [V].
    frequency_hz : numeric
        Supply frequency [Hz]; reactances scale with it.
    slip : numeric
        Slip [pu], in (0, 1]; at 0 the rotor branch is open.

    Returns
    -------
    OperatingPoint
        Friction and windage scale with the square of speed relative to
        the rated speed (common practice between friction ~ n
        and windage ~ n^3).
    """
    _, x1, x2, xm, rc = _scaled(circuit, frequency_hz)
    slip = np.asarray(slip, dtype=float)
    v_phase = np.asarray(voltage_v, dtype=float) / SQRT3
    r2 = circuit.r2_ohm * (1.0 + circuit.r2_rise * slip ** 2)
    with np.errstate(divide="ignore", invalid="ignore"):
        z2 = np.where(slip > 0, r2 / np.where(slip > 0, slip, 1.0) + 1j * x2, np.inf + 0j)
        zm = _core_branch(rc, xm)
        zp = np.where(slip > 0, _parallel(zm, z2), zm)
        z = circuit.r1_ohm + 1j * x1 + zp
        i1 = v_phase / z
        e = v_phase - i1 * (circuit.r1_ohm + 1j * x1)
        i2 = np.where(slip > 0, e / z2, 0.0)
        p_in = 3.0 * (v_phase * np.conj(i1)).real
        p_ag = 3.0 * np.abs(i2) ** 2 * np.where(slip > 0, r2 / np.where(slip > 0, slip, 1.0), 0.0)
        n_sync = synchronous_speed_rpm(frequency_hz, circuit.poles)
        omega_sync = n_sync * RPM_TO_RAD_S
        t_em = p_ag / omega_sync
        speed_ratio = n_sync * (1.0 - slip) / circuit.rated_speed_rpm
        p_out = p_ag * (1.0 - slip) - circuit.friction_windage_w * speed_ratio ** 2
        pf = p_in / (3.0 * v_phase * np.abs(i1))
        eff = np.where(p_in > 0, p_out / p_in, np.nan)
    return OperatingPoint(np.abs(i1), pf, p_in, p_ag, t_em, p_out, eff)


def breakdown(circuit: Circuit, voltage_v, frequency_hz):
    """Breakdown (pull-out) torque and its slip at a voltage and frequency.

    Parameters
    ----------
    circuit : Circuit
    voltage_v : numeric
        Line-to-line voltage [V].
    frequency_hz : numeric
        Frequency [Hz].

    Returns
    -------
    tuple of numeric
        ``(torque_em_nm, slip_pu)``: electromagnetic breakdown torque [N m]
        and the slip where it occurs [pu].

    Notes
    -----
    Thevenin form: ``T_max = 3 V_th^2 / (2 w_s (R_th + sqrt(R_th^2 + (X_th + X2)^2)))``,
    which does not depend on R2; it occurs where ``R2(s) / s = sqrt(R_th^2 + (X_th + X2)^2)``,
    i.e. ``s = R2 / root`` for a plain cage (with the deep-bar rise a quadratic in s). At fixed
    frequency the torque scales with the square of the voltage.
    """
    vth, zth, omega_sync = _thevenin(circuit, voltage_v, frequency_hz)
    _, _, x2, _, _ = _scaled(circuit, frequency_hz)
    with np.errstate(divide="ignore", invalid="ignore"):
        root = np.sqrt(zth.real ** 2 + (zth.imag + x2) ** 2)
        tmax = 3.0 * np.abs(vth) ** 2 / (2.0 * omega_sync * (zth.real + root))
        b = circuit.r2_ohm / root
        a = b * circuit.r2_rise
        # a s^2 - s + b = 0, smaller root; a = 0 gives s = b
        s_max = np.where(a > 0, (1.0 - np.sqrt(np.maximum(1.0 - 4.0 * a * b, 0.0))) / (2.0 * np.where(a > 0, a, 1.0)), b)
    return tmax, s_max


def no_load_current_a(circuit: Circuit, voltage_v, frequency_hz):
    """Line current with the rotor branch open (synchronous speed) [A]."""
    return solve(circuit, voltage_v, frequency_hz, 0.0).current_a
