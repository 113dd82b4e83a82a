"""Reports of a sweep: the terminal table, the workbook, and the decision map plot (which
topology wins where, over the one or two varied brief fields).

Every figure carries its unit: the table formats each value with tradeoff.units, the map's
ticks are the grid values with their units and its axis labels name the field and its unit.
"""
from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path
from typing import TYPE_CHECKING

import numpy as np

from tradeoff.errors import InputError, Problem
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from rich.console import Console

    from tradeoff.grid_sweep import Axis, SweepResult

__all__ = ["render_sweep", "workbook_bytes", "write_csv", "write_workbook", "plot_decision_map", "DecisionMap",
           "NO_WINNER", "check_mappable"]

NO_WINNER = "no feasible design"
"""Legend entry of the cells where no topology meets the brief."""

_NO_WINNER_COLOUR = "#ffffff"
_UNIT_NAMES = {"": "dimensionless", "%": "fraction", "degC": "°C", "ohm": "Ω"}


def render_sweep(result: "SweepResult", console: "Console") -> None:
    """The sweep table within the console's width: per grid point the varied values, the winner
    and its score, its worst-case delay, yield, standby after the timeout, parts and cost, and how
    many topologies can meet the brief; the runner-up (or why nothing wins) on the line below."""
    from tradeoff.report.labels import span_in, time_unit
    from tradeoff.report.terminal import render_rows, wrap_lines

    head = (f"{result.title}: sweep of {len(result.points)} points, ranked by {result.method}; Monte Carlo "
            f"{result.samples} samples, seed {result.seed}; topologies {', '.join(result.topologies)}")
    for line in wrap_lines(head, console.width):
        console.print(line, highlight=False, markup=False)
    rows, details = [], []
    for point in result.points:
        w, r = point["winner"], point["runner_up"]
        figures = ["none", "-", "-", "-", "-", "-", "-"] if w is None else [
            w["design"], f"{w['score']:.3f}",
            span_in(w["delay_worst_min_s"], w["delay_worst_max_s"], time_unit(w["delay_worst_min_s"])),
            fq(w["yield_frac"], "%"), fq(w["standby_after_a"], "A"), str(w["parts"]), f"{w['cost_eur']:.2f}"]
        feasible = point["studied"] - point["infeasible"]
        rows.append([*(a.text(i) for a, i in zip(result.axes, point["index"])), *figures,
                     f"{feasible} of {point['studied']}"])
        details.append(point["note"] if w is None else
                       f"runner-up {r['design']} ({r['score']:.3f})" if r else "no runner-up")
    axes = len(result.axes)
    headers = [*(a.key.replace(".", ".\n", 1) for a in result.axes), "winner", "score", "worst case", "yield",
               "standby\nafter", "parts", "cost\n[EUR]", "feasible"]
    render_rows(console, "Winner per grid point (scores 0 to 1, higher is better)", headers, rows, details,
                left=(axes,))
    for note in result.notes:
        for line in wrap_lines(f"Note: {note}", console.width, rest="      "):
            console.print(line, highlight=False, markup=False)


def workbook_bytes(result: "SweepResult") -> bytes:
    """A workbook with the sweep table (one row per point), the axes and the settings; headers frozen."""
    import pandas as pd

    from tradeoff.report import workbook

    axes = pd.DataFrame([{"key": a.key, "column": a.column, "unit": a.unit or "(none)", "log_spaced": a.log,
                          "values": ", ".join(a.text(i) for i in range(len(a.values)))} for a in result.axes])
    settings = pd.DataFrame([{"title": result.title, "method": result.method, "samples": result.samples,
                              "seed": result.seed, "topologies": ", ".join(result.topologies),
                              "notes": " | ".join(result.notes)}])
    return workbook.workbook_bytes(None, {"sweep": result.to_frame(), "axes": axes, "settings": settings})


