"""Hand-listed mutations of the physics and the engine, and whether the tests catch them.

Run from the repository root with the project's interpreter::

    .venv/bin/python tests/mutation_list.py            # all mutations
    .venv/bin/python tests/mutation_list.py M3 M7a     # some of them

Each mutation is one text replacement in one file: (file, old text, new text).
The file is restored afterwards whatever happens. An old text that is not found
exactly once stops the run with an error: after a refactoring (the engine split,
a formula moved into the physics package), update that entry's file and texts to
where the formula now lives. Exit status 1 if any mutation survives.
Not collected by pytest (no ``test_`` prefix).
"""

from __future__ import annotations

import subprocess
import sys
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
PHYS = "server/slipwise/physics/"
ENGINE = "server/slipwise/engine/pipeline.py"
VERDICTS = "server/slipwise/engine/verdicts.py"
NAMEPLATE = "server/slipwise/engine/nameplate.py"


@dataclass(frozen=True)
class Mutation:
    name: str
    what: str
    file: str
    old: str
    new: str
    tests: tuple[str, ...]


MUTATIONS = (
    Mutation("M1", "stator copper loss ~ load^2 instead of current^2 (input-power method)", ENGINE,
             "efficiency.scaled_losses_w(central, flux, freq_ratio, speed_ratio, current_ratio)",
             "efficiency.scaled_losses_w(central, flux, freq_ratio, speed_ratio, out_slip.value)",
             ("tests/engine/test_physics_laws.py",)),
    Mutation("M1b", "stator copper loss ~ load^2 instead of current^2 (loss model)", PHYS + "efficiency.py",
             "stator = budget.stator_w * np.asarray(current_ratio, dtype=float) ** 2",
             "stator = budget.stator_w * np.asarray(speed_ratio, dtype=float) ** 2",
             ("tests/physics/test_efficiency.py",)),
    Mutation("M2", "past-breakdown check dropped", ENGINE,
             "stable = torque_speed.is_stable(motor_slope, load_slope) & (s_run < s_max)",
             "stable = torque_speed.is_stable(motor_slope, load_slope)",
             ("tests/engine/test_physics_laws.py",)),
    Mutation("M3", "stability inequality flipped", PHYS + "torque_speed.py",
             "return np.asarray(motor_slope, dtype=float) < np.asarray(load_slope, dtype=float)",
             "return np.asarray(motor_slope, dtype=float) > np.asarray(load_slope, dtype=float)",
             ("tests/physics/test_torque_speed.py",)),
    Mutation("M4", "slip band upper limit tol instead of tol/(1 - tol)", PHYS + "load.py",
             "half_high = _combine_rel(tol / (1.0 - tol), tach, volt)",
             "half_high = _combine_rel(tol, tach, volt)",
             ("tests/physics/test_load.py",)),
    Mutation("M5", "rotor loss s P instead of s/(1 - s) P (rated budget)", PHYS + "efficiency.py",
             "rotor = rotor_copper_loss_w(s, p_out + fw)",
             "rotor = s * (p_out + fw)",
             ("tests/physics/test_efficiency.py",)),
    Mutation("M5b", "rotor loss s P instead of s/(1 - s) P (operating point)", PHYS + "efficiency.py",
             "rotor = rotor_copper_loss_w(s, np.asarray(output_w, dtype=float) + fw)",
             "rotor = s * (np.asarray(output_w, dtype=float) + fw)",
             ("tests/physics/test_efficiency.py",)),
    Mutation("M6", "slip taken at the measured frequency with V/V_r only (no (V/f)^2)", ENGINE,
             "load.slip_method(slip_rpm, s_r * ns_r, flux, speed_ratio,",
             "load.slip_method(slip_rpm, s_r * ns_r, v / v_r, speed_ratio,",
             ("tests/engine/test_physics_laws.py",)),
    Mutation("M7a", "core loss held constant (loss model)", PHYS + "efficiency.py",
             "core = budget.core_w * np.asarray(flux_ratio, dtype=float) ** 2 * np.asarray(frequency_ratio, "
             "dtype=float)",
             "core = budget.core_w",
             ("tests/physics/test_efficiency.py",)),
    Mutation("M7b", "core loss held constant (input-power method)", ENGINE,
             "efficiency.scaled_losses_w(central, flux, freq_ratio, speed_ratio, current_ratio)",
             "efficiency.scaled_losses_w(central, 1.0, 1.0, speed_ratio, current_ratio)",
             ("tests/engine/test_physics_laws.py",)),
    Mutation("M8", "locked-rotor torque not scaled by V^2", PHYS + "torque_speed.py",
             "lrt_now = locked_rotor_torque_pct * (voltage_v / rated_voltage_v) ** 2",
             "lrt_now = locked_rotor_torque_pct",
             ("tests/engine/test_physics_laws.py",)),
    Mutation("M9", "hp taken as 1000 W", PHYS + "units.py",
             "HORSEPOWER_W = 550.0 * FOOT_M * POUND_FORCE_N",
             "HORSEPOWER_W = 1000.0",
             ("tests/physics/test_units.py",)),
    Mutation("M10", "no voltage (flux) factor in the current method", PHYS + "load.py",
             "factor = np.asarray(flux_ratio, dtype=float) * np.asarray(speed_ratio, dtype=float)",
             "factor = np.asarray(speed_ratio, dtype=float)",
             ("tests/physics/test_load.py",)),
    Mutation("M11", "no saturation: no-load current in proportion to the flux (engine)", ENGINE,
             "i0, i0_low, i0_high = typical.saturated_no_load_current(i0_r, flux)",
             "i0 = i0_low = i0_high = load.magnetising_current_a(i0_r, flux)",
             ("tests/bench/test_virtual_bench.py",)),
    Mutation("M12", "breakdown margin's low end from the central breakdown torque", ENGINE,
             'breakdown_margin_band(bd_pct, pl("bd_pct"), pl("bd_low_pct"),',
             'breakdown_margin_band(bd_pct, pl("bd_pct"), pl("bd_pct"),',
             ("tests/bench/test_virtual_bench.py",)),
    Mutation("M13", "overloaded judged on the high end of the band (central-value verdicts)", VERDICTS,
             "over = V.judge_maximum(basis_low, basis_high, th.overloaded_pct)",
             "over = V.judge_maximum(basis_high, basis_high, th.overloaded_pct)",
             ("tests/engine/test_verdicts.py",)),
    Mutation("M14", "near_breakdown judged on the value with the low end as its band", VERDICTS,
             "breakdown = V.judge_minimum(margin_low, margin_low, th.near_breakdown_margin)",
             "breakdown = V.judge_minimum(margin_low + 1.0, margin_low, th.near_breakdown_margin)",
             ("tests/engine/test_verdicts.py",)),
    Mutation("M15", "a defaulted service factor of 1.0 judged as given", ENGINE,
             'sf_given=pl("service_factor_given")',
             "sf_given=True",
             ("tests/engine/test_interpret.py",)),
    Mutation("M16", "an assumed efficiency not capped by the rated slip", NAMEPLATE,
             "capped = neither & (eta > eta_cap)",
             "capped = neither & (eta > 2.0)",
             ("tests/engine/test_verdicts.py",)),
    Mutation("M17", "a method clipped at zero keeps the floor as its low-side width in the fusion", PHYS + "load.py",
             "s_lo_open = np.where(v <= lo, np.maximum(s_lo, s_hi), s_lo)",
             "s_lo_open = s_lo",
             ("tests/physics/test_load.py", "tests/bench/test_virtual_bench.py")),
    Mutation("M18", "a power reading's last stated digit left out of its accuracy", ENGINE,
             'meter.reading_accuracy_pct(r["power_accuracy_pct"], r["power_kw"])',
             'r["power_accuracy_pct"]',
             ("tests/bench/test_virtual_bench.py",)),
    Mutation("M19", "the rounding to the stated digit taken as a quarter of the step, not half", PHYS + "meter.py",
             "rounding = 100.0 * 0.5 * stated_resolution(x) / np.abs(x)",
             "rounding = 100.0 * 0.25 * stated_resolution(x) / np.abs(x)",
             ("tests/physics/test_meter.py",)),
    Mutation("S1", "star-delta relay judged against the full FLA (engine passes no starter)", "server/slipwise/engine/sheet.py",
             'ovl = protection.overload_setting(np.where(np.isnan(setting), 1.0, setting), pl("rated_current_a"),\n'
             '                                      t["starter"], standard, service_factor=sf)',
             'ovl = protection.overload_setting(np.where(np.isnan(setting), 1.0, setting), pl("rated_current_a"),\n'
             '                                      np.where(t["starter"] == "", "", "direct"), standard, service_factor=sf)',
             ("tests/engine/test_sheet.py",)),
    Mutation("S2", "service factor ignored in the NEC limit", "server/slipwise/engine/sheet.py",
             'sf = np.where(pl("service_factor_given"), pl("service_factor"), np.nan)',
             'sf = np.full(n, np.nan)',
             ("tests/engine/test_sheet.py",)),
    Mutation("S3", "instrument due date compared the wrong way", "server/slipwise/engine/sheet.py",
             'for name, serial, due in items if due < day]',
             'for name, serial, due in items if due > day]',
             ("tests/engine/test_sheet.py",)),
    Mutation("S4", "PI minimum: class A given 2.0 (IEEE 43: 1.5)", PHYS + "insulation.py",
             'PI_MINIMUM = {"a": 1.5, "b": 2.0, "f": 2.0, "h": 2.0}',
             'PI_MINIMUM = {"a": 2.0, "b": 2.0, "f": 2.0, "h": 2.0}',
             ("tests/engine/test_sheet.py",)),
)


