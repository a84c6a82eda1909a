"""Engine batch benchmark: 1,000,000 readings over 1,000 nameplates.

Prints the time to read the CSV with pandas, the time to interpret it (all
circuit fits included, cold cache), their ratio, and the peak memory of the
process. Goal on a 2-core machine: interpretation <= 1.0x the read time, peak
memory <= 1.5 GB. Not a timed test: it prints figures.

    .venv/bin/python tests/benchmarks/bench_engine.py [--rows 1000000] [--nameplates 1000] [--command-rows 200000]

A second figure times the whole command (``slipwise analyze``: read the CSV, interpret, write the
output) on ``--command-rows`` readings against pandas reading the same input and writing the same-shaped
output, with the default output and with ``--findings-legend``, and prints the output sizes in MB.
"""

from __future__ import annotations

import argparse
import json
import os
import resource
import sys
import tempfile
import time
from pathlib import Path

import numpy as np
import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[2] / "server"))

from slipwise import engine  # noqa: E402
from slipwise.cli_analyze import add_analyze_parser, analyze_frame  # noqa: E402


def make_frame(rows: int, nameplates: int, random_state: int = 7) -> pd.DataFrame:
    rng = np.random.default_rng(random_state)
    kw = np.round(np.exp(rng.uniform(np.log(0.75), np.log(250), nameplates)), 2)
    hz = rng.choice([50.0, 60.0], nameplates)
    poles = rng.choice([2, 4, 6], nameplates, p=[0.3, 0.5, 0.2])
    ns = 120 * hz / poles
    slip_r = rng.uniform(0.01, 0.045, nameplates)
    n_r = np.round(ns * (1 - slip_r))
    v_r = np.where(hz == 50, 400.0, 460.0)
    eta = np.clip(np.round(95.5 - 6.0 * np.exp(-kw / 8.0) - rng.uniform(0, 2, nameplates), 1), 70, 97)
    # a real motor's rated slip leaves room for its efficiency (rotor copper loss is s/(1-s) of output)
    s_real = 1 - n_r / ns
    eta = np.minimum(eta, np.floor(1000.0 / (1.0 + s_real / (1.0 - s_real) / 0.9)) / 10.0 - 1.0)
    pf = np.clip(np.round(0.88 - 0.12 * np.exp(-kw / 6.0) - rng.uniform(0, 0.05, nameplates), 2), 0.6, 0.92)
    i_r = np.round(kw * 1000 / (np.sqrt(3) * v_r * pf * eta / 100), 1)
    plate = pd.DataFrame({
        "tag": [f"M-{k:04d}" for k in range(nameplates)], "rated_power_kw": kw, "rated_voltage_v": v_r,
        "rated_current_a": i_r, "rated_frequency_hz": hz, "rated_speed_rpm": n_r,
        "rated_power_factor": pf, "rated_efficiency_pct": eta,
        "supply": rng.choice(["mains", "drive"], nameplates, p=[0.85, 0.15]),
        "driven_load": rng.choice(["variable_torque", "constant_torque"], nameplates),
    })
    which = rng.integers(0, nameplates, rows)
    df = plate.iloc[which].reset_index(drop=True)
    on_drive = df["supply"].to_numpy() == "drive"
    f = np.where(on_drive, rng.uniform(30, 50, rows) * df["rated_frequency_hz"] / 50,
                 df["rated_frequency_hz"] * rng.normal(1, 0.004, rows))
    load = rng.uniform(0.2, 1.1, rows)
    ns_row = 120 * f / poles[which]
    s_r = 1 - df["rated_speed_rpm"] / (120 * df["rated_frequency_hz"] / poles[which])
    speed = np.round(ns_row - load * s_r * 120 * df["rated_frequency_hz"] / poles[which], 0)
    v = df["rated_voltage_v"] * np.where(on_drive, np.minimum(f / df["rated_frequency_hz"], 1), 1)
    i_load = df["rated_current_a"] * np.sqrt(0.35 ** 2 + (1 - 0.35 ** 2) * load ** 2)
    for k, ph in enumerate(("l12", "l23", "l31")):
        df[f"voltage_{ph}_v"] = np.round(v * rng.normal(1, 0.006, rows), 1)
    for k, ph in enumerate(("l1", "l2", "l3")):
        df[f"current_{ph}_a"] = np.round(i_load * rng.normal(1, 0.02, rows), 2)
    df["frequency_hz"] = np.round(f, 2)
    df["speed_rpm"] = speed
    df["power_kw"] = np.where(rng.random(rows) < 0.5, np.round(load * df["rated_power_kw"] / 0.9, 2), np.nan)
    return df


