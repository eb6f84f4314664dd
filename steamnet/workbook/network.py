"""A drawing of the network for one case: headers as horizontal bars from the highest
pressure down, the equipment between them, the case's flows in the labels.

Drawn with matplotlib's Agg canvas directly (no pyplot, so no global backend is set),
from the graph of :func:`steamnet.graph.build_graph`, and placed in the workbook as a PNG.
"""

from __future__ import annotations

import io
import math
import textwrap

from matplotlib.backends.backend_agg import FigureCanvasAgg
from matplotlib.figure import Figure

from ..graph import build_graph, header_order

__all__ = ["network_png", "layout", "not_running", "worst_case"]

GAP = 3.0            # vertical distance between header bars
BOX = 1.45           # distance of a box from its header bar
SLOT = 1.9           # horizontal distance between columns of equipment
_BAR, _LINE, _IDLE = "#3A4B5C", "#5B6770", "#B8BEC4"
_FILL = {"boiler": "#FBE9D7", "steam_transfer": "#EDE7F6", "turbine": "#DDEBF7",
         "extraction_turbine": "#DDEBF7", "letdown": "#E2EFDA", "users": "#F2F2F2",
         "vent": "#F2F2F2", "deaerator": "#F2F2F2"}


def worst_case(cases, finding_counts: dict) -> str | None:
    """The worst of ``cases`` (CaseResults): one that does not balance first, then the
    most failed checks, then the most warnings; the first of equals."""
    def key(ic):
        i, c = ic
        n = finding_counts.get(c.case, {})
        return (c.ok, -n.get("fail", 0), -n.get("warn", 0), i)
    return min(enumerate(cases), key=key)[1].case if cases else None


def _num(v) -> float:
    try:
        f = float(v)
    except (TypeError, ValueError):
        return 0.0
    return f if math.isfinite(f) else 0.0


def _elements(model, equipment_rows: dict) -> list[dict]:
    """The boxes to draw: kind, label lines, headers above/below, flow."""
    g = build_graph(model)
    order = header_order(model)
    level = {h: i for i, h in enumerate(order)}
    out: list[dict] = []
    users: dict[str, list[str]] = {}

    def hdrs(nodes):
        return sorted({n[1] for n in nodes if n[0] == "header"}, key=level.get)
    for node, data in g.nodes(data=True):
        kind, name = node
        if kind in ("header", "water_supply", "outside"):
            continue
        ins, outs = hdrs(g.predecessors(node)), hdrs(g.successors(node))
        r = equipment_rows.get(name, {})
        flow = _num(r.get("flow_t_h"))
        if kind == "user":
            users.setdefault(ins[0], []).append(name)
            continue
        e = {"kind": kind, "name": name, "flow": flow, "lines": [name, f"{flow:.1f} t/h"],
             "above": None, "below": [], "labels": {}}
        if kind == "boiler" or (kind == "steam_transfer" and data.get("direction") ==
                                "import"):
            e["role"], e["below"] = "source", outs[:1]      # main header (not the flash)
            if kind == "boiler" and _num(r.get("fuel_mw")) > 0:
                e["lines"].append(f"fuel {_num(r.get('fuel_mw')):.1f} MW")
        elif kind in ("turbine", "extraction_turbine", "letdown"):
            e["role"], e["above"], e["below"] = "link", ins[0], outs
            if kind != "letdown":
                p = _num(r.get("power_kw")) / 1e3
                e["lines"].append(f"{p:.2f} MW" + (" (e)" if r.get("drive") == "generator"
                                                   else " shaft"))
            else:
                e["lines"].append(f"spray {_num(r.get('spray_t_h')):.2f} t/h")
                if flow > 0 and r.get("t_out_degc") is not None:
                    e["lines"].append(f"out {_num(r.get('t_out_degc')):.0f} degC")
            if kind == "extraction_turbine":
                for h in outs:
                    x = equipment_rows.get(f"{name}/{h}", {})
                    e["labels"][h] = f"{_num(x.get('flow_t_h')):.1f} t/h"
                if ("outside", "condenser") in set(g.successors(node)):
                    e["lines"].append(f"cond. {_num(r.get('exhaust_t_h')):.1f} t/h")
        else:                                            # vent, export, deaerator
            e["role"], e["above"] = "sink", ins[0]
        out.append(e)
    for h in order:
        names = users.get(h, [])
        if names:
            flow = sum(_num(equipment_rows.get(n, {}).get("flow_t_h")) for n in names)
            out.append({"kind": "users", "name": f"users on {h}", "role": "sink",
                        "flow": flow, "above": h, "below": [], "labels": {},
                        "lines": [f"{len(names)} user{'s' if len(names) > 1 else ''}",
                                  f"{flow:.1f} t/h"]})
    return out


