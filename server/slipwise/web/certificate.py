"""A reading's commissioning certificate as a PDF (fpdf2, DejaVu fonts from matplotlib's data, a segno QR code).

The certificate prints what is stored and nothing computed now, except the motor's curves in the picture
(drawn as the SVG route draws them). Its bytes depend only on the stored record and the address it
points to: no clock is read, the PDF's dates are the record's own. Once the supervisor has accepted the
reading (the sign-off), what was signed is fixed: entries stored later (a later review, a correction that
supersedes the reading) are printed apart, under "Recorded after sign-off", never woven into it.

The de-energised tests are read from the stored inputs and result with ``.get()``: a result stored
before those tests existed, or a reading without them, prints "not recorded".
"""

from __future__ import annotations

import io
import json
from datetime import datetime, timedelta, timezone
from pathlib import Path
from typing import Any, Mapping

NOT_RECORDED = "not recorded"
STATE_WORDS = {"clear": "clear", "at_limit": "at the limit", "beyond": "beyond", "": "not judged",
               None: "not judged"}

SAFETY_CAUTIONS = (
    "Insulation resistance and winding tests apply high DC voltage: test only with the motor isolated, locked "
    "off and proved dead, and discharge the winding to earth after every insulation test (at least as long as "
    "the test voltage was applied).",
    "Running readings are live work: meters rated for the installation's measurement category, clear of "
    "rotating parts and live terminals.",
    "Energising, correcting or keeping a motor in service on the strength of this certificate is for "
    "qualified persons; local electrical codes and licensed practice prevail over anything printed here.",
)

NAMEPLATE_ROWS = (  # (field, label, unit)
    ("rated_power_kw", "Rated output", "kW"), ("rated_power_hp", "Rated output", "hp"),
    ("rated_voltage_v", "Rated voltage", "V"), ("rated_current_a", "Rated current", "A"),
    ("rated_frequency_hz", "Rated frequency", "Hz"), ("rated_speed_rpm", "Rated speed", "rpm"),
    ("poles", "Poles", ""), ("rated_power_factor", "Power factor", ""),
    ("rated_efficiency_pct", "Efficiency", "%"), ("service_factor", "Service factor", ""),
    ("breakdown_torque_pct", "Breakdown torque", "% of rated"),
    ("locked_rotor_torque_pct", "Locked-rotor torque", "% of rated"),
    ("design", "Design", ""), ("supply", "Supply", ""), ("driven_load", "Driven load", ""),
)

READING_ROWS = (  # the running reading as entered: (field, label, unit)
    ("frequency_hz", "Frequency", "Hz"), ("speed_rpm", "Shaft speed", "rpm"),
    ("voltage_l12_v", "Voltage L1-L2", "V"), ("voltage_l23_v", "Voltage L2-L3", "V"),
    ("voltage_l31_v", "Voltage L3-L1", "V"), ("current_l1_a", "Current L1", "A"),
    ("current_l2_a", "Current L2", "A"), ("current_l3_a", "Current L3", "A"),
    ("power_kw", "Input power", "kW"), ("power_factor", "Power factor", ""),
    ("minutes_running", "Running for", "min"),
)


def _font_paths() -> dict[str, Path]:
    import matplotlib
    folder = Path(matplotlib.get_data_path()) / "fonts" / "ttf"
    return {"": folder / "DejaVuSans.ttf", "B": folder / "DejaVuSans-Bold.ttf",
            "I": folder / "DejaVuSans-Oblique.ttf", "mono": folder / "DejaVuSansMono.ttf"}


# --- words and numbers --------------------------------------------------------------------------------
def _num(value: Any, unit: str = "", digits: int | None = None) -> str:
    if value is None or value == "":
        return NOT_RECORDED
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        if digits is None:  # a stored value printed to the digits a reader needs, not the float's own
            text = str(value) if isinstance(value, int) else (
                f"{value:.0f}" if abs(value) >= 1000 else f"{value:.1f}".rstrip("0").rstrip(".")
                if abs(value) >= 100 else f"{value:.4g}")
        else:
            text = f"{value:,.{digits}f}"
    else:
        text = str(value).replace("_", " ")
    return f"{text} {unit}".strip() if unit else text