def whole_command(path: Path, out_dir: Path, legend: bool) -> tuple[float, float]:
    """``slipwise analyze`` in this process (read, interpret, write): seconds, and MB written (with the legend)."""
    out = out_dir / ("keyed.csv" if legend else "default.csv")
    argv = [str(path), "-o", str(out)] + (["--findings-legend", str(out_dir / "legend.csv")] if legend else [])
    parser = argparse.ArgumentParser()
    add_analyze_parser(parser.add_subparsers())
    args = parser.parse_args(["analyze", *argv])
    engine.clear_caches()
    t0 = time.perf_counter()
    args.func(args)
    seconds = time.perf_counter() - t0
    size = out.stat().st_size + ((out_dir / "legend.csv").stat().st_size if legend else 0)
    return seconds, size / 1e6


def written_and_read(frame: pd.DataFrame, path: Path) -> tuple[pd.DataFrame, float]:
    """``frame`` written to ``path`` as CSV, then read back as ``analyze`` reads it; (the frame read, seconds to read)."""
    frame.to_csv(path, index=False)
    del frame
    t0 = time.perf_counter()
    df = pd.read_csv(path, keep_default_na=False, na_values=[""],
                     dtype={c: str for c in ("tag", "supply", "driven_load", "design", "taken_at")})
    return df, time.perf_counter() - t0


def main() -> None:
    ap = argparse.ArgumentParser()
    ap.add_argument("--rows", type=int, default=1_000_000)
    ap.add_argument("--nameplates", type=int, default=1000)
    ap.add_argument("--command-rows", type=int, default=200_000,
                    help="rows for the whole-command figure (read + interpret + write); 0 skips it")
    ap.add_argument("--json", metavar="PATH", help="also write the figures as JSON to PATH")
    args = ap.parse_args()
    with tempfile.TemporaryDirectory() as tmp:
        path = Path(tmp) / "readings.csv"
        df, t_read = written_and_read(make_frame(args.rows, args.nameplates), path)
    engine.clear_caches()
    t0 = time.perf_counter()
    out = analyze_frame(df)
    t_interp = time.perf_counter() - t0
    errors = int((out["error"] != "").sum())
    peak_mb = resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024
    del df, out
    figures = {
        "rows": args.rows, "nameplates": args.nameplates, "csv_read_s": round(t_read, 3),
        "interpret_s": round(t_interp, 3), "interpret_over_read": round(t_interp / t_read, 3),
        "peak_memory_mb": round(peak_mb, 1), "rows_with_error": errors,
        "goal": "interpret_over_read <= 1.0, peak_memory_mb <= 1536",
    }
    if args.command_rows:
        figures["whole_command"] = command_figures(args.command_rows, args.nameplates)
    print(json.dumps(figures, indent=2))
    if args.json:
        Path(args.json).write_text(json.dumps(figures, indent=2))


def command_figures(rows: int, nameplates: int) -> dict:
    """The whole command on ``rows`` readings against pandas reading the input and writing the same-shaped output.

    The reference is what pandas alone spends on the same files: ``read_csv`` of the readings and
    ``to_csv`` of the default output frame (the same rows, columns and texts). The command is timed
    with the default output and with ``--findings-legend`` (findings as keys plus one legend file).
    """
    with tempfile.TemporaryDirectory() as tmp:
        tmp = Path(tmp)
        path = tmp / "readings.csv"
        df, t_read = written_and_read(make_frame(rows, nameplates), path)
        shaped = analyze_frame(df)
        del df
        t0 = time.perf_counter()
        shaped.to_csv(tmp / "pandas.csv", index=False)
        t_write = time.perf_counter() - t0
        pandas_mb = (tmp / "pandas.csv").stat().st_size / 1e6
        del shaped
        t_default, mb_default = whole_command(path, tmp, legend=False)
        t_keyed, mb_keyed = whole_command(path, tmp, legend=True)
    reference = t_read + t_write
    return {
        "rows": rows, "pandas_read_s": round(t_read, 3), "pandas_write_s": round(t_write, 3),
        "pandas_output_mb": round(pandas_mb, 1),
        "command_s": round(t_default, 3), "command_over_pandas": round(t_default / reference, 3),
        "output_mb": round(mb_default, 1),
        "command_findings_legend_s": round(t_keyed, 3),
        "command_findings_legend_over_pandas": round(t_keyed / reference, 3),
        "output_findings_legend_mb": round(mb_keyed, 1),
    }


if __name__ == "__main__":
    main()
