"""A virtual test bench: two four-pole cage motors solved exactly, read as instruments show them.

Each machine is a per-phase equivalent circuit (IEEE Std 112 form, equivalent
star) with the effects the engine's own model simplifies added:

* magnetic saturation: ``X_m = X_m0 * (phi)^(1 - k)``, so the magnetising
  current grows as ``phi^k`` with the air-gap flux ``phi = (E/f)/(E_0/f_r)``
  (``k`` per machine, inside the 2-5 range of
  :data:`slipwise.physics.typical.SATURATION_EXPONENT_ABOVE_RATED`);
* core loss in a parallel resistance, hysteresis ``~ phi^2 f`` (70 %) plus
  eddy current ``~ phi^2 f^2`` (30 %) (a common split, from memory);
* friction ``~ n`` and windage ``~ n^3``, half each at synchronous speed
  (assumption of this bench; the engine takes ``n^2``);
* stray load loss ``3 k_LL I_2^2`` taken off the shaft, sized near the
  IEC 60034-2-1 assigned value ``(0.025 - 0.005 log10(P_N/1 kW)) P_in`` at the
  rated point;
* a deep-bar rotor: ``R_2(s) = R_2 (1 + c s^1.5)`` (skin effect; the engine
  takes ``s^2``);
* warm windings: ``R(T) = R_ref (k + T) / (k + T_ref)`` (k = 235 copper
  stator, 225 aluminium cage, IEC 60034-2-1) with the winding at
  ``25 degC + 80 K (I_1 / I_ref)^2`` (thermal equilibrium, rise ~ losses).

The parameters are not a textbook example (none could be read here): they are
typical per-unit values for 400 V, 50 Hz, 4-pole cage motors of 2.2 kW and
200 kW (from memory: small motors R ~ 0.05-0.07 pu, X_m ~ 1.5-2 pu; large
R ~ 0.01 pu, X_m ~ 3-4 pu), tuned so that the rated point looks like a
catalogue motor (slip, efficiency, power factor, breakdown torque).

For each true load (shaft output as a fraction of rated) at a supply voltage
and frequency the slip is solved exactly, then the readings are rounded as
instruments show them: speed to 1 rpm, currents to 0.1 A, voltages to 1 V,
power to 0.1 kW, power factor to 0.01, frequency to 0.01 Hz. The nameplate is
the rated point, rounded as nameplates are.

Script mode prints the table: ``python -m tests.bench.virtual_bench``.
"""

from __future__ import annotations

import cmath
import math
from dataclasses import dataclass
from functools import lru_cache

from scipy.optimize import brentq, minimize_scalar

SQRT3 = math.sqrt(3.0)
K_COPPER = 235.0
K_ALUMINIUM = 225.0
AMBIENT_DEGC = 25.0
RISE_K = 80.0
T_REF_DEGC = 95.0
HYSTERESIS_SHARE = 0.7
FRICTION_SHARE = 0.5


@dataclass(frozen=True)
class Machine:
    """Per-phase parameters at 50 Hz and T_REF_DEGC [ohm], and losses [W]."""

    name: str
    rated_power_kw: float
    rated_voltage_v: float
    rated_frequency_hz: float
    poles: int
    r1: float
    x1: float
    r2: float
    x2: float
    xm0: float             # unsaturated-knee magnetising reactance at E0, rated f
    e0_v: float            # air-gap phase voltage of the knee reference
    k_sat: float           # magnetising current ~ phi^k
    core_w: float          # core loss at phi = 1, rated f
    fw_w: float            # friction and windage at synchronous speed, rated f
    k_ll: float            # stray load loss 3 k_ll I2^2 [ohm]
    i_ref_a: float         # current at which the windings reach T_REF (about rated)
    give_breakdown: bool   # nameplate/data sheet states breakdown and locked-rotor torque
    skin: float = 0.0      # deep-bar rotor: R2(s) = R2 (1 + skin s^1.5)


SMALL = Machine("2.2kW", 2.2, 400.0, 50.0, 4, r1=3.1, x1=3.9, r2=2.6, x2=4.6, xm0=78.0, e0_v=221.0,
                k_sat=3.5, core_w=95.0, fw_w=22.0, k_ll=0.9, i_ref_a=4.8, give_breakdown=False, skin=1.2)