def layout(model, elements: list[dict]) -> tuple[dict, int]:
    """Header y positions and a column for every element, packed so that two elements
    share a column only where their vertical spans are apart (a line that ends at a bar
    and another that leaves it in the same column would read as one flow).

    The sources of the highest header (its boilers, imports) stand above it, where
    nothing else is drawn: they go half a column across, between the columns of the
    elements that leave the header below, so that no arrow seems to run through it."""
    order = header_order(model)
    y = {h: -GAP * i for i, h in enumerate(order)}
    rank = {"source": 0, "link": 1, "sink": 2}
    top = order[0] if order else None
    elements.sort(key=lambda e: (rank[e["role"]],
                                 y.get(e["above"] or (e["below"] or [None])[0], 0) * -1,
                                 -min((y[b] for b in e["below"]), default=0)))
    columns: list[list[tuple[float, float]]] = []
    above_top = []
    for e in elements:
        if e["role"] == "source":
            hy = y[e["below"][0]]
            span = (hy, hy + GAP * 0.8)
            e["y"] = hy + BOX
            if e["below"][0] == top:
                above_top.append(e)
                continue
        elif e["role"] == "link":
            span = (min(y[b] for b in e["below"]), y[e["above"]])
            e["y"] = y[e["above"]] - GAP / 2          # midway to the next bar down
        else:
            hy = y[e["above"]]
            span = (hy - GAP * 0.8, hy)
            e["y"] = hy - BOX
        for i, used in enumerate(columns):
            if all(span[1] < lo - 1e-9 or span[0] > hi + 1e-9 for lo, hi in used):
                used.append(span)
                e["col"] = i
                break
        else:
            columns.append([span])
            e["col"] = len(columns) - 1
    n = max(1, len(columns))
    if above_top:                       # half a column across, spread evenly
        n = max(n, len(above_top) + 1)
        for k, e in enumerate(above_top):
            e["col"] = 0.5 + (k * (n - 1)) // len(above_top)
    return y, n


#: Fonts of the drawing [pt]. The drawing is sized so that it prints on one landscape
#: page (the area A4 and Letter share) at about its own size: the smallest of these is
#: the smallest printed text, give or take the print scale (docs/workbook.md).
TITLE_PT, NOTE_PT, HEADER_PT, BOX_PT, LABEL_PT = 12.0, 8.5, 9.0, 8.5, 8.5
SMALLEST_PT = min(NOTE_PT, HEADER_PT, BOX_PT, LABEL_PT)
#: Inches of the figure per unit of the drawing's coordinates, across and down.
IN_PER_X, IN_PER_Y = 0.58, 0.38
#: Room left of the first column for the header names [drawing units].
LABEL_ROOM = 3.0
#: Height of the title and notes above the drawing [in].
TOP_IN = 0.95
INVENTED = "invented demo plant"
#: Fill of a let-down box by the worst verdict of its checks in the case drawn (the
#: palette of steamnet.workbook.style).
_VERDICT_FILL = {"fail": "#F4CCCC", "warn": "#FCE8B2", "not_assessed": "#E7E6E6",
                 "ok": "#E2EFDA"}


