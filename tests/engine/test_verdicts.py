"""Verdicts on the band: each state boundary (band below / straddling / above the threshold), the
verdict words, and the nameplate rule of issue 9 (an assumed efficiency yields to the rated slip)."""

from __future__ import annotations

import numpy as np
import pytest

from slipwise import contract as C
from slipwise.engine import InputError, interpret_one
from slipwise.engine.verdicts import judge, supply_state
from slipwise.physics import verdict as V
from slipwise.physics.flags import Thresholds

TH = Thresholds()


def _judge(n=3, **over):
    """:func:`judge` on ``n`` rows with neutral inputs (everything clear) and the given overrides."""
    base = dict(above=np.zeros(n, bool), at_sync=np.zeros(n, bool), consistent=np.ones(n, bool),
                basis_low=np.full(n, 70.0), basis_high=np.full(n, 80.0), under_low=np.full(n, 70.0),
                under_high=np.full(n, 80.0), service_factor=np.full(n, 1.15), sf_given=np.ones(n, bool),
                margin_low=np.full(n, 2.5), unstable=np.zeros(n, bool), zone_code=np.ones(n, int),
                is_nema=np.zeros(n, bool), on_drive=np.zeros(n, bool), v_dev=np.zeros(n), f_dev=np.zeros(n),
                voltage_accuracy_pct=np.full(n, 1.0), vu=np.full(n, 0.2), iu=np.full(n, 2.0),
                starting=np.full(n, 2.0), starting_low=np.full(n, 1.8), needs_breakaway=np.ones(n, bool))
    base.update({k: np.asarray(v) for k, v in over.items()})
    return judge(TH, **base)


def test_neutral_reading_is_sound():
    s = _judge(1)
    assert s.columns["verdict"][0] == "sound"
    assert all(s.columns[c][0] == "clear" for c in ("load_state", "breakdown_state", "supply_state",
                                                   "voltage_unbalance_state", "current_unbalance_state",
                                                   "starting_state"))
    assert not any(a[0] for a in s.flags.values())


def test_overload_band_below_straddling_above():
    # overloaded_pct = 100 (rated output, IEC 60034-1 / NEMA MG 1 duty S1):
    # [95, 99.9] wholly below -> clear; [97, 103] straddles -> at the limit (the readings
    # cannot tell), no flag; [100.1, 106] wholly above -> beyond, flag, act
    s = _judge(basis_low=[95.0, 97.0, 100.1], basis_high=[99.9, 103.0, 106.0], service_factor=[1.3] * 3)
    assert s.columns["load_state"].tolist() == ["clear", "at_limit", "beyond"]
    assert s.flags["overloaded"].tolist() == [False, False, True]
    assert s.columns["verdict"].tolist() == ["sound", "watch", "act"]


def test_service_factor_judged_only_when_given():
    # the same band [116, 120] above a 1.15 service factor: beyond when the nameplate gives it; a
    # defaulted 1.0 is not judged (overloaded already says it: never two flags for one fact)
    s = _judge(2, basis_low=[116.0, 116.0], basis_high=[120.0, 120.0], service_factor=[1.15, 1.0],
               sf_given=[True, False])
    assert s.flags["over_service_factor"].tolist() == [True, False]
    assert s.flags["overloaded"].tolist() == [True, True]


def test_service_factor_band_straddling():
    # band [110, 120] straddles 115 % (SF 1.15): at the limit; overloaded itself is beyond
    s = _judge(1, basis_low=[110.0], basis_high=[120.0], service_factor=[1.15])
    assert not s.flags["over_service_factor"][0] and s.flags["overloaded"][0]


def test_underload_band_above_straddling_below():
    # underloaded_pct = 40 (common practice, US DOE fact sheets): [41, 50] clear; [35, 45]
    # straddles -> at the limit, watch; [25, 39.9] wholly below -> beyond, flag, watch (energy, not safety)
    s = _judge(under_low=[41.0, 35.0, 25.0], under_high=[50.0, 45.0, 39.9], basis_low=[41.0, 35.0, 25.0],
               basis_high=[50.0, 45.0, 39.9])
    assert s.columns["load_state"].tolist() == ["clear", "at_limit", "beyond"]
    assert s.flags["underloaded"].tolist() == [False, False, True]
    assert s.columns["verdict"].tolist() == ["sound", "watch", "watch"]


def test_breakdown_judged_on_the_pessimistic_end():
    # near_breakdown_margin = 1.5 (common practice): a low end of 1.51 is clear; exactly 1.5 is at the
    # limit; 1.49 is beyond (safety side: the low end alone decides, the central value is not asked)
    s = _judge(margin_low=[1.51, 1.5, 1.49])
    assert s.columns["breakdown_state"].tolist() == ["clear", "at_limit", "beyond"]
    assert s.flags["near_breakdown"].tolist() == [False, False, True]
    assert s.columns["verdict"][2] == "act"


def test_unstable_point_is_beyond_whatever_the_margin():
    # past breakdown (unstable side): near_breakdown even with a margin that looks comfortable
    s = _judge(1, margin_low=[3.0], unstable=[True])
    assert s.flags["near_breakdown"][0] and s.columns["breakdown_state"][0] == "beyond"


def test_iec_supply_zone_a_b_outside():
    # IEC 60034-1 zones: A clear, B at the limit (allowed, hotter, not for long), outside beyond
    s = _judge(zone_code=[1, 2, 3])
    assert s.columns["supply_state"].tolist() == ["clear", "at_limit", "beyond"]
    assert s.flags["supply_out_of_tolerance"].tolist() == [False, False, True]
    assert s.columns["verdict"].tolist() == ["sound", "watch", "act"]


