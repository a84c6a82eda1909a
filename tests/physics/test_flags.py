"""Flag judgements (slipwise.physics.flags): thresholds and the combination mask.

The flag texts are moving to another module: no text is asserted here.
"""

import numpy as np

from slipwise.engine.findings import describe  # the words moved out of the physics
from slipwise.physics import flags as fl


def test_default_thresholds_and_their_sources():
    th = fl.Thresholds()
    assert th.overloaded_pct == 100.0          # rated output, IEC 60034-1 / NEMA MG 1 duty S1
    assert th.underloaded_pct == 40.0          # common practice (US DOE fact sheets)
    assert th.near_breakdown_margin == 1.5     # common practice
    assert th.voltage_unbalance_pct == 1.0     # NEMA MG 1 derating starts at 1 %
    assert th.validate() == []


def test_validate_names_the_field_and_range():
    bad = fl.Thresholds(overloaded_pct=300.0).validate()
    assert bad and bad[0][0] == "overloaded_pct"
    crossed = fl.Thresholds(underloaded_pct=90.0, overloaded_pct=80.0).validate()
    assert ("underloaded_pct" in {f for f, _ in crossed})
    nan = fl.Thresholds(starting_margin=float("nan")).validate()
    assert nan and nan[0][0] == "starting_margin"


def test_combination_mask_round_trips_through_describe():
    n = 4
    flags = {code: np.zeros(n, dtype=bool) for code in fl.FLAG_ORDER}
    flags["overloaded"][1] = True
    flags["near_breakdown"][1] = True
    flags["readings_inconsistent"][2] = True
    mask = fl.combination_mask(flags, [-1, -1, 1, -1], [False, False, False, True])
    # same flags, different supply or outlier: different combinations
    assert len(set(mask.tolist())) == 4
    codes, findings = describe(mask, fl.Thresholds())
    assert codes[0] == ()
    assert codes[1] == ("overloaded", "near_breakdown")
    assert codes[2] == ("readings_inconsistent",)
    assert [d["flag"] for d in findings[1]] == ["overloaded", "near_breakdown"]


def test_every_flag_has_one_bit():
    n = len(fl.FLAG_ORDER)
    flags = {code: np.eye(n, dtype=bool)[k] for k, code in enumerate(fl.FLAG_ORDER)}
    mask = fl.combination_mask(flags, np.full(n, -1), np.zeros(n, dtype=bool))
    codes, _ = describe(mask, fl.Thresholds())
    assert [c for (c,) in codes] == list(fl.FLAG_ORDER)