def network_png(model, case, *, dpi: int = 110, verdicts: dict | None = None) -> bytes:
    """PNG of the network of ``model`` with the flows of ``case`` (a CaseResult);
    ``verdicts`` maps a let-down station to the worst verdict of its checks in the case,
    marked on its box."""
    eq = case.equipment
    rows = {str(r["item"]): r for r in eq.to_dict("records")} if len(eq) else {}
    hd = case.headers
    hrows = {str(r["header"]): r for r in hd.to_dict("records")} if len(hd) else {}
    elements = _elements(model, rows)
    for e in elements:
        v = (verdicts or {}).get(e["name"]) if e["kind"] == "letdown" else None
        if v and v in _VERDICT_FILL:            # not applicable: no steam, no mark
            e["verdict"] = str(v)
            e["lines"].append(f"checks: {str(v).replace('_', ' ')}")
    y, ncol = layout(model, elements)
    width = (ncol - 1) * SLOT
    x0, x1 = -0.95, width + 0.95
    left, right = x0 - LABEL_ROOM, x1 + 0.3
    bottom, top = min(y.values()) - GAP * 0.75, max(y.values()) + GAP * 0.8
    fig_w = max(7.0, (right - left) * IN_PER_X)
    fig_h = (top - bottom) * IN_PER_Y + TOP_IN
    fig = Figure(figsize=(fig_w, fig_h), dpi=dpi)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0.0, 0.0, 1.0, 1.0 - TOP_IN / fig_h))
    ax.set_axis_off()
    for h, hy in y.items():
        ax.plot([x0, x1], [hy, hy], color=_BAR, lw=7, solid_capstyle="butt", zorder=3)
        r = hrows.get(h, {})
        barg = (model.headers[h].pressure - model.site.atmospheric_pressure) / 1e5
        text = f"{h}  {barg:.1f} bar(g)"
        if r:
            text += f"\n{_num(r.get('t_degc')):.0f} degC, {_num(r.get('inflow_t_h')):.1f} t/h"
            if r.get("wet"):
                text += "\nwet steam"
        ax.text(x0 - 0.15, hy, text, ha="right", va="center", fontsize=HEADER_PT,
                fontweight="bold", color=_BAR)
    for e in elements:
        _draw_element(ax, e, y)
    invented = bool(getattr(model.site, "invented", False))
    status = "" if case.status == "solved" else f" ({case.status.replace('_', ' ')})"
    notes = ["Headers from the highest pressure down, flows of this case. Grey: no flow "
             "in this case. A line broken at a bar passes behind it."]
    if verdicts:
        notes.append("A let-down box is filled by the worst verdict of its checks in "
                     "this case (red fail, amber warn, green ok).")
    idle = not_running(model)
    if idle:
        notes.append("Not running in this case (not drawn): " + ", ".join(idle) + ".")
    if invented:
        notes.insert(0, f"An {INVENTED}: the plant and every number are invented.")
    note = "\n".join(textwrap.fill(n, 130) for n in notes)
    top_in = TOP_IN + 0.15 * (note.count("\n") - 1)
    fig.set_size_inches(fig_w, fig_h - TOP_IN + top_in)
    fig_h = fig_h - TOP_IN + top_in
    ax.set_position((0.0, 0.0, 1.0, 1.0 - top_in / fig_h))
    title = f"{model.site.name}: steam network, case '{case.case}'{status}"
    fig.text(0.5, 1 - 0.1 / fig_h, title, ha="center", va="top", fontsize=TITLE_PT,
             fontweight="bold", color="#7A1F1F" if status else "#1F2D3A")
    fig.text(0.5, 1 - 0.38 / fig_h, note, ha="center", va="top", fontsize=NOTE_PT,
             color="#7A1F1F" if invented else "#595959", linespacing=1.25)
    ax.set_xlim(left, right)
    ax.set_ylim(bottom, top)
    buf = io.BytesIO()
    # the fastest zlib level: the drawing is a tenth larger and encodes in half the time
    fig.savefig(buf, format="png", dpi=dpi, metadata={"Software": None},
                pil_kwargs={"compress_level": 1})
    return buf.getvalue()


def not_running(model) -> list[str]:
    """Items of the model that are out of service, off, tripped or closed."""
    out = []
    for items in model.items.values():
        for name, it in items.items():
            mode = getattr(it, "mode", None)
            if mode in ("off", "tripped", "closed"):
                out.append(f"{name} ({mode})")
            elif getattr(it, "in_service", True) is False:
                out.append(f"{name} (out of service)")
    return out


def _vline(ax, x, ya, yb, y_bars, colour, *, arrow: bool):
    """A vertical line from ya down to yb, broken where it passes behind other bars."""
    lo, hi = min(ya, yb), max(ya, yb)
    cuts = sorted(v for v in y_bars if lo + 1e-6 < v < hi - 1e-6)
    pts, top = [], hi
    for c in reversed(cuts):
        pts.append((top, c + 0.22))
        top = c - 0.22
    pts.append((top, lo))
    for a, b in pts:
        ax.plot([x, x], [a, b], color=colour, lw=1.6, zorder=1)
    if arrow:
        ax.annotate("", xy=(x, yb + (0.14 if yb < ya else -0.14)),
                    xytext=(x, yb + (0.7 if yb < ya else -0.7)),
                    arrowprops=dict(arrowstyle="-|>", color=colour, lw=1.6), zorder=2)


def _draw_element(ax, e, y):
    x = e["col"] * SLOT
    idle = e["flow"] <= 1e-6
    colour = _IDLE if idle else _LINE
    bars = list(y.values())
    if e["role"] == "source":
        _vline(ax, x, e["y"], y[e["below"][0]], bars, colour, arrow=True)
    elif e["role"] == "link":
        for b in e["below"]:
            _vline(ax, x, y[e["above"]], y[b], bars, colour, arrow=True)
            if b in e["labels"]:
                ax.text(x + 0.1, y[b] - 0.3, e["labels"][b], fontsize=LABEL_PT,
                        color=colour, ha="left", va="top", zorder=4)
    else:
        _vline(ax, x, y[e["above"]], e["y"], bars, colour, arrow=False)
    fill = _VERDICT_FILL.get(e.get("verdict", ""), _FILL.get(e["kind"], "#F2F2F2"))
    ax.text(x, e["y"], "\n".join(e["lines"]), ha="center", va="center", fontsize=BOX_PT,
            color="#8C8C8C" if idle else "#1F2D3A", zorder=5,
            bbox=dict(boxstyle="round,pad=0.3", fc="#FFFFFF" if idle and "verdict" not in e
                      else fill, ec=colour, ls="--" if idle else "-", lw=1.0))
