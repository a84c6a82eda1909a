"""The commissioning certificate: a real PDF, read back with pypdf and rendered with pypdfium2.

Pages are saved under test-artifacts/certificate/ (ignored by git) to be looked at.
"""

from __future__ import annotations

import io
import re
from pathlib import Path

import pytest
from pypdf import PdfReader

from slipwise.web.certificate import NOT_RECORDED, test_rows as certificate_test_rows

from .conftest import REPO, reading_body

SHOTS = REPO / "test-artifacts" / "certificate"


def _text(pdf: bytes) -> str:
    reader = PdfReader(io.BytesIO(pdf))
    return "\n".join(page.extract_text() for page in reader.pages)


def _flat(text: str) -> str:
    return re.sub(r"\s+", " ", text)


def _save_pages(pdf: bytes, name: str) -> list[Path]:
    import pypdfium2 as pdfium
    SHOTS.mkdir(parents=True, exist_ok=True)
    doc = pdfium.PdfDocument(pdf)
    out = []
    try:
        for i in range(len(doc)):
            path = SHOTS / f"{name}-page-{i + 1}.png"
            doc[i].render(scale=1.6).to_pil().save(path)
            out.append(path)
    finally:
        doc.close()
    return out


def test_signed_certificate_names_people_values_and_fingerprints(tech, sup, reading):
    rid = reading["id"]
    assert sup.post(f"/api/v1/readings/{rid}/review",
                    json={"decision": "retake", "comment": "L2 clamp on the wrong lead"}).status_code == 201
    assert sup.post(f"/api/v1/readings/{rid}/review", json={"decision": "accepted"}).status_code == 201
    r = sup.get(f"/api/v1/readings/{rid}/certificate.pdf")
    assert r.status_code == 200 and r.mimetype == "application/pdf" and r.data.startswith(b"%PDF-")
    stored = sup.get(f"/api/v1/readings/{rid}").get_json()
    text = _flat(_text(r.data))
    # site, tag, description, the running reading's values, the people by full name with their roles
    for words in ("Harbour Mill", "PMP-07", "cooling water", "1475 rpm", "402 V", "20.5 A",
                  "Tess Testperson", "Sue Testperson", "technician", "supervisor", "SIGNED OFF",
                  "L2 clamp on the wrong lead", "2025-03-14 09:30 (UTC+01:00)", "IEEE 43", "NEC 430.32",
                  "ISO 10816-3", "discharge the winding", "licensed practice prevail"):
        assert words in text, words
    # the reading's and every review's fingerprint, in full
    assert stored["fingerprint"] in text.replace(" ", "")
    for review in stored["reviews"]:
        assert review["fingerprint"] in text.replace(" ", "")
    assert "DRAFT" not in text
    # the tests this reading does not carry say so
    assert f"Insulation resistance {NOT_RECORDED}" in text
    # locked: the same stored record gives the same bytes
    assert sup.get(f"/api/v1/readings/{rid}/certificate.pdf").data == r.data
    pages = _save_pages(r.data, "signed")
    assert len(pages) >= 2


def test_draft_before_sign_off_and_superseded_after_a_correction(tech, sup, motor, reading):
    rid = reading["id"]
    draft = _flat(_text(tech.get(f"/api/v1/readings/{rid}/certificate.pdf").data))
    assert "DRAFT — NOT SIGNED OFF" in draft and "Not reviewed yet" in draft
    fixed = tech.post("/api/v1/readings", json=reading_body(motor["id"], supersedes=rid, speed_rpm=1474))
    assert fixed.status_code == 201
    old = _flat(_text(tech.get(f"/api/v1/readings/{rid}/certificate.pdf").data))
    assert f"SUPERSEDED by reading {fixed.get_json()['id']}" in old
    new = tech.get(f"/api/v1/readings/{fixed.get_json()['id']}/certificate.pdf")
    assert f"supersedes reading {rid}" in _flat(_text(new.data))
    _save_pages(new.data, "draft")


def test_certificate_permissions(app, anon, tech, tech2, sup, reading):
    url = f"/api/v1/readings/{reading['id']}/certificate.pdf"
    assert tech.get(url).status_code == 200          # the technician who took it
    assert sup.get(url).status_code == 200           # any supervisor
    other = tech2.get(url)
    assert other.status_code == 403 and other.get_json()["error"]["code"] == "forbidden"
    assert anon.get(url).status_code == 401
    assert sup.get("/api/v1/readings/999999/certificate.pdf").status_code == 404
    assert sup.get(url + "?x=1").status_code == 400


