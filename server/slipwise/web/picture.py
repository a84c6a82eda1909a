"""The torque-speed picture of a reading: an SVG written directly (the API's picture) and matplotlib's Agg
back end (imported on first use) for the PNGs the certificate prints."""

from __future__ import annotations

import io
import math
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
    """SVG of the curves returned by ``slipwise.engine.torque_speed_curve``, written directly (no matplotlib).

    The view passes them through ``interpretation.with_stored_result`` first,
    so the points drawn are the stored result's; the numbers are the same ones
    GET .../torque-speed.json serves, placed on the axes by one linear map each.

    Draws the motor's torque-speed curve at rated and at measured voltage, the
    driven load's torque law, the operating point and the breakdown point, the
    rated torque and the synchronous speed as dotted lines, and a legend under
    the axes (it never covers a curve). Axes: shaft speed [rpm] from 0, torque
    [N·m] from 0. Styles are presentation attributes (no ``style``), so the
    picture needs no ``'unsafe-inline'``; it loads and runs nothing. The same
    curve and title give the same bytes.

    Written by hand because matplotlib takes about 140 ms of a worker's
    interpreter lock per picture; this takes about a millisecond. The
    certificate's PNG (:func:`render_torque_speed_png`) is still matplotlib's.
    """
    return _svg_picture(curve, title).encode("utf-8")


_W, _LEFT, _RIGHT, _TOP, _PLOT_H = 750, 72, 22, 52, 340
_FONT = 'font-family="DejaVu Sans, Verdana, Arial, sans-serif"'
_CURVE_LINES = (("torque_rated_v_nm", "#7a7a7a", 1.9, "7,3", "motor at rated voltage"),
                ("torque_measured_v_nm", "#1f5fa8", 2.8, None, "motor at measured voltage"),
                ("load_torque_nm", "#b8641c", 2.2, None, "driven load"))


def _finite(x: Any) -> float | None:
    try:
        v = float(x)
    except (TypeError, ValueError):
        return None
    return v if math.isfinite(v) else None


def _nice_step(span: float, target: int) -> float:
    """A tick step of 1, 2, 2.5 or 5 times a power of ten giving about ``target`` intervals over ``span``."""
    raw = span / target
    power = 10.0 ** math.floor(math.log10(raw))
    return next((m * power for m in (1.0, 2.0, 2.5, 5.0) if m * power >= raw * (1 - 1e-9)), 10.0 * power)


def _ticks(top: float, target: int) -> tuple[list[float], float]:
    """Ticks from 0 at a nice step, and the axis end: the data's top with a 5 % margin (as matplotlib's)."""
    end = top * 1.05
    step = _nice_step(end, target)
    return [k * step for k in range(int(end / step + 1e-9) + 1)], end


def _tick_label(v: float) -> str:
    return f"{v:.6g}"


