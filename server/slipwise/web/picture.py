"""The torque-speed picture of a reading, drawn with matplotlib's Agg back end (imported on first use)."""

from __future__ import annotations

import io
import re
import threading
from typing import Any, Mapping

_lock = threading.Lock()  # matplotlib's font cache and rcParams are not thread-safe


def picture_title(summary: Mapping[str, Any], result: Mapping[str, Any], reading_id: int) -> str:
    """The picture's title: which reading, and which engine produced the points drawn.

    The points come from the stored result; the motor's curves from the engine
    running now, named too when it is another version.
    """
    from slipwise.contract import ENGINE_VERSION

    stored = result.get("engine_version") or summary["engine_version"]
    drawn_by = "" if stored == ENGINE_VERSION else f"; curves drawn by engine {ENGINE_VERSION}"
    return (f"{summary['tag']} — reading {reading_id}, taken {summary['taken_at']}\n"
            f"points from the stored result of engine {stored}{drawn_by}")


def _draw(fig, curve: Mapping[str, Any], title: str) -> None:
    """The torque-speed axes on ``fig``: the motor's curves, the load, the operating and breakdown points."""
    ax = fig.add_subplot(1, 1, 1)
    speed = curve["speed_rpm"]
    ax.plot(speed, curve["torque_rated_v_nm"], color="#7a7a7a", linestyle="--", linewidth=1.4,
            label="motor at rated voltage")
    ax.plot(speed, curve["torque_measured_v_nm"], color="#1f5fa8", linewidth=2.0,
            label="motor at measured voltage")
    ax.plot(speed, curve["load_torque_nm"], color="#b8641c", linewidth=1.6, label="driven load")
    if curve.get("breakdown_speed_rpm") is not None and curve.get("breakdown_torque_nm") is not None:
        ax.plot([curve["breakdown_speed_rpm"]], [curve["breakdown_torque_nm"]], marker="^", markersize=9,
                color="#a11d2b", linestyle="none",
                label=f"breakdown {curve['breakdown_torque_nm']:.0f} N·m at {curve['breakdown_speed_rpm']:.0f} rpm")
    if curve.get("operating_speed_rpm") is not None and curve.get("operating_torque_nm") is not None:
        ax.plot([curve["operating_speed_rpm"]], [curve["operating_torque_nm"]], marker="o", markersize=9,
                color="#1b7a3a", linestyle="none",
                label=f"operating point {curve['operating_torque_nm']:.0f} N·m at "
                      f"{curve['operating_speed_rpm']:.0f} rpm")
    else:
        ax.text(0.02, 0.04, "no operating point: the load torque exceeds the motor torque",
                transform=ax.transAxes, fontsize=9, color="#a11d2b")
    if curve.get("rated_torque_nm") is not None:
        ax.axhline(curve["rated_torque_nm"], color="#7a7a7a", linewidth=0.8, linestyle=":",
                   label=f"rated torque {curve['rated_torque_nm']:.0f} N·m")
    if curve.get("sync_speed_rpm") is not None:
        ax.axvline(curve["sync_speed_rpm"], color="#7a7a7a", linewidth=0.8, linestyle=":")
    ax.set_xlabel("shaft speed [rpm]")
    ax.set_ylabel("torque [N·m]")
    ax.set_title(title, fontsize=10)
    ax.set_xlim(left=0)
    ax.set_ylim(bottom=0)
    ax.grid(True, linewidth=0.4, alpha=0.6)
    ax.legend(loc="upper left", fontsize=8, frameon=False)
    fig.tight_layout()


