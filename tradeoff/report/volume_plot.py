"""Cost per unit against production volume for every feasible design, the cheapest design marked
along the bottom as a decision strip, and the break-even of the winner and the runner-up (EUR,
indicative unless the brief's price file gives the user's prices)."""
from __future__ import annotations

from typing import TYPE_CHECKING

from tradeoff.economics import break_even_of, volume_sweep
from tradeoff.report import style

if TYPE_CHECKING:  # pragma: no cover
    from matplotlib.figure import Figure

    from tradeoff.trade_study import StudyResult

__all__ = ["volume_figure"]


def volume_figure(result: "StudyResult", figure_class) -> "Figure | None":
    """The cost-per-unit curves over the brief's sweep range; None when nothing is feasible."""
    designs = result.designs()
    if not designs:
        return None
    from matplotlib.ticker import EngFormatter

    from tradeoff.topologies.registry import topology_ids

    styles = style.topology_styles(topology_ids(designs[0][2].model.catalog))
    sweep = volume_sweep(result)
    volumes = sweep["volumes"]
    fig = figure_class()(figsize=(9, 5), layout="constrained")
    curves = fig.subplots()
    for name, ev, _ in designs:
        s = styles[ev.topology]
        curves.plot(volumes, sweep["cost_per_unit_eur"][name], color=s.colour, marker=s.marker, markevery=10,
                    label=name)
    for i, name in enumerate(sweep["cheapest"]):
        ev = next(e for n, e, _ in designs if n == name)
        left = (volumes[i - 1] * volumes[i]) ** 0.5 if i else volumes[0]
        right = (volumes[i] * volumes[i + 1]) ** 0.5 if i + 1 < len(volumes) else volumes[-1]
        curves.axvspan(left, right, ymin=0.0, ymax=0.03, color=styles[ev.topology].colour, linewidth=0)
    even = break_even_of(result)
    for i, volume in enumerate(() if even is None else even.crossings):  # exact to the unit, not the sampled volumes
        curves.axvline(volume, color=style.LINE_COLOUR, linestyle="--", linewidth=1.2)
        curves.annotate(f"break-even {volume:,} units", (volume, curves.get_ylim()[1]),
                        textcoords="offset points", xytext=(4, -12 * (i + 1)), fontsize=8)
    curves.set_xscale("log")
    curves.set_yscale("log")
    curves.yaxis.set_major_formatter(EngFormatter(unit="EUR"))
    curves.set_ylabel("cost per unit [EUR, indicative]")
    curves.set_title("cost per unit against production volume (parts, assembly, programming, engineering)")
    curves.legend(fontsize=8)
    curves.set_xlabel("production volume [units] (strip along the bottom: the cheapest design's colour)")
    curves.set_xlim(volumes[0], volumes[-1])
    return fig