def write_csv(result: "SweepResult", path: str | Path, force: bool = False) -> None:
    """The sweep table as CSV (one row per grid point), written atomically; an existing file needs `force`."""
    from tradeoff.report.files import write_atomic

    write_atomic(path, result.to_frame().to_csv(index=False).encode("utf-8"), force)


def write_workbook(result: "SweepResult", path: str | Path, force: bool = False) -> None:
    """The sweep table, axes and settings as a workbook, written atomically; an existing file needs `force`."""
    from tradeoff.report.files import write_atomic

    write_atomic(path, workbook_bytes(result), force)


def check_mappable(keys: list[str]) -> None:
    """Raise InputError unless one or two fields are varied (what a decision map can show)."""
    if not 1 <= len(keys) <= 2:
        raise InputError(Problem("--plot", None, None, "plot", f"a decision map shows one or two varied fields; "
                                 f"{len(keys)} are varied ({', '.join(keys)}); accepted: one or two --vary options"))


def _edges(axis: "Axis", order: np.ndarray) -> tuple[np.ndarray, np.ndarray, bool]:
    """Cell edges and centres along `axis` (values in plot order) and whether the scale is log."""
    if not axis.numeric or len(axis.values) < 2:
        positions = np.arange(len(axis.values), dtype=float)
        return np.arange(len(axis.values) + 1) - 0.5, positions, False
    x = np.asarray(axis.values, dtype=float)[order]
    t = np.log(x) if axis.log else x
    mids = (t[1:] + t[:-1]) / 2
    edges = np.concatenate([[t[0] - (mids[0] - t[0])], mids, [t[-1] + (t[-1] - mids[-1])]])
    return (np.exp(edges) if axis.log else edges), x, axis.log


def _label(axis: "Axis") -> str:
    unit = _UNIT_NAMES.get(axis.unit, axis.unit) if axis.numeric else ""
    scale = ", log scale" if axis.log and axis.numeric and len(axis.values) > 1 else ""
    return f"{axis.key}" + (f" [{unit}{scale}]" if unit else (f" [{scale[2:]}]" if scale else ""))


@dataclass
class DecisionMap:
    """What the decision map shows, in plot order: rows follow the second field (one row for a strip).

    winners[r, c]: winning design ('' where nothing is feasible); colours: design -> hex colour
    (NO_WINNER for the empty cells); x_text / y_text: the tick texts; centres_px[r, c]: pixel
    (column, row from the top) of each cell's centre in a PNG written at the figure's dpi.
    """

    path: Path
    winners: np.ndarray
    colours: dict[str, str]
    x_text: list[str]
    y_text: list[str]
    centres_px: np.ndarray


def _colours(result: "SweepResult") -> dict[str, str]:
    """Colour per winning design from the shared topology palette, and the no-winner colour."""
    from tradeoff.report.style import topology_styles
    from tradeoff.topologies.registry import topology_ids

    styles = topology_styles(topology_ids())
    designs = {p["winner"]["design"]: p["winner"]["topology"] for p in result.points if p["winner"]}
    colours = {design: styles[topology].colour for design, topology in sorted(designs.items())}
    colours[NO_WINNER] = _NO_WINNER_COLOUR
    return colours


def cell_keys(designs: list[str]) -> dict[str, str]:
    """The label each decision-map cell shows for its winner: 1, 2, ... in legend order; '–' for none."""
    keys, number = {}, 0
    for name in designs:
        if name == NO_WINNER:
            keys[name] = "–"
        else:
            number += 1
            keys[name] = str(number)
    return keys