def _zone_of(taken_at: str):
    """The site's time zone as the technician's clock gave it (the offset of ``taken_at``); UTC without one."""
    try:
        when = datetime.fromisoformat(taken_at)
    except (TypeError, ValueError):
        return timezone.utc
    return when.tzinfo or timezone.utc


def _local(when: datetime | str | None, zone) -> str:
    if when is None:
        return NOT_RECORDED
    if isinstance(when, str):
        try:
            when = datetime.fromisoformat(when)
        except ValueError:
            return when
        if when.tzinfo is None:
            return when.strftime("%Y-%m-%d %H:%M") + " (no offset given)"
    local = when.astimezone(zone)
    offset = local.utcoffset() or timedelta(0)
    sign = "-" if offset < timedelta(0) else "+"
    minutes = abs(int(offset.total_seconds())) // 60
    return local.strftime("%Y-%m-%d %H:%M") + f" (UTC{sign}{minutes // 60:02d}:{minutes % 60:02d})"


def _codes(value: Any) -> list[str]:
    """Flag codes as stored: a list, or the record's text joined by ';'."""
    if not value:
        return []
    if isinstance(value, str):
        return [c for c in value.split(";") if c]
    return list(value)


def _state(flag: str | None, flags: set[str], limit_flags: set[str], value: Any) -> str:
    if value is None or value == "":
        return NOT_RECORDED
    if flag in flags:
        return "beyond"
    if flag in limit_flags:
        return "at the limit"
    return "clear" if flag else "not judged"


_STATE_WORDS = {"clear": "clear", "at_limit": "at the limit", "beyond": "beyond", "": "not judged"}


def _judged(result: Mapping[str, Any], column: str, fallback: str) -> str:
    """The engine's own state for a test (engine 1.2.0 and later), else the state read from the flags."""
    state = result.get(column)
    if state is None or fallback == NOT_RECORDED:
        return fallback
    return _STATE_WORDS.get(state, state)