def test_test_section_reads_the_stored_de_energised_tests():
    """A stored result and inputs carrying the de-energised tests (names fixed by issue 10)."""
    inputs = {"insulation_resistance_1min_mohm": 3.2, "insulation_resistance_10min_mohm": 4.1,
              "insulation_test_voltage_v": 500, "winding_temperature_c": 30, "winding_type": "random",
              "insulation_class": "F", "winding_resistance_l12_ohm": 0.412, "winding_resistance_l23_ohm": 0.415,
              "winding_resistance_l31_ohm": 0.431, "winding_material": "copper", "overload_setting_a": 17.5,
              "starter": "star_delta", "vibration_velocity_mm_s": 5.1, "foundation": "rigid",
              "rotation_correct": "no", "notes": "terminal box lid gasket replaced"}
    result = {"insulation_resistance_40c_mohm": 1.6, "insulation_minimum_mohm": 5.0, "polarization_index": 1.28,
              "winding_resistance_unbalance_pct": 2.9, "overload_setting_pct": 106.0, "vibration_zone": "C",
              "flags": ["insulation_low", "polarization_index_low", "winding_resistance_unbalance",
                        "vibration_high", "rotation_wrong"], "limit_flags": []}
    rows = {r[0].split(" (")[0]: r for r in certificate_test_rows(inputs, result)}
    assert rows["Insulation resistance"][0] == "Insulation resistance (random, class F)"
    assert rows["Insulation resistance"][1].startswith("1.6 MΩ at 40 °C (3.2 MΩ at 1 min, 500 V DC, winding 30 °C)")
    assert rows["Insulation resistance"][2] == "at least 5 MΩ at 40 °C"
    assert rows["Insulation resistance"][4] == "beyond"
    assert rows["Polarization index"][1].startswith("1.28") and rows["Polarization index"][4] == "beyond"
    assert rows["Winding resistance balance"][1].startswith("2.90 %") and "copper" in rows["Winding resistance balance"][1]
    assert rows["Overload relay setting"][1].startswith("106 %") and "star delta starter" in rows["Overload relay setting"][1]
    assert rows["Overload relay setting"][4] == "clear"
    assert rows["Vibration"][1] == "zone C (5.1 mm/s RMS, rigid foundation)" and rows["Vibration"][4] == "beyond"
    assert rows["Direction of rotation"][1] == "no" and rows["Direction of rotation"][4] == "beyond"
    # a result stored before these tests existed: every one "not recorded"
    assert {r[4] for r in certificate_test_rows({}, {"flags": []})} == {NOT_RECORDED}


def test_whole_certificate_prints_stored_de_energised_tests():
    """render_certificate on a stored record whose inputs and result carry the tests (engine-independent)."""
    import json
    from datetime import datetime, timezone
    from types import SimpleNamespace

    from slipwise.engine import Thresholds
    from slipwise.web.certificate import render_certificate

    inputs = {"speed_rpm": 1478, "frequency_hz": 50, "taken_at": "2025-06-02T14:05:00-05:00",
              "insulation_resistance_1min_mohm": 3.2, "insulation_test_voltage_v": 500,
              "winding_temperature_c": 30, "overload_setting_a": 17.5, "starter": "star_delta",
              "vibration_velocity_mm_s": 5.1, "foundation": "rigid", "rotation_correct": "no",
              "notes": "terminal box lid gasket replaced",
              "instruments": [{"name": "insulation tester", "serial": "IT-5521", "calibration_due": "2026-01-31"}]}
    result = {"verdict": "act", "insulation_resistance_40c_mohm": 1.6, "insulation_minimum_mohm": 5.0,
              "overload_setting_pct": 106.0, "vibration_zone": "C", "flags": ["insulation_low", "vibration_high",
              "rotation_wrong"], "limit_flags": [],
              "findings": [{"flag": "insulation_low", "text": "Insulation resistance below the minimum.",
                            "caution": "Do not energise.", "state": "beyond"}]}
    when = datetime(2025, 6, 2, 19, 5, tzinfo=timezone.utc)
    row = {"id": 41, "site": "Lakeside Works", "tag": "FAN-12", "technician": "tess",
           "technician_name": "Tess Testperson", "technician_role": "technician", "taken_at": inputs["taken_at"],
           "received_at": when, "engine_version": "1.2.0", "motor_revision": 2, "superseded_by": None,
           "supersedes_id": None, "fingerprint": "ab" * 32, "inputs": json.dumps(inputs), "result": json.dumps(result)}
    reviews = [{"id": 7, "decision": "accepted", "comment": "", "reviewed_at": when, "reviewer": "sue",
                "reviewer_name": "Sue Testperson", "reviewer_role": "supervisor", "fingerprint": "cd" * 32}]
    plate = {"tag": "FAN-12", "rated_power_kw": 7.5, "rated_voltage_v": 460, "rated_current_a": 11.0,
             "location": "roof", "description": "extract fan"}
    cert = SimpleNamespace(reading=SimpleNamespace(row=row, reviews=reviews), nameplate=plate)
    pdf = render_certificate(cert, address="https://slipwise.example/#/reading/41", picture_png=None,
                             thresholds=Thresholds())
    text = _flat(_text(pdf))
    for words in ("1.6 MΩ at 40 °C", "at least 5 MΩ at 40 °C", "zone C (5.1 mm/s RMS, rigid foundation)",
                  "106 % of the current the relay sees", "star delta starter", "IT-5521", "2026-01-31",
                  "terminal box lid gasket replaced", "2025-06-02 14:05 (UTC-05:00)", "Sue Testperson",
                  "insulation low (beyond)", "Insulation resistance below the minimum."):
        assert words in text, words
    _save_pages(pdf, "tests")


