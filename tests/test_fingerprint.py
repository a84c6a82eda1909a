"""Tamper-evident chain: canonical JSON, SHA-256 fingerprints, verification."""

import copy
import hashlib
import math

import numpy as np
import pytest

from slipwise.fingerprint import canonical_json, fingerprint, verify_chain


def test_canonical_json_form():
    # sorted keys, no whitespace, floats as repr, UTF-8
    assert canonical_json({"b": 1, "a": [0.1, 1e-07, True, None], "c": "Ω"}) == \
        '{"a":[0.1,1e-07,true,null],"b":1,"c":"Ω"}'.encode("utf-8")
    assert canonical_json({"x": 0.1 + 0.2}) == b'{"x":0.30000000000000004}'   # repr, not rounded


def test_key_order_does_not_matter():
    assert canonical_json({"a": 1, "b": {"d": 2, "c": 3}}) == canonical_json({"b": {"c": 3, "d": 2}, "a": 1})
    assert fingerprint({"a": 1, "b": 2}, None) == fingerprint({"b": 2, "a": 1}, None)


def test_numpy_scalars_serialise_as_python_values():
    assert canonical_json({"v": np.float64(415.5), "n": np.int64(4)}) == b'{"n":4,"v":415.5}'


@pytest.mark.parametrize("bad", [math.nan, math.inf, -math.inf])
def test_nan_and_infinity_refused(bad):
    with pytest.raises(ValueError):
        canonical_json({"v": bad})


def test_known_vector_first_entry():
    # computed by hand: SHA-256 of the literal canonical text of {"content": ..., "previous": null}
    text = b'{"content":{"current_a":12.5,"motor":"P-101"},"previous":null}'
    assert fingerprint({"motor": "P-101", "current_a": 12.5}, None) == hashlib.sha256(text).hexdigest()


def test_known_vector_chained_entry():
    prev = "ab" * 32
    text = ('{"content":{"speed_rpm":1475},"previous":"' + prev + '"}').encode()
    assert fingerprint({"speed_rpm": 1475}, prev) == hashlib.sha256(text).hexdigest()


def test_previous_changes_the_fingerprint():
    assert fingerprint({"a": 1}, None) != fingerprint({"a": 1}, "0" * 64)


def _chain(contents):
    entries, prev = [], None
    for c in contents:
        fp = fingerprint(c, prev)
        entries.append({"content": c, "fingerprint": fp})
        prev = fp
    return entries


CONTENTS = [{"reading": i, "voltage_v": 400.0 + i, "note": f"entry {i}"} for i in range(5)]


def test_intact_chain_verifies():
    assert verify_chain(_chain(CONTENTS)) is None
    assert verify_chain([]) is None


@pytest.mark.parametrize("k", [0, 2, 4])
def test_changed_value_breaks_chain_at_that_entry(k):
    entries = _chain(CONTENTS)
    tampered = copy.deepcopy(entries)
    tampered[k]["content"]["voltage_v"] += 0.1
    assert verify_chain(tampered) == k


def test_recomputed_fingerprint_still_breaks_the_next_link():
    # whoever edits entry 1 and recomputes its fingerprint breaks entry 2
    entries = copy.deepcopy(_chain(CONTENTS))
    entries[1]["content"]["note"] = "edited"
    entries[1]["fingerprint"] = fingerprint(entries[1]["content"], entries[0]["fingerprint"])
    assert verify_chain(entries) == 2


def test_removed_entry_breaks_chain():
    entries = _chain(CONTENTS)
    assert verify_chain(entries[:2] + entries[3:]) == 2
