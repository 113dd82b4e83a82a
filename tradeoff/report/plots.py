"""Review plots of a study, PNG and SVG, drawn with matplotlib's Agg canvas (no display needed).

For every feasible design:
- `waveform-<design>.png|svg`: the control signal against time from the topology's transient model
  at the nominal point, with the level where the delay ends, the end of the nominal delay and the
  brief's delay band; below it a delay strip with the band, the worst-case interval, the Monte
  Carlo percentile interval and the nominal delay (the band is often far beyond the waveform's
  own time span, e.g. an oscillator's first periods);
- `histogram-<design>.png|svg`: the Monte Carlo delays against the band and the percentiles;
and for the whole study `pareto.png|svg`: worst-case delay spread against standby current after
the timeout, and cost against part count, one colour and marker per topology (`style.py`).
`<design>` is `tables.design_stem(name)` ('rc-counter #2' -> 'rc-counter-2'). matplotlib is
imported only when a plot is drawn, so importing this module stays cheap.
"""
from __future__ import annotations

import functools
import io
import math
from pathlib import Path
from typing import TYPE_CHECKING, Callable

import numpy as np

from tradeoff.report import style
from tradeoff.report.tables import design_stem
from tradeoff.report.volume_plot import volume_figure
from tradeoff.units import format_quantity as fq

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.axes import Axes
    from matplotlib.figure import Figure

    from tradeoff.trade_study import StudyResult
    from tradeoff.topologies.base import Evaluation, Topology

__all__ = ["FORMATS", "HISTOGRAM_BINS", "time_scale", "waveform_figure", "histogram_figure", "pareto_figure",
           "figure_makers", "study_figures", "figure_bytes", "plot_file_makers", "plot_files"]

FORMATS = ("png", "svg")
"""File formats every plot is written in."""

_TIME_UNITS = ((3600.0, "h"), (60.0, "min"), (1.0, "s"), (1e-3, "ms"), (1e-6, "µs"))

HISTOGRAM_BINS = 60
"""Bins of the Monte Carlo histogram."""

ZOOM_BELOW = 0.2
"""The histogram gets a zoomed inset when the delays span less than this fraction of the band's width."""


def _figure_class():
    """matplotlib's Figure on the Agg backend, imported on first use."""
    import matplotlib

    matplotlib.use("Agg")
    from matplotlib.figure import Figure

    return Figure


def time_scale(span_s: float) -> tuple[float, str]:
    """(seconds per display unit, unit) for a time axis reaching `span_s` [s]: h, min, s, ms or µs."""
    for factor, unit in _TIME_UNITS:
        if span_s >= 2 * factor:
            return factor, unit
    return _TIME_UNITS[-1]


def _level_text(value: float, unit: str) -> str:
    """A signal level with its unit: engineering prefixes for V and A, plain otherwise (e.g. ticks)."""
    return fq(value, unit) if unit in ("V", "A") else f"{value:g} {unit}"


def _band_text(ev: "Evaluation") -> str:
    return f"delay band {fq(ev.band[0], 's')} to {fq(ev.band[1], 's')}"


def _coverage_label(ev: "Evaluation") -> str:
    return f"Monte Carlo {100 * (1 - ev.coverage) / 2:g}–{100 * (1 + ev.coverage) / 2:g} %"


