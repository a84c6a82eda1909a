"""`slipwise analyze` driven as a user would: a subprocess on real files."""

import json
import os
import subprocess
import sys
from pathlib import Path

import pandas as pd

from slipwise import contract as C

ROOT = Path(__file__).resolve().parents[2]
SAMPLES = ROOT / "field_samples"


def run(*args, cwd=None):
    exe = Path(sys.executable).with_name("slipwise")
    cmd = [str(exe)] if exe.exists() else [sys.executable, "-m", "slipwise.cli"]
    return subprocess.run(cmd + ["analyze", *map(str, args)], capture_output=True, text=True, cwd=cwd or ROOT,
                          timeout=120, env={**os.environ, "PYTHONPATH": str(ROOT)})


PLATE = ("tag,rated_power_kw,rated_voltage_v,rated_current_a,rated_frequency_hz,rated_speed_rpm,"
         "rated_power_factor,rated_efficiency_pct")
GOOD = "P-1,11,400,21.5,50,1460,0.81,91.4"
READ = "frequency_hz,speed_rpm,current_l1_a,current_l2_a,current_l3_a,voltage_l12_v,voltage_l23_v,voltage_l31_v"


def write(tmp_path, name, text):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_all_rows_good_exit_0(tmp_path):
    src = write(tmp_path, "r.csv", f"{PLATE},{READ}\n{GOOD},50,1472,16.4,16.8,16.2,402,398,405\n")
    out = tmp_path / "out.csv"
    proc = run(src, "-o", out)
    assert proc.returncode == 0, proc.stderr
    frame = pd.read_csv(out, keep_default_na=False)
    # input columns first, then every result column in contract order
    assert list(frame.columns[-len(C.RESULT_COLUMNS):]) == list(C.RESULT_COLUMNS)
    assert frame.loc[0, "sync_speed_rpm"] == 1500
    assert frame.loc[0, "poles"] == 4
    assert frame.loc[0, "error"] == ""
    assert "1 readings: 1 interpreted" in proc.stderr


def test_bad_row_exit_1_names_field_and_range(tmp_path):
    src = write(tmp_path, "r.csv", f"{PLATE},{READ}\n{GOOD},50,1472,16,16,16,400,400,400\n"
                                   f"{GOOD},50,14720,16,16,16,400,400,400\n")
    out = tmp_path / "out.csv"
    proc = run(src, "-o", out)
    assert proc.returncode == 1
    frame = pd.read_csv(out, keep_default_na=False)
    assert frame.loc[0, "error"] == ""
    assert frame.loc[1, "error"] == "speed_rpm = 14720 is outside the allowed range 1 to 7500 rpm"
    assert frame.loc[1, "error_field"] == "speed_rpm"
    assert frame.loc[1, "load_pct"] == ""


def test_usage_errors_exit_2(tmp_path):
    assert run(tmp_path / "missing.csv").returncode == 2
    src = write(tmp_path, "r.csv", f"{PLATE},{READ},colour\n{GOOD},50,1472,16,16,16,400,400,400,red\n")
    proc = run(src)
    assert proc.returncode == 2 and "unknown column" in proc.stderr and "colour" in proc.stderr
    assert run(src.with_name("x.csv"), "--format", "xml").returncode == 2
    good = write(tmp_path, "g.csv", f"{PLATE},{READ}\n{GOOD},50,1472,16,16,16,400,400,400\n")
    assert run(good, "--threshold", "underloaded_pct=900").returncode == 2
    assert "Traceback" not in proc.stderr


def test_motors_file_join_and_json(tmp_path):
    motors = write(tmp_path, "m.csv", f"{PLATE},site\n{GOOD},North plant\n")
    readings = write(tmp_path, "r.csv", f"tag,{READ},technician\nP-1,50,1472,16,16,16,400,400,400,A. Tech\n"
                                        f"P-9,50,1472,16,16,16,400,400,400,A. Tech\n")
    proc = run(readings, "--motors", motors, "--format", "json")
    assert proc.returncode == 1
    rows = [json.loads(line) for line in proc.stdout.splitlines()]
    assert rows[0]["site"] == "North plant" and rows[0]["error"] == ""
    assert isinstance(rows[0]["flags"], list)
    assert rows[1]["error"] == "tag 'P-9' is not in the motors file"


