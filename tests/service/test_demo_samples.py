"""`slipwise demo` on the real demo scenario in field_samples/, as a user runs it."""

import subprocess
import sys
from pathlib import Path

SLIPWISE = str(Path(sys.executable).with_name("slipwise"))


def test_demo_loads_the_field_samples(tmp_path):
    proc = subprocess.run([SLIPWISE, "demo", "--no-serve", "--data-dir", str(tmp_path / "data")],
                          capture_output=True, text=True, timeout=180, env={"PATH": "/usr/bin:/bin"})
    assert proc.returncode == 0, proc.stderr
    assert "13 motors and 36 readings added" in proc.stdout
    # the two deliberate typos of the demo day are refused as the API would refuse them
    assert proc.stdout.count("not stored:") == 2
    for user in ("ivardy", "tquill", "mkoenraad"):
        assert user in proc.stdout
    again = subprocess.run([SLIPWISE, "demo", "--no-serve", "--data-dir", str(tmp_path / "data")],
                           capture_output=True, text=True, timeout=180, env={"PATH": "/usr/bin:/bin"})
    assert again.returncode == 0
    assert "0 readings added (36 already there)" in again.stdout