def test_certificate_reads_the_record_as_the_engine_stores_it():
    """As stored by the engine: limit_flags is the record's text joined by ';', instruments the contract's
    text (one "name; serial; YYYY-MM-DD" per line), values unrounded floats. (Read character by character,
    a limit_flags text once printed "p (at the limit); o (at the limit); …".)"""
    import json
    from datetime import datetime, timezone
    from types import SimpleNamespace

    from slipwise.engine import Thresholds
    from slipwise.web.certificate import render_certificate

    inputs = {"speed_rpm": 1473, "frequency_hz": 50, "taken_at": "2026-11-24T14:00:00+01:00",
              "insulation_resistance_1min_mohm": 2730.0, "insulation_resistance_10min_mohm": 6000.0,
              "winding_temperature_c": 24.0, "insulation_test_voltage_v": 500.0,
              "instruments": "Insulation tester; MT-4471; 2027-03-31\nMicro-ohmmeter; LR-0392; 2027-01-15"}
    result = {"verdict": "watch", "insulation_resistance_40c_mohm": 900.5641491025003, "insulation_minimum_mohm": 5.0,
              "polarization_index": 2.197802197802198, "insulation_state": "clear", "polarization_index_state": "at_limit",
              "flags": [], "limit_flags": "polarization_index_low", "findings": []}
    when = datetime(2026, 11, 24, 13, 0, tzinfo=timezone.utc)
    row = {"id": 16, "site": "Larkspur Hill Hospital", "tag": "LH-AHU1-EF", "technician": "ivardy",
           "technician_name": "Ines Vardy", "technician_role": "technician", "taken_at": inputs["taken_at"],
           "received_at": when, "engine_version": "1.3.0", "motor_revision": 1, "superseded_by": None,
           "supersedes_id": None, "fingerprint": "ef" * 32, "inputs": json.dumps(inputs), "result": json.dumps(result)}
    plate = {"tag": "LH-AHU1-EF", "rated_power_kw": 11, "rated_voltage_v": 400, "rated_current_a": 21.5,
             "location": "roof plant room R1", "description": "extract fan"}
    cert = SimpleNamespace(reading=SimpleNamespace(row=row, reviews=[]), nameplate=plate)
    text = _flat(_text(render_certificate(cert, address="https://slipwise.example/#/reading/16", picture_png=None,
                                          thresholds=Thresholds())))
    assert "polarization index low (at the limit)" in text and "p (at the limit)" not in text
    assert "900.6 MΩ at 40 °C" in text and "900.564" not in text
    for words in ("MT-4471", "2027-03-31", "LR-0392", "2027-01-15"):
        assert words in text, words


def _visit_body(mid, taken_at, ins_1min, ins_10min, vibration, **more):
    # insulation needs the winding temperature (its `needs`); 20 °C throughout so the 40 °C values fall as read
    return reading_body(mid, taken_at=taken_at, insulation_resistance_1min_mohm=ins_1min,
                        insulation_resistance_10min_mohm=ins_10min, winding_temperature_c=20,
                        insulation_test_voltage_v=500, vibration_velocity_mm_s=vibration, foundation="rigid", **more)