def _svg_picture(curve: Mapping[str, Any], title: str) -> str:
    from xml.sax.saxutils import escape

    speed = [_finite(x) for x in curve["speed_rpm"]]
    lines = [(key, color, width, dash, label, [_finite(y) for y in curve[key]])
             for key, color, width, dash, label in _CURVE_LINES]
    op = (_finite(curve.get("operating_speed_rpm")), _finite(curve.get("operating_torque_nm")))
    bd = (_finite(curve.get("breakdown_speed_rpm")), _finite(curve.get("breakdown_torque_nm")))
    rated, sync = _finite(curve.get("rated_torque_nm")), _finite(curve.get("sync_speed_rpm"))
    op = op if None not in op else None
    bd = bd if None not in bd else None

    xs = [x for x in speed if x is not None] + [p[0] for p in (op, bd) if p]
    ys = [y for *_, ys_ in lines for y in ys_ if y is not None] + [p[1] for p in (op, bd) if p]
    x_ticks, x_end = _ticks(max([x for x in xs if x > 0], default=1.0), 8)
    y_ticks, y_end = _ticks(max([y for y in ys if y > 0], default=1.0), 6)
    plot_w = _W - _LEFT - _RIGHT
    bottom = _TOP + _PLOT_H

    def X(x: float) -> float:
        return _LEFT + x / x_end * plot_w

    def Y(y: float) -> float:
        return bottom - y / y_end * _PLOT_H

    legend = [("line", color, width, dash, label) for _, color, width, dash, label, _ in lines]
    if bd:
        legend.append(("breakdown", "#a11d2b", 0, None, f"breakdown {bd[1]:.0f} N·m at {bd[0]:.0f} rpm"))
    if op:
        legend.append(("operating", "#1b7a3a", 0, None,
                       f"operating point {op[1]:.0f} N·m at {op[0]:.0f} rpm"))
    if rated is not None:
        legend.append(("line", "#7a7a7a", 0.8, "1.3,2.2", f"rated torque {rated:.0f} N·m"))
    legend_rows = (len(legend) + 1) // 2
    height = bottom + 58 + 18 * legend_rows

    out = ['<?xml version="1.0" encoding="utf-8" standalone="no"?>\n',
           f'<svg xmlns="http://www.w3.org/2000/svg" width="{_W}" height="{height}" '
           f'viewBox="0 0 {_W} {height}" version="1.1" {_FONT} font-size="12" fill="#000000" '
           'stroke-linejoin="round" stroke-linecap="butt">\n',
           f"<title>{escape(title)}</title>\n",
           f'<rect x="0" y="0" width="{_W}" height="{height}" fill="#ffffff" stroke="none"/>\n',
           f'<defs><clipPath id="plot-area"><rect x="{_LEFT}" y="{_TOP}" width="{plot_w}" '
           f'height="{_PLOT_H}"/></clipPath></defs>\n']
    for k, line in enumerate(title.split("\n")):
        out.append(f'<text x="{_LEFT + plot_w / 2:.2f}" y="{18 + 16 * k}" text-anchor="middle" '
                   f'font-size="13">{escape(line)}</text>\n')

    out.append('<g stroke="#b0b0b0" stroke-width="0.5" stroke-opacity="0.6" fill="none">')
    grid = [f'<path d="M{X(x):.2f},{_TOP}V{bottom}"/>' for x in x_ticks[1:]]
    grid += [f'<path d="M{_LEFT},{Y(y):.2f}H{_LEFT + plot_w}"/>' for y in y_ticks[1:]]
    out += grid + ["</g>\n"]

    out.append('<g fill="none" stroke="#000000" stroke-width="0.8">')
    out += [f'<path d="M{X(x):.2f},{bottom}v4"/>' for x in x_ticks]
    out += [f'<path d="M{_LEFT},{Y(y):.2f}h-4"/>' for y in y_ticks]
    out.append("</g>\n")
    out += [f'<text x="{X(x):.2f}" y="{bottom + 18}" text-anchor="middle">{_tick_label(x)}</text>'
            for x in x_ticks]
    out += [f'<text x="{_LEFT - 8}" y="{Y(y) + 4:.2f}" text-anchor="end">{_tick_label(y)}</text>'
            for y in y_ticks]
    out.append(f'\n<text x="{_LEFT + plot_w / 2:.2f}" y="{bottom + 38}" text-anchor="middle">shaft speed [rpm]'
               f'</text>\n<text x="18" y="{_TOP + _PLOT_H / 2:.2f}" text-anchor="middle" '
               f'transform="rotate(-90 18 {_TOP + _PLOT_H / 2:.2f})">torque [N·m]</text>\n')

    out.append('<g clip-path="url(#plot-area)" fill="none">\n')
    if rated is not None:
        out.append(f'<path d="M{_LEFT},{Y(rated):.2f}H{_LEFT + plot_w}" stroke="#7a7a7a" stroke-width="0.8" '
                   'stroke-dasharray="1.3,2.2"/>\n')
    if sync is not None:
        out.append(f'<path d="M{X(sync):.2f},{_TOP}V{bottom}" stroke="#7a7a7a" stroke-width="0.8" '
                   'stroke-dasharray="1.3,2.2"/>\n')
    for key, color, width, dash, _, ys_ in lines:
        d, pen = [], "M"
        for x, y in zip(speed, ys_):
            if x is None or y is None:
                pen = "M"   # a gap where the curve is undefined, as matplotlib leaves one at NaN
                continue
            d.append(f"{pen}{X(x):.2f},{Y(y):.2f}")
            pen = "L"
        if d:
            dashed = f' stroke-dasharray="{dash}"' if dash else ""
            out.append(f'<path class="{key}" d="{"".join(d)}" stroke="{color}" stroke-width="{width}"{dashed}/>\n')
    out.append("</g>\n")
    if bd:
        x, y = X(bd[0]), Y(bd[1])
        out.append(f'<path class="breakdown_point" d="M{x:.2f},{y - 6.5:.2f}L{x + 6:.2f},{y + 4:.2f}'
                   f'L{x - 6:.2f},{y + 4:.2f}Z" fill="#a11d2b" stroke="#a11d2b"/>\n')
    if op:
        out.append(f'<circle class="operating_point" cx="{X(op[0]):.2f}" cy="{Y(op[1]):.2f}" r="5.5" '
                   'fill="#1b7a3a" stroke="#1b7a3a"/>\n')
    else:
        out.append(f'<text x="{_LEFT + 10}" y="{bottom - 12}" font-size="11" fill="#a11d2b">no operating point: '
                   "the load torque exceeds the motor torque</text>\n")
    out.append(f'<rect x="{_LEFT}" y="{_TOP}" width="{plot_w}" height="{_PLOT_H}" fill="none" stroke="#000000" '
               'stroke-width="0.8"/>\n')

    out.append('<g font-size="11">\n')
    for k, (kind, color, width, dash, label) in enumerate(legend):
        x0 = _LEFT + (k % 2) * plot_w / 2
        y0 = bottom + 60 + 18 * (k // 2)
        if kind == "line":
            dashed = f' stroke-dasharray="{dash}"' if dash else ""
            out.append(f'<path d="M{x0:.2f},{y0 - 4}h26" stroke="{color}" stroke-width="{width}"{dashed}/>')
        elif kind == "breakdown":
            out.append(f'<path d="M{x0 + 13:.2f},{y0 - 10.5}l6,10.5h-12Z" fill="{color}"/>')
        else:
            out.append(f'<circle cx="{x0 + 13:.2f}" cy="{y0 - 4}" r="5" fill="{color}"/>')
        out.append(f'<text x="{x0 + 34:.2f}" y="{y0}">{escape(label)}</text>\n')
    out.append("</g>\n</svg>\n")
    return "".join(out)


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
