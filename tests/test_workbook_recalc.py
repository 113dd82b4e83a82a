"""The study workbook recalculates: its decision sheet's formulas, evaluated by an independent
engine (the `formulas` package from PyPI, an Excel formula interpreter), give the tool's own
scores and ranks, and after a weight is changed in the sheet they re-rank the designs where the
tool's weight sensitivity predicts the top design changes. The review tables are in display units."""
from __future__ import annotations

import functools
import io
from pathlib import Path

import pytest

import tradeoff
from tradeoff.criteria import WEIGHT_NAMES
from tradeoff.ranking import rank
from tradeoff.report.workbook import DECISION_SHEET, decision_layout, workbook_bytes

formulas = pytest.importorskip("formulas", reason="the formula engine (pip install formulas) recalculates the workbook")

ROOT = Path(__file__).resolve().parent.parent


@functools.cache
def _study(name: str):
    return tradeoff.study(ROOT / "examples" / name, samples=2000)


def _engine(result, tmp_path: Path):
    path = tmp_path / "study.xlsx"
    path.write_bytes(workbook_bytes(result))
    model = formulas.ExcelModel().loads(str(path)).finish()
    return model, f"'[{path.name}]{DECISION_SHEET.upper()}'!"


def _figures(solution, prefix: str, layout, designs):
    def value(cell: str) -> float:
        return float(solution[prefix + cell].value[0][0])
    return {d: value(layout.score_cells[d]) for d in designs}, {d: int(value(layout.rank_cells[d])) for d in designs}


@pytest.mark.parametrize("brief", ["towel_rail_boost.yaml", "glue_pot_warmer.yaml", "fan_run_on.yaml"])
def test_recalculated_scores_and_ranks_equal_the_tools(brief, tmp_path):
    result = _study(brief)
    designs = [str(n) for n in result.ranking.table.index]
    layout = decision_layout(designs)
    model, prefix = _engine(result, tmp_path)
    scores, ranks = _figures(model.calculate(), prefix, layout, designs)
    for d in designs:
        assert scores[d] == pytest.approx(float(result.ranking.table.loc[d, "score"]), abs=1e-12)
        assert ranks[d] == int(result.ranking.table.loc[d, "rank"])


def test_changed_weight_reranks_as_the_sensitivity_predicts(tmp_path):
    """Each weight with a predicted crossing is set just past it in the sheet: the engine's top
    design becomes the one the sensitivity names, and every score equals the tool's own ranking
    at the new weights; just short of the crossing the top design stays."""
    tried = 0
    for brief in ("towel_rail_boost.yaml", "glue_pot_warmer.yaml"):
        result = _study(brief)
        designs = [str(n) for n in result.ranking.table.index]
        layout = decision_layout(designs)
        model, prefix = _engine(result, tmp_path)
        evaluations = {name: ev for name, ev, _ in result.designs()}
        for s in result.ranking.sensitivity:
            crossing = s.nearest
            if crossing is None or crossing.at == s.value or crossing.at <= s.lo:  # nothing lies past a range end
                continue
            step = 0.01 * abs(crossing.at - s.value)
            for at, top in ((crossing.at + step * (1 if crossing.at > s.value else -1), crossing.new_top),
                            (crossing.at - step * (1 if crossing.at > s.value else -1), result.ranking.top)):
                weights = {**result.ranking.weights, s.weight: at}
                solution = model.calculate(inputs={prefix + layout.weight_cells[s.weight]: at})
                scores, ranks = _figures(solution, prefix, layout, designs)
                assert min(ranks, key=ranks.get) == top, (brief, s.weight, at)
                own = rank(list(evaluations.values()), weights, "wsm", names=list(evaluations))
                for d in designs:
                    assert scores[d] == pytest.approx(float(own.table.loc[d, "score"]), abs=1e-12)
            tried += 1
    assert tried >= 1


def test_tables_in_display_units(tmp_path):
    import openpyxl

    result = _study("towel_rail_boost.yaml")
    book = openpyxl.load_workbook(io.BytesIO(workbook_bytes(result)))
    assert book.sheetnames[0] == DECISION_SHEET
    ranking = book["ranking"]
    headers = [c.value for c in ranking[1]]
    assert "delay nominal [h]" in headers and "standby after [µA]" in headers and "delay nominal [s]" not in headers
    top = result.winner()[1]
    row = [c for c in ranking[2]]
    nominal = row[headers.index("delay nominal [h]")]
    assert nominal.value == pytest.approx(top.nominal_s / 3600) and nominal.number_format == "0.000"
    assert row[headers.index("standby after [µA]")].value == pytest.approx(top.standby.after_a * 1e6)
    weights = book[DECISION_SHEET]
    layout = decision_layout([str(n) for n in result.ranking.table.index])
    assert [weights[layout.weight_cells[w]].value for w in WEIGHT_NAMES] == [
        result.ranking.weights[w] for w in WEIGHT_NAMES]
    assert str(weights[next(iter(layout.score_cells.values()))].value).startswith("=SUMPRODUCT(")