def test_nema_supply_band_of_the_voltmeter():
    # NEMA MG 1 12.44: +-10 % V at rated f. Voltmeter 1 %: -8.9 % -> band [-9.9, -7.9] inside, clear;
    # -9.5 % -> [-10.5, -8.5] straddles, at the limit; -11.1 % -> [-12.1, -10.1] outside, beyond
    st = supply_state([0, 0, 0], [True] * 3, [False] * 3, [-8.9, -9.5, -11.1], [0.0] * 3, [1.0] * 3)
    assert st.tolist() == [V.CLEAR, V.AT_LIMIT, V.BEYOND]
    # on a drive no mains tolerance applies; no voltage reading: not judged
    assert supply_state([4], [True], [True], [-20.0], [0.0], [1.0]).tolist() == [V.NOT_JUDGED]
    assert supply_state([0], [True], [False], [np.nan], [0.0], [1.0]).tolist() == [V.NOT_JUDGED]


def test_unbalance_judged_on_the_value():
    # no band on unbalance (the meters' accuracy cancels in a ratio of readings of one meter):
    # 0.99 % clear, exactly 1 % at the limit, 1.01 % beyond (NEMA MG 1 derating starts at 1 %)
    s = _judge(vu=[0.99, 1.0, 1.01], iu=[9.99, 10.0, 10.01])
    assert s.columns["voltage_unbalance_state"].tolist() == ["clear", "at_limit", "beyond"]
    assert s.columns["current_unbalance_state"].tolist() == ["clear", "at_limit", "beyond"]


def test_starting_margin_band():
    # starting_margin 1.3 (common practice): central 1.4 with 1.35 at the top of the load band clear;
    # central 1.35, top 1.25 straddles -> at the limit; central 1.25 beyond (the flag's old meaning)
    s = _judge(starting=[1.4, 1.35, 1.25], starting_low=[1.35, 1.25, 1.2])
    assert s.columns["starting_state"].tolist() == ["clear", "at_limit", "beyond"]
    assert s.flags["starting_torque_low"].tolist() == [False, False, True]
    # a load that needs no breakaway torque is not judged
    assert _judge(1, starting=[1.0], starting_low=[0.9], needs_breakaway=[False]).columns["starting_state"][0] == ""


def test_verdict_precedence():
    # inconsistent readings -> retake; but a supply found beyond is never hidden behind a retake
    s = _judge(2, consistent=[False, False], zone_code=[1, 3])
    assert s.columns["verdict"].tolist() == ["retake", "act"]
    # generating on a loaded shaft -> act; uncoupled at synchronous speed -> watch (nothing judged)
    s = _judge(2, above=[True, True], at_sync=[False, True], basis_low=[np.nan] * 2, basis_high=[np.nan] * 2,
               under_low=[np.nan] * 2, under_high=[np.nan] * 2, margin_low=[np.nan] * 2)
    assert s.columns["verdict"].tolist() == ["act", "watch"]
    assert s.columns["load_state"].tolist() == ["", ""]


def test_verdict_is_first_of_the_new_columns_and_words_are_the_declared_ones():
    new = C.RESULT_COLUMNS[C.RESULT_COLUMNS.index("engine_version") + 1:]
    assert new[0] == "verdict" and "breakdown_margin_low" in new and "limit_flags" in new
    assert set(C.VERDICT_WORDS) == {"sound", "watch", "act", "retake"}


# --- the nameplate rule (issue 9 item 5) ---------------------------------------------------------
PLATE_90 = dict(tag="P-90", rated_power_kw=90, rated_voltage_v=460, rated_frequency_hz=60, rated_speed_rpm=3420,
                rated_current_a=172)


def test_nameplate_without_efficiency_or_pf_yields_to_its_slip():
    # 2 poles, 5 % rated slip: rotor copper loss alone is s/(1-s) = 5.26 % of output, so the efficiency
    # can be at most 1 / (1 + 0.0526 / 0.9) = 94.5 % (0.9: largest rotor share of the losses). The
    # typical 90 kW value (about 95 %) is assumed, not the user's: it yields (capped at the 0.75
    # share, 93.4 %) and the nameplate is interpreted, at rated conditions about rated load
    r = interpret_one(dict(PLATE_90, frequency_hz=60, speed_rpm=3420, current_l1_a=172, voltage_l12_v=460))
    assert r["error"] is None
    assert r["load_low_pct"] <= 100.0 <= r["load_high_pct"]
    assert r["efficiency_pct"] == pytest.approx(100.0 / (1.0 + 0.05 / 0.95 / 0.75), abs=0.3)
    # the band is widened down to where the rotor copper takes half the losses (91 %) and up to the limit
    assert r["efficiency_low_pct"] < 91.0 and r["efficiency_high_pct"] > 94.0


def test_contradicting_nameplate_names_the_users_numbers():
    # the user's own efficiency of 96 % cannot go with 5 % slip: refused, naming rated_efficiency_pct
    with pytest.raises(InputError) as exc:
        interpret_one(dict(PLATE_90, rated_efficiency_pct=96, frequency_hz=60, speed_rpm=3420,
                           current_l1_a=172, voltage_l12_v=460))
    assert exc.value.field == "rated_speed_rpm"
    assert "rated_efficiency_pct" in exc.value.message and "3420" in exc.value.message


def test_refusal_never_reads_the_same_number_twice():
    # 94.5 % given against a 94.48 % limit: the message shows enough digits to tell them apart
    with pytest.raises(InputError) as exc:
        interpret_one(dict(PLATE_90, rated_efficiency_pct=94.5, frequency_hz=60, speed_rpm=3420,
                           current_l1_a=172, voltage_l12_v=460))
    msg = exc.value.message
    assert "allows at most 94.48 %" in msg and "is 94.50 %" in msg
    assert "94.5 %, but" not in msg