def render_torque_speed_svg(curve: Mapping[str, Any], title: str) -> bytes:
    """SVG of the curves returned by ``slipwise.engine.torque_speed_curve``.

    The view passes them through ``interpretation.with_stored_result`` first,
    so the points drawn are the stored result's.

    Draws the motor's torque-speed curve at rated and at measured voltage, the
    driven load's torque law, the operating point and the breakdown point.
    Axes: shaft speed [rpm], torque [N·m].
    """
    with _lock:
        import matplotlib
        matplotlib.use("Agg", force=False)
        from matplotlib.figure import Figure

        matplotlib.rcParams["svg.hashsalt"] = "slipwise"
        fig = Figure(figsize=(7.5, 4.6), dpi=100)
        _draw(fig, curve, title)
        out = io.BytesIO()
        fig.savefig(out, format="svg", metadata={"Date": None})
    return without_inline_style(out.getvalue())


def render_torque_speed_png(curve: Mapping[str, Any], title: str, dpi: int = 200) -> bytes:
    """The same picture as a PNG, for print (the certificate); no date or software stamp in it."""
    with _lock:
        import matplotlib
        matplotlib.use("Agg", force=False)
        from matplotlib.figure import Figure

        fig = Figure(figsize=(7.5, 4.6), dpi=dpi)
        _draw(fig, curve, title)
        out = io.BytesIO()
        fig.savefig(out, format="png", metadata={"Software": None})
    return out.getvalue()


_STYLE_ATTRIBUTE = re.compile(rb' style="([^"]*)"')
_STYLE_ELEMENT = re.compile(rb'<style type="text/css">\*\{([^}]*)\}</style>')
_PROPERTY = re.compile(rb"^[a-z-]+$")


def _attributes(declarations: bytes) -> bytes:
    out = b""
    for declaration in declarations.split(b";"):
        name, _, value = declaration.partition(b":")
        name, value = name.strip(), value.strip()
        if name:
            if not _PROPERTY.match(name) or b'"' in value:
                raise ValueError(f"unexpected SVG style {declaration!r}")
            out += b" " + name + b'="' + value + b'"'
    return out


def without_inline_style(svg: bytes) -> bytes:
    """matplotlib's SVG with its CSS turned into presentation attributes.

    matplotlib writes ``style="fill: ...; stroke: ..."`` on each element and one
    ``<style>*{stroke-linejoin: round; stroke-linecap: butt}</style>``. As
    attributes (``fill="..."``; the two defaults on the root element, where they
    are inherited) the picture draws the same and needs no ``'unsafe-inline'``
    in its Content-Security-Policy.
    """
    defaults = _STYLE_ELEMENT.search(svg)
    if defaults is not None:
        svg = svg[:defaults.start()] + svg[defaults.end():]
        svg = svg.replace(b"<svg ", b"<svg" + _attributes(defaults.group(1)) + b" ", 1)
    return _STYLE_ATTRIBUTE.sub(lambda m: _attributes(m.group(1)), svg)


#: The panels of "this motor over time": (visit key, axis label, log scale), each drawn when a visit has a value.
HISTORY_PANELS = (("insulation_resistance_40c_mohm", "insulation resistance at 40 °C [MΩ]", True),
                  ("polarization_index", "polarization index [–]", False),
                  ("vibration_velocity_mm_s", "vibration velocity [mm/s]", False),
                  ("load_pct", "load [% of rated] with its band", False))


def _value(v: Any) -> float:
    try:
        return float(v) if v is not None else float("nan")
    except (TypeError, ValueError):
        return float("nan")


def history_panels(visits) -> list[tuple[str, str, bool]]:
    """The panels with at least one value among ``visits``."""
    import math
    return [p for p in HISTORY_PANELS if any(not math.isnan(_value(v.get(p[0]))) for v in visits)]