def test_threshold_override_changes_flags(tmp_path):
    src = write(tmp_path, "r.csv", f"{PLATE},{READ}\n{GOOD},50,1472,16.4,16.8,16.2,402,398,405\n")
    out = tmp_path / "o.csv"
    assert run(src, "-o", out, "--threshold", "underloaded_pct=90").returncode == 0
    assert "underloaded" in pd.read_csv(out, keep_default_na=False).loc[0, "flags"]


def test_demo_file_exercises_every_flag(tmp_path):
    out = tmp_path / "results.csv"
    proc = run(SAMPLES / "plant_day.csv", "-o", out)
    assert proc.returncode == 1        # the demo day holds deliberate typos
    frame = pd.read_csv(out, keep_default_na=False)
    seen = set(";".join(frame["flags"]).split(";")) - {""}
    assert set(C.FLAG_CODES) <= seen, set(C.FLAG_CODES) - seen
    assert (frame["error"] != "").sum() == 2


def test_findings_legend_keys_stand_for_the_same_texts(tmp_path):
    """--findings-legend: findings and cautions as keys, each key's texts once in the legend (the demo day)."""
    plain, keyed, legend_path = tmp_path / "plain.csv", tmp_path / "keyed.csv", tmp_path / "legend.csv"
    assert run(SAMPLES / "plant_day.csv", "-o", plain).returncode == 1
    proc = run(SAMPLES / "plant_day.csv", "-o", keyed, "--findings-legend", legend_path)
    assert proc.returncode == 1 and "Traceback" not in proc.stderr
    a = pd.read_csv(plain, keep_default_na=False, dtype=str)
    b = pd.read_csv(keyed, keep_default_na=False, dtype=str)
    legend = pd.read_csv(legend_path, keep_default_na=False, dtype=str)
    # the same columns, and every cell but the two keyed columns as in the default output
    assert list(a.columns) == list(b.columns)
    others = [c for c in a.columns if c not in ("findings", "cautions")]
    pd.testing.assert_frame_equal(a[others], b[others])
    assert list(legend.columns) == ["key", "flags", "limit_flags", "findings", "cautions"]
    assert legend["key"].is_unique and legend["key"].str.fullmatch(r"F[0-9]+").all()
    texts = legend.set_index("key")
    for i in range(len(a)):
        key = b.loc[i, "findings"]
        if a.loc[i, "findings"] == "" and a.loc[i, "cautions"] == "":
            assert key == "" and b.loc[i, "cautions"] == ""
            continue
        assert texts.loc[key, "findings"] == a.loc[i, "findings"]
        assert texts.loc[key, "cautions"] == a.loc[i, "cautions"]
        assert b.loc[i, "cautions"] == (key if a.loc[i, "cautions"] else "")
        assert texts.loc[key, "flags"] == a.loc[i, "flags"]
        assert texts.loc[key, "limit_flags"] == a.loc[i, "limit_flags"]
    # each distinct pair of texts has one key, in the order rows first raise it
    pairs = a.loc[a["findings"] + a["cautions"] != "", ["findings", "cautions"]].drop_duplicates()
    assert len(legend) == len(pairs)
    assert list(b.loc[pairs.index, "findings"]) == [f"F{k}" for k in range(1, len(pairs) + 1)]
    assert keyed.stat().st_size + legend_path.stat().st_size < plain.stat().st_size


def test_findings_legend_unwritable_is_a_usage_error(tmp_path):
    proc = run(SAMPLES / "plant_day.csv", "-o", tmp_path / "o.csv", "--findings-legend", tmp_path / "no" / "l.csv")
    assert proc.returncode == 2 and "cannot write" in proc.stderr and "Traceback" not in proc.stderr
