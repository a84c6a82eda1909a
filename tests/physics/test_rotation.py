import numpy as np
import pytest

from slipwise.physics.rotation import rotation_state
from slipwise.physics.verdict import BEYOND, CLEAR, NOT_JUDGED


def test_rotation_states():
    assert rotation_state(True) == CLEAR
    assert rotation_state(False) == BEYOND       # the engine raises rotation_wrong
    assert rotation_state(None) == NOT_JUDGED    # nobody looked
    assert rotation_state(np.nan) == NOT_JUDGED
    assert rotation_state("") == NOT_JUDGED


def test_yes_no_words():
    # the sheet's yes/no answer
    assert rotation_state("yes") == CLEAR and rotation_state("True") == CLEAR
    assert rotation_state("no") == BEYOND and rotation_state("false") == BEYOND


def test_scalar_equals_array():
    values = [True, False, None, np.nan]
    np.testing.assert_array_equal(rotation_state(values), [rotation_state(v) for v in values])


def test_invalid_value_raises_naming_it():
    with pytest.raises(ValueError, match="rotation_correct"):
        rotation_state("clockwise")