LARGE = Machine("200kW", 200.0, 400.0, 50.0, 4, r1=0.0078, x1=0.058, r2=0.0068, x2=0.066, xm0=2.25,
                e0_v=225.0, k_sat=4.5, core_w=2300.0, fw_w=1900.0, k_ll=0.0052, i_ref_a=345.0,
                give_breakdown=True, skin=9.0)
MACHINES = (SMALL, LARGE)


@dataclass(frozen=True)
class Point:
    slip: float
    speed_rpm: float
    current_a: float
    power_factor: float
    input_w: float
    output_w: float
    torque_nm: float       # shaft torque
    winding_degc: float


def _sync_rpm(m: Machine, f: float) -> float:
    return 120.0 * f / m.poles


def _solve(m: Machine, v_ll: float, f: float, s: float, temp: float) -> Point:
    fr = f / m.rated_frequency_hz
    v = v_ll / SQRT3
    r1 = m.r1 * (K_COPPER + temp) / (K_COPPER + T_REF_DEGC)
    r2 = m.r2 * (K_ALUMINIUM + temp) / (K_ALUMINIUM + T_REF_DEGC) * (1.0 + m.skin * s ** 1.5)
    z1 = complex(r1, m.x1 * fr)
    z2 = complex(r2 / s, m.x2 * fr)
    e = v * 0.95 + 0j
    for _ in range(200):
        phi = (abs(e) / fr) / m.e0_v
        xm = m.xm0 * fr * phi ** (1.0 - m.k_sat)
        p_core = m.core_w / 3.0 * phi ** 2 * (HYSTERESIS_SHARE * fr + (1.0 - HYSTERESIS_SHARE) * fr ** 2)
        rc = abs(e) ** 2 / p_core
        ym = 1.0 / rc + 1.0 / complex(0.0, xm)
        zp = 1.0 / (ym + 1.0 / z2)
        i1 = v / (z1 + zp)
        e_new = v - i1 * z1
        if abs(e_new - e) < 1e-10 * v:
            e = e_new
            break
        e = 0.5 * e + 0.5 * e_new
    i2 = e / z2
    n_s = _sync_rpm(m, f)
    n = n_s * (1.0 - s)
    p_ag = 3.0 * abs(i2) ** 2 * r2 / s
    n_ratio = n / _sync_rpm(m, m.rated_frequency_hz)
    fw = m.fw_w * (FRICTION_SHARE * n_ratio + (1.0 - FRICTION_SHARE) * n_ratio ** 3)
    p_out = p_ag * (1.0 - s) - fw - 3.0 * m.k_ll * abs(i2) ** 2
    s_in = 3.0 * v * i1.conjugate()
    omega_s = n_s * 2.0 * math.pi / 60.0
    stray = 3.0 * m.k_ll * abs(i2) ** 2
    # shaft torque: electromagnetic less the loss torques (at standstill the stray load
    # loss is taken at synchronous speed; friction and windage vanish)
    loss_torque = (fw + stray) / (omega_s * (1.0 - s)) if s < 1.0 else stray / omega_s
    return Point(s, n, abs(i1), s_in.real / abs(s_in), s_in.real, p_out, p_ag / omega_s - loss_torque, temp)


def solve_warm(m: Machine, v_ll: float, f: float, s: float) -> Point:
    """Solve at a slip with the windings at their equilibrium temperature for that current."""
    temp = AMBIENT_DEGC + RISE_K
    for _ in range(50):
        p = _solve(m, v_ll, f, s, temp)
        new = AMBIENT_DEGC + RISE_K * (p.current_a / m.i_ref_a) ** 2
        if abs(new - temp) < 1e-6:
            break
        temp = new
    return _solve(m, v_ll, f, s, temp)


def _breakdown_slip(m: Machine, v_ll: float, f: float, temp: float) -> float:
    res = minimize_scalar(lambda s: -_solve(m, v_ll, f, s, temp).torque_nm, bounds=(1e-4, 0.95),
                          method="bounded", options={"xatol": 1e-7})
    return float(res.x)