def test_certificate_shows_this_motor_over_time_and_stays_the_same_when_later_visits_arrive(tech, sup, motor):
    """Three visits, insulation falling: the section, the baseline and the change words from the history service
    (the IEEE 43 trend mark of slipwise.physics.trend: a fall of more than half the baseline, here 600 -> 120 MΩ
    read at the same temperature, 80 %); the first reading's signed certificate keeps its bytes."""
    mid = motor["id"]
    first = tech.post("/api/v1/readings", json=_visit_body(mid, "2024-01-10T09:00:00+01:00", 600, 1500, 1.2))
    assert first.status_code == 201, first.get_data(as_text=True)
    fid = first.get_json()["id"]
    assert sup.post(f"/api/v1/readings/{fid}/review", json={"decision": "accepted"}).status_code == 201
    first_pdf = sup.get(f"/api/v1/readings/{fid}/certificate.pdf").data
    text = _flat(_text(first_pdf))
    assert "This motor over time" in text and "First visit of this motor" in text
    second = tech.post("/api/v1/readings", json=_visit_body(mid, "2024-07-10T09:00:00+02:00", 300, 660, 1.6))
    third = tech.post("/api/v1/readings", json=_visit_body(mid, "2025-01-12T09:00:00+01:00", 120, 200, 2.1))
    assert second.status_code == 201 and third.status_code == 201
    # a later visit, stored and reviewed afterwards, does not touch the first reading's signed certificate
    assert sup.get(f"/api/v1/readings/{fid}/certificate.pdf").data == first_pdf
    tid = third.get_json()["id"]
    history = tech.get(f"/api/v1/motors/{mid}/history").get_json()
    codes = [c["code"] for c in history["visits"][2]["changes"]]
    assert "insulation_falling" in codes
    pdf = sup.get(f"/api/v1/readings/{tid}/certificate.pdf").data
    text = _flat(_text(pdf))
    assert "This motor over time" in text and "3 visits up to and including this reading" in text
    assert f"Baseline: reading {fid} of 2024-01-10" in text
    for code in codes:   # the history service's findings, as codes and words
        assert code in text and code.replace("_", " ") in text, code
    assert "Insulation resistance at 40 °C has fallen by 80 %" in text
    # the second reading's certificate ends at the second visit, even now that a third exists
    sec = _flat(_text(sup.get(f"/api/v1/readings/{second.get_json()['id']}/certificate.pdf").data))
    assert "2 visits up to and including this reading" in sec and "2025-01-12" not in sec
    pages = _save_pages(pdf, "over-time")
    assert pages


def test_history_figure_is_byte_stable_and_draws_only_panels_with_values():
    from slipwise.web.picture import history_panels, render_history_png

    visits = [{"id": 1, "taken_date": "2024-01-10", "baseline": True, "load_pct": 60.0, "load_low_pct": 52.0,
               "load_high_pct": 68.0, "insulation_resistance_40c_mohm": None, "superseded_by": None,
               "review_decision": "accepted"},
              {"id": 2, "taken_date": "2024-07-10", "baseline": False, "load_pct": 64.0, "load_low_pct": 57.0,
               "load_high_pct": 71.0, "insulation_resistance_40c_mohm": None, "superseded_by": None,
               "review_decision": None}]
    assert [p[0] for p in history_panels(visits)] == ["load_pct"]
    png = render_history_png(visits)
    assert png.startswith(b"\x89PNG") and render_history_png(visits) == png
    assert render_history_png([{"id": 1, "taken_date": "2024-01-10"}]) is None


def test_a_review_after_the_sign_off_does_not_move_a_signed_certificates_baseline(tech, sup, motor):
    """The history on a signed certificate is what was known at its sign-off: a later review of an earlier visit
    (here the baseline sent back for a retake) would move the baseline today, not on the signed file."""
    mid = motor["id"]
    a = tech.post("/api/v1/readings", json=_visit_body(mid, "2024-01-10T09:00:00+01:00", 600, 1500, 1.2)).get_json()
    assert sup.post(f"/api/v1/readings/{a['id']}/review", json={"decision": "accepted"}).status_code == 201
    b = tech.post("/api/v1/readings", json=_visit_body(mid, "2024-07-10T09:00:00+02:00", 120, 200, 1.3)).get_json()
    assert sup.post(f"/api/v1/readings/{b['id']}/review", json={"decision": "accepted"}).status_code == 201
    signed = sup.get(f"/api/v1/readings/{b['id']}/certificate.pdf").data
    assert "insulation falling" in _flat(_text(signed))
    later = sup.post(f"/api/v1/readings/{a['id']}/review", json={"decision": "retake", "comment": "wrong range"})
    assert later.status_code == 201, later.get_data(as_text=True)
    assert tech.get(f"/api/v1/motors/{mid}/history").get_json()["baseline_reading_id"] == b["id"]   # today
    assert sup.get(f"/api/v1/readings/{b['id']}/certificate.pdf").data == signed                     # the file