def run(m: Mutation) -> bool:
    """Apply, test, restore. True when the tests catch the mutation (fail)."""
    path = ROOT / m.file
    original = path.read_text()
    count = original.count(m.old)
    if count != 1:
        raise SystemExit(f"{m.name}: old text found {count} times in {m.file} (expected once); update the "
                         f"entry to where the formula lives now:\n    {m.old}")
    try:
        path.write_text(original.replace(m.old, m.new))
        proc = subprocess.run([sys.executable, "-m", "pytest", "-x", "-q", "-p", "no:cacheprovider", *m.tests],
                              cwd=ROOT, capture_output=True, text=True)
    finally:
        path.write_text(original)
    if proc.returncode not in (0, 1):
        raise SystemExit(f"{m.name}: pytest could not run (exit {proc.returncode}):\n{proc.stdout[-2000:]}")
    caught = proc.returncode == 1
    failed = [line.split(" - ")[0].removeprefix("FAILED ") for line in proc.stdout.splitlines()
              if line.startswith("FAILED")]
    print(f"{m.name:4} {'caught  ' if caught else 'SURVIVED'} {m.what}"
          + (f"\n       by {', '.join(failed)}" if failed else ""))
    return caught


def main(argv: list[str]) -> int:
    chosen = [m for m in MUTATIONS if not argv or m.name in argv]
    unknown = set(argv) - {m.name for m in MUTATIONS}
    if unknown:
        raise SystemExit(f"unknown mutation(s): {', '.join(sorted(unknown))}")
    survived = [m.name for m in chosen if not run(m)]
    print(f"{len(chosen) - len(survived)} of {len(chosen)} caught" + (f"; survived: {survived}" if survived else ""))
    return 1 if survived else 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