def _delay_strip(ax: "Axes", ev: "Evaluation") -> None:
    """Band, worst-case interval, Monte Carlo percentile interval and nominal delay on one time axis."""
    rows = [("worst case", ev.worst.min_s, ev.worst.max_s),
            (_coverage_label(ev), min(ev.mc.percentiles.values()), max(ev.mc.percentiles.values()))]
    ends = [v for v in (*ev.band, ev.nominal_s, *(lo for _, lo, _ in rows), *(hi for _, _, hi in rows))
            if math.isfinite(v)]
    lo_s, hi_s = min(ends), max(ends)
    pad_s = 0.08 * (hi_s - lo_s)
    factor, unit = time_scale(hi_s)
    ax.axvspan(ev.band[0] / factor, ev.band[1] / factor, color=style.BAND_COLOUR, label=_band_text(ev))
    for y, (_, lo, hi) in enumerate(rows):
        ax.plot([lo / factor, (hi if math.isfinite(hi) else hi_s + pad_s) / factor], [y, y],
                color=style.LINE_COLOUR, linewidth=5, solid_capstyle="butt")
    ax.axvline(ev.nominal_s / factor, color=style.NOMINAL_COLOUR, linestyle="--",
               label=f"nominal {fq(ev.nominal_s, 's')}")
    ax.set_xlim((lo_s - pad_s) / factor, (hi_s + pad_s) / factor)
    ax.set_ylim(-0.6, len(rows) - 0.4)
    ax.set_yticks(range(len(rows)), [label + ("" if math.isfinite(hi) else " (never ends)")
                                     for label, _, hi in rows])
    ax.grid(False, axis="y")
    ax.set_xlabel(f"delay [{unit}]")
    ax.legend(loc="lower left", bbox_to_anchor=(0.0, 1.0), fontsize=8, ncol=2)


def waveform_figure(name: str, ev: "Evaluation", model: "Topology") -> "Figure | None":
    """The design's control signal against time at the nominal point, with its end level, the end of
    the nominal delay and the delay band; None when the topology has no transient model."""
    wave = model.waveform(ev.design, model.nominal_point(ev.design))
    if wave is None:
        return None
    fig = _figure_class()(figsize=(8, 5.2), layout="constrained")
    top, strip = fig.subplots(2, 1, height_ratios=(3, 1))
    t = np.asarray(wave.time_s, dtype=float)
    factor, unit = time_scale(float(t[-1]))
    quantity = wave.signal_label.split(" (")[0]
    top.plot(t / factor, wave.signal, color=style.PALETTE[0], linewidth=1.6, label=wave.signal_label)
    top.axhline(wave.threshold, color=style.LINE_COLOUR, linestyle=":",
                label=f"{wave.threshold_label} ({_level_text(wave.threshold, wave.unit)})")
    lo, hi = float(t[0]), float(t[-1])
    if ev.band[0] <= hi:
        top.axvspan(max(ev.band[0], lo) / factor, min(ev.band[1], hi) / factor, color=style.BAND_COLOUR,
                    label=_band_text(ev))
    if lo <= ev.nominal_s <= hi:
        top.plot([ev.nominal_s / factor], [wave.threshold], marker="o", color=style.NOMINAL_COLOUR, linestyle="none",
                 label=f"delay ends: {fq(ev.nominal_s, 's')} (nominal)")
    else:
        top.text(0.99, 0.02, f"the delay ({fq(ev.nominal_s, 's')}) ends beyond the time shown; see the strip below",
                 transform=top.transAxes, ha="right", va="bottom", fontsize=8)
    top.set_xlabel(f"time [{unit}]")
    top.set_ylabel(f"{quantity} [{wave.unit}]")
    top.set_title(f"{name}: {quantity} at the nominal point")
    top.legend(loc="best", fontsize=8)
    _delay_strip(strip, ev)
    return fig


def _histogram(ax: "Axes", ev: "Evaluation", finite: np.ndarray, factor: float, unit: str, label: bool) -> None:
    """Bars of the finite Monte Carlo delays with the percentile and nominal lines, on `ax` in `unit`."""
    ax.hist(finite / factor, bins=HISTOGRAM_BINS, color=style.PALETTE[0], linewidth=0,
            label=f"{ev.mc.samples} samples, seed {ev.mc.seed}" if label else None)
    for q, v in sorted(ev.mc.percentiles.items()):
        if math.isfinite(v):
            ax.axvline(v / factor, color=style.LINE_COLOUR, linestyle=":", linewidth=1)
            ax.text(v / factor, 1.0, f" p{100 * q:g}", transform=ax.get_xaxis_transform(), fontsize=7,
                    va="top", ha="left")
    ax.axvline(ev.nominal_s / factor, color=style.NOMINAL_COLOUR, linestyle="--",
               label=f"nominal {fq(ev.nominal_s, 's')}" if label else None)
    ax.set_xlabel(f"delay [{unit}]")
    ax.set_ylabel("samples per bin [count]")