def plot_decision_map(result: "SweepResult", path: str | Path, force: bool = False) -> DecisionMap:
    """Draw the winner per grid cell over the two varied fields (a strip for one) as PNG or SVG,
    written atomically (an existing file needs `force`); returns what was drawn."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.colors import ListedColormap
    from matplotlib.figure import Figure
    from matplotlib.patches import Patch

    from tradeoff.report.files import check_writable, write_atomic
    from tradeoff.report.plots import figure_bytes
    from tradeoff.report.style import RC_PARAMS, lightness

    path = Path(path)
    fmt = path.suffix.lower().lstrip(".")
    if fmt not in ("png", "svg"):
        raise InputError(Problem("--plot", None, None, "plot", f"{path}: unknown image type {path.suffix!r}; "
                                 "accepted: a .png or .svg file name"))
    check_mappable([a.key for a in result.axes])
    check_writable(path, force)
    grid = result.winners()
    x_axis = result.axes[0]
    y_axis = result.axes[1] if len(result.axes) > 1 else None
    orders = [np.argsort(a.values) if a.numeric else np.arange(len(a.values)) for a in result.axes]
    winners = grid[np.ix_(*orders)]
    winners = winners.T if y_axis is not None else winners[np.newaxis, :]
    colours = _colours(result)
    names = list(colours)
    codes = np.vectorize(lambda w: names.index(w or NO_WINNER))(winners).astype(float)

    x_edges, x_centres, x_log = _edges(x_axis, orders[0])
    if y_axis is not None:
        y_edges, y_centres, y_log = _edges(y_axis, orders[1])
    else:
        y_edges, y_centres, y_log = np.array([-0.5, 0.5]), np.array([0.0]), False
    x_text = [x_axis.text(i) for i in orders[0]]
    y_text = [y_axis.text(i) for i in orders[1]] if y_axis is not None else []
    used = [n for n in names if np.any(winners == ("" if n == NO_WINNER else n))]
    with matplotlib.rc_context(RC_PARAMS):
        fig = Figure(figsize=(7.5, 5.0 if y_axis is not None else 2.6), dpi=RC_PARAMS["savefig.dpi"],
                     layout="constrained")
        ax = fig.add_subplot()
        ax.grid(False)
        ax.pcolormesh(x_edges, y_edges, codes, cmap=ListedColormap([colours[n] for n in names]),
                      vmin=-0.5, vmax=len(names) - 0.5, edgecolors="#444444", linewidth=0.5)
        for set_ticks, set_scale, log, ticks, texts in ((ax.set_xticks, ax.set_xscale, x_log, x_centres, x_text),
                                                        (ax.set_yticks, ax.set_yscale, y_log, y_centres, y_text)):
            if log:
                set_scale("log")
            set_ticks(ticks, texts)
            set_ticks([], minor=True)
        ax.set_xlabel(_label(x_axis))
        if y_axis is not None:
            ax.set_ylabel(_label(y_axis))
        else:
            ax.set_yticks([])
        ax.set_xlim(x_edges[0], x_edges[-1])
        ax.set_ylim(y_edges[0], y_edges[-1])
        ax.set_title(f"Winning design per grid point: {result.title}")
        keys = cell_keys(used)
        for row, y in zip(winners, y_centres):  # each cell labelled, so the map reads without colour
            for winner, x in zip(row, x_centres):
                name = winner or NO_WINNER
                ax.text(x, y, keys[name], ha="center", va="center", fontsize=9, fontweight="bold",
                        color="#ffffff" if lightness(colours[name]) < 50 else "#000000")
        fig.legend(handles=[Patch(facecolor=colours[n], edgecolor="#444444", label=f"{keys[n]}  {n}") for n in used],
                   loc="outside right upper", title="winner (cell label)")
        fig.canvas.draw()
        cx, cy = np.meshgrid(x_centres, y_centres)
        display = ax.transData.transform(np.column_stack([cx.ravel(), cy.ravel()]))
    height = fig.get_size_inches()[1] * fig.dpi
    centres = np.column_stack([display[:, 0], height - display[:, 1]]).reshape(cx.shape + (2,))
    write_atomic(path, figure_bytes(fig, (fmt,))[fmt], force)
    return DecisionMap(path=path, winners=winners, colours={n: colours[n] for n in used}, x_text=x_text,
                       y_text=y_text, centres_px=centres)