def test_rows(inputs: Mapping[str, Any], result: Mapping[str, Any]) -> list[tuple[str, str, str, str, str]]:
    """The de-energised tests, rotation and vibration as (test, value, criterion, source, state).

    Read with ``.get()`` from the stored dicts: absent keys print "not recorded".
    """
    flags = set(_codes(result.get("flags")))
    limits = set(_codes(result.get("limit_flags")))
    ins_1 = inputs.get("insulation_resistance_1min_mohm")
    ins_40 = result.get("insulation_resistance_40c_mohm")
    ins_min = result.get("insulation_minimum_mohm")
    ins_detail = []
    if ins_1 is not None:
        ins_detail.append(f"{_num(ins_1, 'MΩ')} at 1 min")
    if inputs.get("insulation_test_voltage_v") is not None:
        ins_detail.append(f"{_num(inputs.get('insulation_test_voltage_v'), 'V')} DC")
    if inputs.get("winding_temperature_c") is not None:
        ins_detail.append(f"winding {_num(inputs.get('winding_temperature_c'), '°C')}")
    ins_value = _num(ins_40, "MΩ at 40 °C") + (f" ({', '.join(ins_detail)})" if ins_detail else "")
    winding = ", ".join(x for x in (_num(inputs.get("winding_type")) if inputs.get("winding_type") else "",
                                    f"class {inputs['insulation_class']}" if inputs.get("insulation_class") else "")
                        if x)
    pi = result.get("polarization_index")
    pi_detail = ""
    if inputs.get("insulation_resistance_10min_mohm") is not None:
        pi_detail = f" (10 min: {_num(inputs.get('insulation_resistance_10min_mohm'), 'MΩ')})"
    resistances = [inputs.get(f"winding_resistance_{p}_ohm") for p in ("l12", "l23", "l31")]
    unbalance = result.get("winding_resistance_unbalance_pct")
    res_detail = ""
    if any(r is not None for r in resistances):
        res_detail = " (" + " / ".join(_num(r) for r in resistances) + " Ω"
        if inputs.get("winding_material"):
            res_detail += f", {inputs['winding_material']}"
        res_detail += ")"
    overload = result.get("overload_setting_pct")
    ol_detail = ""
    if inputs.get("overload_setting_a") is not None:
        ol_detail = f" ({_num(inputs.get('overload_setting_a'), 'A')}"
        if inputs.get("starter"):
            ol_detail += f", {_num(inputs['starter'])} starter"
        ol_detail += ")"
    zone = result.get("vibration_zone")
    velocity = inputs.get("vibration_velocity_mm_s")
    vib_value = (f"zone {zone}" if zone else NOT_RECORDED)
    if velocity is not None:
        vib_value += f" ({_num(velocity, 'mm/s')} RMS"
        vib_value += f", {inputs['foundation']} foundation)" if inputs.get("foundation") else ")"
    rotation = inputs.get("rotation_correct")
    return [
        ("Insulation resistance" + (f" ({winding})" if winding else ""), ins_value,
         f"at least {_num(ins_min, 'MΩ')} at 40 °C" if ins_min is not None else
         "at least the recommended minimum for the winding at 40 °C",
         "IEEE 43 (recommended minimum insulation resistance)",
         _judged(result, "insulation_state", _state("insulation_low", flags, limits, ins_40 if ins_40 is not None else ins_1))),
        ("Polarization index", _num(pi, "", 2) + (pi_detail if pi is not None else ""),
         (f"at least {_num(result.get('polarization_index_minimum'), '', 1)}; " if result.get("polarization_index_minimum") else
          "at least 2.0 (class B, F, H) or 1.5 (class A); ") + "not judged above 5,000 MΩ at 1 min",
         "IEEE 43 (polarization index)",
         _judged(result, "polarization_index_state", _state("polarization_index_low", flags, limits, pi))),
        ("Winding resistance balance", _num(unbalance, "%", 2) + (res_detail if unbalance is not None else ""),
         "largest deviation from the mean within the acceptance figure (2 % common)",
         "common acceptance figure (common practice)",
         _judged(result, "winding_resistance_state", _state("winding_resistance_unbalance", flags, limits, unbalance))),
        ("Overload relay setting", _num(overload, "% of the current the relay sees", 0)
         + (ol_detail if overload is not None else ""),
         (f"at most {_num(result.get('overload_setting_max_pct'), '%', 0)} of the current the relay sees; "
          if result.get("overload_setting_max_pct") is not None else "")
         + "NEMA nameplate: 125 % (SF ≥ 1.15 or rise ≤ 40 °C), else 115 %; IEC nameplate: rated current",
         "NEC 430.32; IEC practice",
         _judged(result, "overload_setting_state", _state("overload_setting_high", flags, limits, overload))),
        ("Vibration", vib_value, "zone A or B for the machine's group and foundation",
         "ISO 10816-3 / ISO 20816-3 (ISO 10816-1 class I below 15 kW)",
         _judged(result, "vibration_state", _state("vibration_high", flags, limits, zone))),
        ("Direction of rotation", _num(rotation) if rotation is not None else NOT_RECORDED,
         "as marked on the driven machine", "common practice",
         _judged(result, "rotation_state", _state("rotation_wrong", flags, limits, rotation))),
    ]