def histogram_figure(name: str, ev: "Evaluation") -> "Figure":
    """Histogram of the Monte Carlo delays against the delay band, with the percentiles at the coverage.

    When the delays fill less than `ZOOM_BELOW` of the band's width, an inset repeats the histogram
    over the delays' own range, so a tight design still shows its distribution.
    """
    delays = np.asarray(ev.mc.delays, dtype=float)
    finite = delays[np.isfinite(delays)]
    factor, unit = time_scale(max(ev.band[1], float(finite.max()) if finite.size else ev.band[1]))
    fig = _figure_class()(figsize=(8, 4.2), layout="constrained")
    ax = fig.subplots()
    ax.axvspan(ev.band[0] / factor, ev.band[1] / factor, color=style.BAND_COLOUR, label=_band_text(ev))
    if finite.size:
        _histogram(ax, ev, finite, factor, unit, label=True)
        if np.ptp(finite) < ZOOM_BELOW * (ev.band[1] - ev.band[0]):
            inset = ax.inset_axes((0.64, 0.42, 0.34, 0.45))
            _histogram(inset, ev, finite, factor, unit, label=False)
            inset.set_title("zoomed to the delays", fontsize=8)
            inset.tick_params(labelsize=7)
            inset.xaxis.label.set_size(7)
            inset.yaxis.label.set_size(7)
    never = f"; {100 * ev.mc.never_ends_frac:.2g} % never end (not drawn)" if ev.mc.never_ends_frac else ""
    ax.set_title(f"{name}: Monte Carlo delay, yield {100 * ev.mc.yield_frac:.2f} % inside the band{never}")
    ax.legend(loc="upper left", fontsize=8)
    return fig


def pareto_figure(result: "StudyResult") -> "Figure | None":
    """Worst-case delay spread against standby after the timeout, and cost against part count, for
    every feasible design; filled markers sit on the Pareto front. None when nothing is feasible."""
    designs = result.designs()
    if not designs:
        return None
    from matplotlib.lines import Line2D
    from matplotlib.ticker import EngFormatter, LogLocator, MaxNLocator, NullFormatter

    from tradeoff.topologies.registry import topology_ids

    styles = style.topology_styles(topology_ids(designs[0][2].model.catalog))
    fig = _figure_class()(figsize=(10, 4.4), layout="constrained")
    accuracy, cost = fig.subplots(1, 2)
    for name, ev, _ in designs:
        s = styles[ev.topology]
        on_front = bool(result.ranking.table.loc[name, "pareto"])
        face = s.colour if on_front else "none"
        for ax, x, y in ((accuracy, ev.standby.after_a, 100 * ev.spread_frac), (cost, ev.placements, ev.unit_cost_eur)):
            ax.plot([x], [y], marker=s.marker, markersize=9, markerfacecolor=face, markeredgecolor=s.colour,
                    markeredgewidth=1.6, linestyle="none")
            ax.annotate(name, (x, y), textcoords="offset points", xytext=(6, 5), fontsize=8)
    accuracy.set_xscale("log")
    accuracy.xaxis.set_major_locator(LogLocator(subs=(1.0, 2.0, 5.0)))
    accuracy.xaxis.set_major_formatter(EngFormatter(unit="A"))
    accuracy.xaxis.set_minor_formatter(NullFormatter())
    cost.xaxis.set_major_locator(MaxNLocator(integer=True))
    accuracy.set_xlabel("standby current after the timeout [A]")
    accuracy.set_ylabel("worst-case delay spread [% of nominal]")
    accuracy.set_title("accuracy against standby (lower left is better)")
    cost.set_xlabel("parts on the board [count]")
    cost.set_ylabel(f"cost per unit at {result.brief.production.volume:,} units [EUR, indicative]")
    cost.set_title("cost against part count (lower left is better)")
    shown = list(dict.fromkeys(ev.topology for _, ev, _ in designs))
    handles = [Line2D([], [], marker=styles[t].marker, color=styles[t].colour, markersize=8, linestyle="none",
                      label=t) for t in shown]
    handles.append(Line2D([], [], marker="o", color=style.LINE_COLOUR, markerfacecolor="none", linestyle="none",
                          label="hollow: off the Pareto front"))
    fig.legend(handles=handles, loc="outside lower center", ncol=min(len(handles), 5), fontsize=8)
    for ax in (accuracy, cost):
        ax.margins(0.25)
    return fig


