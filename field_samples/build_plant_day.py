"""Build plant_day.csv: every reading of readings.csv joined with its nameplate from motors.csv.

The result is one self-contained file for ``slipwise analyze field_samples/plant_day.csv``.
All values are copied as text, so re-running the script gives a byte-identical file.

Usage: python field_samples/build_plant_day.py
"""

from __future__ import annotations

import sys
from pathlib import Path

import pandas as pd

HERE = Path(__file__).resolve().parent
SITE_COLUMNS = ("site", "location", "description")


def _read(name: str) -> pd.DataFrame:
    return pd.read_csv(HERE / name, dtype=str, keep_default_na=False, encoding="utf-8")


def build() -> pd.DataFrame:
    motors = _read("motors.csv")
    readings = _read("readings.csv")
    missing = sorted(set(readings["tag"]) - set(motors["tag"]))
    if missing:
        raise SystemExit(f"readings.csv names tag(s) not in motors.csv: {', '.join(missing)}")
    merged = readings.merge(motors, on="tag", how="left", validate="many_to_one")
    nameplate = [c for c in motors.columns if c != "tag" and c not in SITE_COLUMNS]
    reading = [c for c in readings.columns if c not in ("tag", "technician")]
    order = ["tag", *SITE_COLUMNS, *nameplate, *reading, "technician"]
    return merged[order]


def main() -> int:
    out = HERE / "plant_day.csv"
    frame = build()
    frame.to_csv(out, index=False, lineterminator="\n", encoding="utf-8")
    print(f"wrote {out.name}: {len(frame)} readings, {len(frame.columns)} columns", file=sys.stderr)
    return 0


if __name__ == "__main__":
    sys.exit(main())