def running_rows(result: Mapping[str, Any], thresholds) -> list[tuple[str, str, str, str, str]]:
    """The running reading's judged quantities as (quantity, value, criterion, source, state)."""
    def band(value, low, high, unit, digits=0):
        if value is None:
            return NOT_RECORDED
        text = _num(value, unit, digits)
        if low is not None and high is not None:
            text += f" (band {low:.{digits}f} to {high:.{digits}f})"
        return text

    def st(name):
        return STATE_WORDS.get(result.get(name), str(result.get(name)))

    return [
        ("Load", band(result.get("load_pct"), result.get("load_low_pct"), result.get("load_high_pct"),
                      "% of rated"),
         f"{thresholds.underloaded_pct:g} % to {thresholds.overloaded_pct:g} % of rated output, on the band",
         "IEC 60034-1 / NEMA MG 1 duty S1; 40 % floor common practice", st("load_state")),
        ("Breakdown margin (low end)", _num(result.get("breakdown_margin_low"), "", 2),
         f"at least {thresholds.near_breakdown_margin:g}", "common practice", st("breakdown_state")),
        ("Supply voltage / frequency", f"{_num(result.get('voltage_deviation_pct'), '%', 1)} / "
                                       f"{_num(result.get('frequency_deviation_pct'), '%', 1)} from rated",
         "IEC 60034-1 zone A (B at the limit); NEMA MG 1 ±10 % voltage", "IEC 60034-1 §7.3; NEMA MG 1",
         st("supply_state")),
        ("Voltage unbalance", _num(result.get("voltage_unbalance_pct"), "%", 2),
         f"at most {thresholds.voltage_unbalance_pct:g} %", "NEMA MG 1 (derating above 1 %)",
         st("voltage_unbalance_state")),
        ("Current unbalance", _num(result.get("current_unbalance_pct"), "%", 1),
         f"at most {thresholds.current_unbalance_pct:g} %", "common practice", st("current_unbalance_state")),
        ("Starting margin", _num(result.get("starting_margin"), "", 2),
         f"at least {thresholds.starting_margin:g} where the load needs breakaway torque", "common practice",
         st("starting_state")),
        ("Slip / efficiency", f"{_num(result.get('slip_pct'), '%', 2)} / "
                              f"{_num(result.get('efficiency_pct'), '%', 1)}"
                              + (f", {result['efficiency_class']}" if result.get("efficiency_class") else ""),
         "informative", "IEC 60034-30-1 (IE class)", "not judged"),
    ]