def figure_makers(result: "StudyResult") -> dict[str, Callable[[], "Figure"]]:
    """Every plot of `result` by file stem (without extension), in a fixed order, each as a function
    that draws it: the names are known before any drawing."""
    makers: dict[str, Callable[[], Figure]] = {}
    for name, ev, outcome in result.designs():
        stem = design_stem(name)
        if outcome.model.waveform(ev.design, outcome.model.nominal_point(ev.design)) is not None:
            makers[f"waveform-{stem}"] = functools.partial(waveform_figure, name, ev, outcome.model)
        makers[f"histogram-{stem}"] = functools.partial(histogram_figure, name, ev)
    if result.designs():
        makers["pareto"] = functools.partial(pareto_figure, result)
        makers["volume"] = functools.partial(volume_figure, result, _figure_class)
    return makers


def _styled(make: Callable[[], "Figure"]) -> "Figure":
    """The figure `make` draws, in the project's style (style.RC_PARAMS)."""
    _figure_class()
    import matplotlib

    with matplotlib.rc_context(style.RC_PARAMS):
        return make()


def study_figures(result: "StudyResult") -> dict[str, "Figure"]:
    """Every plot of `result` by file stem, drawn."""
    return {stem: _styled(make) for stem, make in figure_makers(result).items()}


def figure_bytes(fig: "Figure", formats: tuple[str, ...] = FORMATS) -> dict[str, bytes]:
    """`fig` encoded in each format (PNG, SVG; no creation date, stable SVG ids). The layout is
    solved once, for the first format, and kept for the others."""
    import matplotlib

    out = {}
    with matplotlib.rc_context(style.RC_PARAMS):
        for fmt in formats:
            buffer = io.BytesIO()
            fig.savefig(buffer, format=fmt, metadata={"Date": None} if fmt == "svg" else {"Software": "tradeoff"})
            fig.set_layout_engine("none")
            out[fmt] = buffer.getvalue()
    return out


def plot_file_makers(result: "StudyResult", directory: str | Path) -> dict[Path, Callable[[], bytes]]:
    """`<directory>/<stem>.<png|svg>` -> a function giving the file's bytes, for every plot of `result`;
    each figure is drawn once, when the first of its files is asked for."""
    out: dict[Path, Callable[[], bytes]] = {}
    for stem, make in figure_makers(result).items():
        encoded = functools.cache(functools.partial(_encoded, make))
        for fmt in FORMATS:
            out[Path(directory) / f"{stem}.{fmt}"] = functools.partial(_pick, encoded, fmt)
    return out


def _encoded(make: Callable[[], "Figure"]) -> dict[str, bytes]:
    return figure_bytes(_styled(make))


def _pick(encoded: Callable[[], dict[str, bytes]], fmt: str) -> bytes:
    return encoded()[fmt]


def plot_files(result: "StudyResult", directory: str | Path) -> dict[Path, bytes]:
    """Every plot of `result` in every format: `<directory>/<stem>.<png|svg>` -> file bytes."""
    return {path: make() for path, make in plot_file_makers(result, directory).items()}