def render_history_png(visits, dpi: int = 200) -> bytes | None:
    """Small trend charts of a motor's visits (oldest first, as ``services.history`` gives them), for print.

    One panel per quantity with a value (:data:`HISTORY_PANELS`); the x axis is the visit, labelled with its
    date; the baseline visit is marked by a dashed line, the last visit (the certificate's reading) by a filled
    square; a visit that is superseded or sent back is drawn hollow. None when no panel has a value.
    Fixed size and fonts, no date or software stamp: the same visits give the same bytes.
    """
    panels = history_panels(visits)
    if not panels:
        return None
    with _lock:
        import matplotlib
        matplotlib.use("Agg", force=False)
        from matplotlib.figure import Figure

        with matplotlib.rc_context({"font.family": "DejaVu Sans", "font.size": 7.5, "axes.titlesize": 8,
                                    "axes.labelsize": 7.5, "xtick.labelsize": 7, "ytick.labelsize": 7}):
            cols = 1 if len(panels) == 1 else 2
            rows = (len(panels) + 1) // 2
            fig = Figure(figsize=(7.5, 2.0 * rows + 0.2), dpi=dpi)
            _draw_history(fig, visits, panels, rows, cols)
            out = io.BytesIO()
            fig.savefig(out, format="png", metadata={"Software": None})
    return out.getvalue()


def _log_minor_label(value: float, _pos=None) -> str:
    """A minor label on a log axis only at 2, 3 and 5 times a power of ten, so labels do not crowd."""
    import math
    if not value > 0:
        return ""
    lead = value / 10 ** math.floor(math.log10(value) + 1e-9)
    return f"{value:g}" if round(lead, 6) in (2.0, 3.0, 5.0) else ""


def _draw_history(fig, visits, panels, rows: int, cols: int) -> None:
    from matplotlib.ticker import FixedLocator, FuncFormatter, NullLocator

    x = list(range(len(visits)))
    base = next((i for i, v in enumerate(visits) if v.get("baseline")), None)
    standing = [v.get("superseded_by") is None and v.get("review_decision") not in ("retake", "rejected")
                for v in visits]
    step = max(1, -(-len(visits) // 6))   # at most about six date labels
    ticks = sorted(set(range(0, len(visits), step)) | {len(visits) - 1})
    for k, (key, label, log) in enumerate(panels):
        ax = fig.add_subplot(rows, cols, k + 1)
        y = [_value(v.get(key)) for v in visits]
        if key == "load_pct":
            lo = [_value(v.get("load_low_pct")) for v in visits]
            hi = [_value(v.get("load_high_pct")) for v in visits]
            ax.fill_between(x, lo, hi, color="#1f5fa8", alpha=0.18, linewidth=0, label="band")
            for i in x:
                ax.plot([i, i], [lo[i], hi[i]], color="#1f5fa8", linewidth=1.0, alpha=0.7)
        ax.plot(x, y, color="#1f5fa8", linewidth=1.2)
        for i in x:
            last = i == len(visits) - 1
            ax.plot([i], [y[i]], marker="s" if last else "o", markersize=5.5 if last else 4.5, linestyle="none",
                    color="#1f5fa8", markerfacecolor="#1f5fa8" if standing[i] else "white")
        if base is not None:
            ax.axvline(base, color="#1b7a3a", linewidth=1.0, linestyle="--")
            ax.text(base, 1.0, " baseline", transform=ax.get_xaxis_transform(), color="#1b7a3a", fontsize=6.5,
                    va="top", ha="left")
        if log:   # plain numbers on the log axis (150, not 1.5 × 10²), minor labels only where few decades
            ax.set_yscale("log")
            ax.yaxis.set_major_formatter(FuncFormatter(lambda value, _pos: f"{value:g}"))
            ax.yaxis.set_minor_formatter(FuncFormatter(_log_minor_label))
        ax.set_title(label, loc="left")
        ax.set_xlim(-0.4, len(visits) - 0.6)
        ax.xaxis.set_major_locator(FixedLocator(ticks))
        ax.xaxis.set_minor_locator(NullLocator())
        ax.set_xticklabels([str(visits[i].get("taken_date", "")) for i in ticks])
        ax.grid(True, linewidth=0.4, alpha=0.6)
        ax.margins(y=0.2)
    fig.tight_layout(pad=0.6, h_pad=0.8, w_pad=1.2)