# --- the document ---------------------------------------------------------------------------------------
def render_certificate(cert, *, address: str, picture_png: bytes | None, thresholds) -> bytes:
    """The certificate of ``cert`` (``services.readings.CertificateRecord``) as PDF bytes.

    ``address`` is the reading's page in slipwise (the QR code); ``picture_png`` the torque-speed picture.
    """
    from fpdf import FPDF
    from fpdf.enums import XPos, YPos
    import segno

    row = cert.reading.row
    reviews = list(cert.reading.reviews)
    inputs = json.loads(row["inputs"])
    result = json.loads(row["result"])
    plate = cert.nameplate
    zone = _zone_of(row["taken_at"])
    sign_off_index = next((i for i, r in enumerate(reviews) if r["decision"] == "accepted"), None)
    signed = sign_off_index is not None
    before = reviews if not signed else reviews[:sign_off_index + 1]
    after = [] if not signed else reviews[sign_off_index + 1:]
    sign_off = reviews[sign_off_index] if signed else None
    fonts = _font_paths()

    class Certificate(FPDF):
        def header(self):
            self.set_font("DejaVu", "B", 9)
            self.set_text_color(90, 90, 90)
            self.cell(0, 5, f"slipwise · motor commissioning certificate · {row['site']} · {row['tag']} · "
                            f"reading {row['id']}", new_x=XPos.LMARGIN, new_y=YPos.NEXT)
            if not signed:
                self.set_text_color(161, 29, 43)
                self.cell(0, 5, "DRAFT — NOT SIGNED OFF: not a record of acceptance", new_x=XPos.LMARGIN,
                          new_y=YPos.NEXT)
            self.set_text_color(0, 0, 0)
            self.ln(2)

        def footer(self):
            self.set_y(-12)
            self.set_font("DejaVu", "", 7)
            self.set_text_color(90, 90, 90)
            self.cell(0, 4, f"Reading fingerprint {row['fingerprint'] or 'none'} · page {self.page_no()} of "
                            "{nb}", align="C")
            self.set_text_color(0, 0, 0)

    pdf = Certificate(format="A4", unit="mm")
    pdf.set_margins(16, 14, 16)
    pdf.set_auto_page_break(True, margin=18)
    for style, path in fonts.items():
        if style == "mono":
            pdf.add_font("DejaVuMono", "", str(path))
        else:
            pdf.add_font("DejaVu", style, str(path))
    pdf.set_title(f"Commissioning certificate {row['site']} {row['tag']} reading {row['id']}")
    pdf.set_author(row["technician_name"] or row["technician"])
    pdf.set_creator("slipwise")
    # the document's date is the record's own: the sign-off, or for a draft when the reading was received
    pdf.set_creation_date(sign_off["reviewed_at"] if signed else row["received_at"])
    pdf.alias_nb_pages()
    pdf.add_page()
    width = pdf.epw

    def heading(text: str) -> None:
        if pdf.get_y() > pdf.h - 40:
            pdf.add_page()
        pdf.ln(2)
        pdf.set_font("DejaVu", "B", 11)
        pdf.set_fill_color(228, 234, 240)
        pdf.cell(0, 7, " " + text, fill=True, new_x=XPos.LMARGIN, new_y=YPos.NEXT)
        pdf.ln(1)
        pdf.set_font("DejaVu", "", 9)

    def para(text: str, size: float = 9, style: str = "") -> None:
        pdf.set_font("DejaVu", style, size)
        pdf.multi_cell(0, 4.6, text, align="L", new_x=XPos.LMARGIN, new_y=YPos.NEXT)

    def table(rows, widths, header=None, size=8.5):
        pdf.set_font("DejaVu", "", size)
        with pdf.table(col_widths=widths, line_height=4.4, text_align="LEFT", first_row_as_headings=bool(header),
                       headings_style=_headings_style(), borders_layout="HORIZONTAL_LINES",
                       padding=1) as t:
            for r in ([header] if header else []) + list(rows):
                line = t.row()
                for cell in r:
                    line.cell(str(cell))

    # --- title block, with the QR code of the reading's page at the right
    qr = io.BytesIO()
    segno.make(address, error="m").save(qr, kind="png", scale=6, border=2)
    top = pdf.get_y()
    pdf.image(qr, x=pdf.w - pdf.r_margin - 30, y=top, w=30, h=30)
    pdf.set_font("DejaVu", "B", 17)
    pdf.cell(width - 34, 9, "Motor commissioning certificate", new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    pdf.set_font("DejaVu", "", 10)
    place = plate["location"] or NOT_RECORDED
    for label, value in (("Site", row["site"]), ("Motor tag", row["tag"]),
                         ("Description", plate["description"] or NOT_RECORDED), ("Location", place),
                         ("Reading", f"{row['id']}, taken {_local(row['taken_at'], zone)}"),
                         ("Nameplate", f"revision {row['motor_revision']}"),
                         ("Interpreted by", f"slipwise engine {row['engine_version']}")):
        pdf.set_font("DejaVu", "B", 9)
        pdf.cell(30, 5, label)
        pdf.set_font("DejaVu", "", 9)
        pdf.cell(width - 64, 5, str(value), new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    pdf.set_y(max(pdf.get_y(), top + 31))
    pdf.set_font("DejaVu", "", 7)
    pdf.cell(0, 4, f"QR: {address}", align="R", new_x=XPos.LMARGIN, new_y=YPos.NEXT)

    # --- status box
    pdf.ln(1)
    if signed:
        status = (f"SIGNED OFF: accepted by {_person(sign_off)} on {_local(sign_off['reviewed_at'], zone)}. "
                  "The content above the line 'Recorded after sign-off' is fixed.")
        colour = (27, 122, 58)
    else:
        latest = reviews[-1]["decision"] if reviews else None
        status = ("DRAFT — NOT SIGNED OFF. " + (f"Latest review: {latest}." if latest else "Not reviewed yet.")
                  + " A supervisor's acceptance is the sign-off.")
        colour = (161, 29, 43)
    if row["superseded_by"] is not None:
        status += f" SUPERSEDED by reading {row['superseded_by']}: this reading is no longer the motor's record."
    if row["supersedes_id"] is not None:
        status += f" This reading is a correction: it supersedes reading {row['supersedes_id']}."
    pdf.set_draw_color(*colour)
    pdf.set_text_color(*colour)
    pdf.set_line_width(0.6)
    pdf.set_font("DejaVu", "B", 10)
    pdf.multi_cell(0, 5.5, status, border=1, padding=2, new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    pdf.set_text_color(0, 0, 0)
    pdf.set_draw_color(0, 0, 0)
    pdf.set_line_width(0.2)
    verdict = result.get("verdict")
    if verdict:
        pdf.ln(1)
        para(f"Verdict of the running reading: {verdict}", 10, "B")

    # --- nameplate and instruments
    heading("Nameplate")
    given = [(label, _num(plate[f] if f in plate.keys() else None, unit)) for f, label, unit in NAMEPLATE_ROWS
             if (f in plate.keys() and plate[f] is not None)]
    half = (len(given) + 1) // 2
    left, right = given[:half], given[half:] + [("", "")] * (half - len(given[half:]))
    table([(a[0], a[1], b[0], b[1]) for a, b in zip(left, right)], (28, 30, 28, 30))
    heading("Instruments")
    instruments = inputs.get("instruments")
    if instruments:
        rows = []
        # the contract's text: one instrument per line, "name; serial; YYYY-MM-DD"
        items = instruments if isinstance(instruments, list) else str(instruments).splitlines()
        for item in items:
            if isinstance(item, str) and item.count(";") == 2:
                name, serial, due = (part.strip() for part in item.split(";"))
                rows.append((name, serial, due))
            elif isinstance(item, Mapping):
                rows.append((item.get("name") or NOT_RECORDED, item.get("serial") or NOT_RECORDED,
                             item.get("calibration_due") or item.get("calibration_due_date") or NOT_RECORDED))
            else:
                rows.append((str(item), "", ""))
        table(rows, (60, 40, 40), header=("instrument", "serial", "calibration due"))
    else:
        para(NOT_RECORDED)

    if inputs.get("notes"):
        heading("Notes")
        para(str(inputs["notes"]))

    # --- the tests
    heading("Tests with the motor isolated, then energised")
    table(test_rows(inputs, result), (34, 44, 46, 36, 18), header=("test", "value", "criterion", "source", "state"))
    heading("Running reading")
    entered = [(label, _num(inputs.get(f), unit)) for f, label, unit in READING_ROWS if inputs.get(f) is not None]
    half = (len(entered) + 1) // 2
    left, right = entered[:half], entered[half:] + [("", "")] * (half - len(entered[half:]))
    table([(a[0], a[1], b[0], b[1]) for a, b in zip(left, right)], (28, 30, 28, 30))
    pdf.ln(2)
    table(running_rows(result, thresholds), (34, 44, 46, 36, 18),
          header=("quantity", "value", "criterion", "source", "state"))

    # --- findings, departures, outstanding items
    heading("Findings")
    findings = result.get("findings") or []
    if result.get("error"):
        para(f"The engine could not interpret this reading: {result['error']}")
    if not findings:
        para("No flag raised: every judged quantity is clear on its band.")
    for f in findings:
        mark = "beyond" if f.get("state", "beyond") == "beyond" else "at the limit"
        para(f"• [{mark}] {f.get('text', '')}")
        if f.get("caution"):
            para(f"   Caution: {f['caution']}", 8, "I")
    heading("Departures and outstanding items")
    departures = [f"{c} (beyond)" for c in _codes(result.get("flags"))]
    departures += [f"{c} (at the limit)" for c in _codes(result.get("limit_flags"))]
    para("Departures: " + ("; ".join(d.replace("_", " ") for d in departures) if departures else "none"))
    missing = [t[0] for t in test_rows(inputs, result) if t[4] == NOT_RECORDED]
    outstanding = []
    if missing:
        outstanding.append("not recorded: " + ", ".join(missing))
    if not signed:
        outstanding.append("acceptance by a supervisor (sign-off)")
    if reviews and reviews[-1]["decision"] in ("retake", "rejected"):
        outstanding.append(f"the latest review asks for: {reviews[-1]['decision']}")
    para("Outstanding: " + ("; ".join(outstanding) if outstanding else "none"))

    # --- the picture
    if picture_png:
        if pdf.get_y() > pdf.h - 120:
            pdf.add_page()
        heading("Torque and speed")
        pdf.image(io.BytesIO(picture_png), w=width * 0.9, x=pdf.l_margin + width * 0.05)
        para("The points are the stored result's; the curves are the motor's as the fitted circuit gives them.", 7.5)

    # --- this motor over time (issue 11): the visits up to this reading, as the history service gave them
    history = getattr(cert, "history", None)
    if history is not None:
        _over_time(pdf, heading, para, history, row["id"], width)

    # --- people, reviews, evidence
    heading("Tested and reviewed")
    table([("Tested by", _person_row(row["technician_name"], row["technician"]),
            (row["technician_role"] or "technician"), _local(row["taken_at"], zone)),
           ("Accepted by" if signed else "Accepted by (pending)",
            _person(sign_off) if signed else "—", (sign_off["reviewer_role"] if signed else "supervisor"),
            _local(sign_off["reviewed_at"], zone) if signed else "—")],
          (30, 60, 30, 54), header=("", "full name", "role", "time"))
    heading("Review history")
    if not before:
        para("No review yet.")
    else:
        table([(_local(r["reviewed_at"], zone), _person(r), r["decision"], r["comment"] or "—")
               for r in before], (44, 44, 22, 64), header=("time", "reviewer", "decision", "comment"))
    heading("Record fingerprints (SHA-256 chain; checked by `slipwise verify`)")
    pdf.set_font("DejaVuMono", "", 7.5)
    pdf.multi_cell(0, 4, f"reading {row['id']}: {row['fingerprint'] or 'none'}", new_x=XPos.LMARGIN,
                   new_y=YPos.NEXT)
    for r in before:
        pdf.multi_cell(0, 4, f"review {r['id']} ({r['decision']}): {r['fingerprint'] or 'none'}",
                       new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    heading("Safety")
    for caution in SAFETY_CAUTIONS:
        para("• " + caution, 8.5)

    if after:
        heading("Recorded after sign-off")
        table([(_local(r["reviewed_at"], zone), _person(r), r["decision"], r["comment"] or "—")
               for r in after], (44, 44, 22, 64), header=("time", "reviewer", "decision", "comment"))
        pdf.set_font("DejaVuMono", "", 7.5)
        for r in after:
            pdf.multi_cell(0, 4, f"review {r['id']} ({r['decision']}): {r['fingerprint'] or 'none'}",
                           new_x=XPos.LMARGIN, new_y=YPos.NEXT)
    return bytes(pdf.output())


def _over_time(pdf, heading, para, history, reading_id: int, width: float) -> None:
    """"This motor over time": trend charts of the visits up to this reading, the baseline, this reading's
    change findings (``engine.history``'s, never judged again here)."""
    from .picture import render_history_png

    visits = history.visits
    png = render_history_png(visits) if len(visits) >= 2 else None
    if png is not None and pdf.get_y() > pdf.h - 125:
        pdf.add_page()
    heading("This motor over time")
    if len(visits) < 2:
        para("First visit of this motor: the baseline for later ones once it is accepted at review.")
        return
    base = next((v for v in visits if v.get("baseline")), None)
    para(f"{len(visits)} visits up to and including this reading, from {visits[0]['taken_date']} to "
         f"{visits[-1]['taken_date']}; later visits are not part of this certificate. "
         + (f"Baseline: reading {base['id']} of {base['taken_date']} (the first accepted, not superseded)."
            if base is not None else "No baseline yet: no earlier visit was accepted at review."), 8.5)
    if png is not None:
        pdf.image(io.BytesIO(png), w=width * 0.9, x=pdf.l_margin + width * 0.05)
        para("Dashed line: the baseline. Square: this reading. Hollow: superseded or sent back (not compared).",
             7.5)
    mine = next((v for v in visits if v["id"] == reading_id), None)
    changes = (mine or {}).get("changes") or []
    words = "; ".join(f"{c['code'].replace('_', ' ')} ({c['code']})" for c in changes)
    if not words:
        words = ("none: this reading is the baseline" if mine is not None and mine.get("baseline") else
                 "none" if base is not None and visits.index(base) < visits.index(mine) else
                 "not compared (no baseline before it)")
    para("Change from the baseline at this reading: " + words, 9, "B" if changes else "")
    for c in changes:
        para(f"• {c['text']}", 8.5)


def _person(review: Mapping[str, Any]) -> str:
    return _person_row(review["reviewer_name"], review["reviewer"])


def _person_row(full_name: str | None, username: str) -> str:
    return f"{full_name} ({username})" if full_name else username


def _headings_style():
    from fpdf.fonts import FontFace
    return FontFace(emphasis="BOLD", fill_color=(242, 242, 242))