def solve_load(m: Machine, v_ll: float, f: float, load_pu: float) -> Point:
    """The exact operating point delivering ``load_pu`` of rated output on the stable side."""
    target = load_pu * m.rated_power_kw * 1000.0
    s_bd = _breakdown_slip(m, v_ll, f, AMBIENT_DEGC + RISE_K)
    s = brentq(lambda x: solve_warm(m, v_ll, f, x).output_w - target, 1e-6, s_bd, xtol=1e-12)
    return solve_warm(m, v_ll, f, s)


def breakdown_torque_nm(m: Machine, v_ll: float, f: float, temp: float) -> float:
    """Maximum shaft torque at a voltage and frequency, windings at ``temp``."""
    return _solve(m, v_ll, f, _breakdown_slip(m, v_ll, f, temp), temp).torque_nm


@lru_cache(maxsize=None)
def nameplate(m: Machine) -> dict:
    """The rated point rounded as a nameplate shows it (contract fields)."""
    p = solve_load(m, m.rated_voltage_v, m.rated_frequency_hz, 1.0)
    plate = dict(tag=f"BENCH-{m.name}", rated_power_kw=m.rated_power_kw, rated_voltage_v=m.rated_voltage_v,
                 rated_current_a=round(p.current_a, 1), rated_frequency_hz=m.rated_frequency_hz,
                 rated_speed_rpm=round(p.speed_rpm), poles=m.poles, rated_power_factor=round(p.power_factor, 2),
                 rated_efficiency_pct=round(100.0 * p.output_w / p.input_w, 1), design="N")
    if m.give_breakdown:
        t_bd = breakdown_torque_nm(m, m.rated_voltage_v, m.rated_frequency_hz, p.winding_degc)
        lr = _solve(m, m.rated_voltage_v, m.rated_frequency_hz, 1.0, p.winding_degc).torque_nm
        plate["breakdown_torque_pct"] = round(100.0 * t_bd / p.torque_nm)
        plate["locked_rotor_torque_pct"] = round(100.0 * lr / p.torque_nm)
    return plate


@dataclass(frozen=True)
class Case:
    machine: Machine
    voltage_pct: float
    frequency_pct: float
    load_pct: float

    @property
    def id(self) -> str:
        return f"{self.machine.name}-V{self.voltage_pct:g}-f{self.frequency_pct:g}-L{self.load_pct:g}"


LOADS_PCT = (10.0, 25.0, 50.0, 75.0, 90.0, 100.0, 115.0)
VOLTAGES_PCT = (95.0, 100.0, 105.0)
FREQUENCIES_PCT = (98.0, 100.0, 102.0)
CASES = tuple(Case(m, v, f, load) for m in MACHINES for v in VOLTAGES_PCT for f in FREQUENCIES_PCT
              for load in LOADS_PCT)


@lru_cache(maxsize=None)
def truth_and_record(case: Case) -> tuple[dict, dict]:
    """(truth, record): the exact point and the contract record an engineer would type."""
    m = case.machine
    v = m.rated_voltage_v * case.voltage_pct / 100.0
    f = m.rated_frequency_hz * case.frequency_pct / 100.0
    p = solve_load(m, v, f, case.load_pct / 100.0)
    rated = solve_load(m, m.rated_voltage_v, m.rated_frequency_hz, 1.0)
    t_bd = breakdown_torque_nm(m, v, f, p.winding_degc)
    lr = _solve(m, v, f, 1.0, p.winding_degc).torque_nm
    truth = dict(load_pct=100.0 * p.output_w / (m.rated_power_kw * 1000.0),
                 torque_pct=100.0 * p.torque_nm / rated.torque_nm,
                 breakdown_margin=t_bd / p.torque_nm, locked_rotor_torque_pct=100.0 * lr / rated.torque_nm,
                 efficiency_pct=100.0 * p.output_w / p.input_w, slip=p.slip, speed_rpm=p.speed_rpm,
                 voltage_v=v, frequency_hz=f)
    i = round(p.current_a, 1)
    vr = round(v)
    record = dict(nameplate(m), frequency_hz=round(f, 2), speed_rpm=round(p.speed_rpm),
                  current_l1_a=i, current_l2_a=i, current_l3_a=i, voltage_l12_v=vr, voltage_l23_v=vr,
                  voltage_l31_v=vr, power_kw=round(p.input_w / 1000.0, 1), power_factor=round(p.power_factor, 2),
                  minutes_running=120)
    return truth, record


