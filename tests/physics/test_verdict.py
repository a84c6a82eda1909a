import numpy as np

from slipwise.physics.verdict import AT_LIMIT, BEYOND, CLEAR, NOT_JUDGED, judge_maximum, judge_minimum


def test_scale_codes_are_the_documented_integers():
    assert (NOT_JUDGED, CLEAR, AT_LIMIT, BEYOND) == (0, 1, 2, 3)


def test_judge_minimum():
    # value, band low end, minimum
    assert judge_minimum(9.9, 9.0, 10) == BEYOND       # just below
    assert judge_minimum(10, 9.5, 10) == AT_LIMIT      # at
    assert judge_minimum(10.1, 9.9, 10) == AT_LIMIT    # above, band reaches
    assert judge_minimum(10.1, 10.05, 10) == CLEAR     # band clear
    assert judge_minimum(np.nan, np.nan, 10) == NOT_JUDGED


def test_judge_maximum():
    assert judge_maximum(10.1, 11, 10) == BEYOND
    assert judge_maximum(10, 10.5, 10) == AT_LIMIT
    assert judge_maximum(9.9, 10.1, 10) == AT_LIMIT
    assert judge_maximum(9.9, 9.95, 10) == CLEAR
    assert judge_maximum(5, 6, np.nan) == NOT_JUDGED


def test_docstring_examples_run():
    import doctest

    from slipwise.physics import insulation, protection, vibration, winding
    for module in (insulation, winding, protection, vibration):
        result = doctest.testmod(module, verbose=False)
        assert result.attempted >= 2 and result.failed == 0, module.__name__


def test_missing_categories_read_as_missing():
    from slipwise.physics.verdict import choice
    # None and NaN in a text column (pandas) mean "not recorded", not an error
    assert list(choice(["Rigid", "", None, float("nan")], "foundation", ("rigid", "flexible"))) == ["rigid", "", "", ""]