@lru_cache(maxsize=None)
def run_engine() -> dict:
    """Engine results for every case, through the public API (one batch)."""
    from slipwise.engine import interpret_records

    records = [truth_and_record(c)[1] for c in CASES]
    return {c.id: r for c, r in zip(CASES, interpret_records(records))}


def minimum_spec_margin(case: Case, truth: dict) -> float:
    """The truth's breakdown margin for a motor built at its design's minimum breakdown torque [-].

    The engine judges ``near_breakdown`` on the pessimistic end: where the
    nameplate gives no breakdown torque, a motor of this rating may have been
    built at the standard's minimum (IEC 60034-12 design N, from memory in
    :func:`slipwise.physics.typical.minimum_breakdown_torque_pct`); the truth
    scaled to that minimum says whether such a motor would be near breakdown.
    """
    from slipwise.physics import typical

    m = case.machine
    if m.give_breakdown:
        return truth["breakdown_margin"]
    rated = solve_load(m, m.rated_voltage_v, m.rated_frequency_hz, 1.0)
    true_pct = 100.0 * breakdown_torque_nm(m, m.rated_voltage_v, m.rated_frequency_hz, rated.winding_degc) \
        / rated.torque_nm
    minimum = float(typical.minimum_breakdown_torque_pct(m.rated_power_kw, m.poles, "N"))
    return truth["breakdown_margin"] * min(minimum / true_pct, 1.0)


def expected_flags(case: Case, truth: dict, result: dict) -> set:
    """Flags the truth calls for (the supply judgement taken from the exact V and f).

    A flag means its quantity is beyond the threshold (verdicts on the band):
    the supply flag is raised outside IEC 60034-1 zone B (zone B is "at the
    limit"), ``over_service_factor`` only where the nameplate gives a service
    factor (the bench's do not), and ``near_breakdown`` also where a motor at
    the design's minimum breakdown torque would be near breakdown
    (:func:`minimum_spec_margin`).
    """
    from slipwise.physics import supply

    flags = set()
    load = round(truth["load_pct"], 6)     # solver noise: 100.0000000001 is at rated load
    if load > 100.0:
        flags.add("overloaded")
    if load < 40.0:
        flags.add("underloaded")
    if truth["breakdown_margin"] < 1.5 or minimum_spec_margin(case, truth) < 1.5:
        flags.add("near_breakdown")
    zone = supply.iec_zone_code(case.voltage_pct - 100.0, case.frequency_pct - 100.0)
    if int(zone) == 3:
        flags.add("supply_out_of_tolerance")
    # constant-torque load: breakaway equal to the running torque (common practice)
    need = max(truth["torque_pct"], 10.0)
    if truth["locked_rotor_torque_pct"] / need < 1.3:
        flags.add("starting_torque_low")
    return flags


def margin_low(result: dict):
    """The pessimistic end of the breakdown margin."""
    return result["breakdown_margin_low"]


def table_rows():
    results = run_engine()
    for c in CASES:
        truth, _ = truth_and_record(c)
        yield c, truth, results[c.id]


def main() -> None:
    print(f"{'case':28} {'verdict':6} {'true%':>6} {'est%':>6} {'band%':>13} {'cover':>5} {'m_true':>6} {'m_est':>6} "
          f"{'m_low':>6}  flags (+missing -false)")
    for c, truth, r in table_rows():
        if r.get("error"):
            print(f"{c.id:28} ERROR {r['error']}")
            continue
        cover = r["load_low_pct"] <= truth["load_pct"] <= r["load_high_pct"]
        exp = expected_flags(c, truth, r)
        got = set(r["flags"])
        diff = " ".join([f"+{x}" for x in sorted(exp - got)] + [f"-{x}" for x in sorted(got - exp)])
        print(f"{c.id:28} {r['verdict']:6} {truth['load_pct']:6.1f} {r['load_pct']:6.1f} "
              f"{r['load_low_pct']:6.1f}-{r['load_high_pct']:6.1f} {'yes' if cover else 'NO':>5} "
              f"{truth['breakdown_margin']:6.2f} {r['breakdown_margin']:6.2f} {margin_low(r):6.2f}  "
              f"{','.join(sorted(got)) or '-'} {diff}"
              + (f"  at the limit: {r['limit_flags'].replace(';', ',')}" if r["limit_flags"] else ""))


if __name__ == "__main__":
    main()
