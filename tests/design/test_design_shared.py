"""Work the design step shares instead of repeating gives what the repeated work gives:

* the design's JSON part written field by field equals ``dataclasses.asdict`` flattened;
* the replicate test handed the level counts equals the test counting them itself;
* the prediction cells found once per workbook give, for every regression, the predictions a
  walk over every formula of the workbook gives (fixture workbooks and generated layouts).
"""

from __future__ import annotations

import random
from dataclasses import asdict
from pathlib import Path

import numpy as np
import pytest
from test_design_support import context

from auditor.design.inputs import DesignInputReader
from auditor.design.lackfit import designed_replicates, level_counts
from auditor.design.metrics import DesignMetrics, compute_design
from auditor.design.prediction_refs import cell_key, coord
from auditor.evaluation.evaluator import Evaluator
from auditor.locate.locator import Locator, RegressionSpec, locate
from auditor.model import clean_number, stat_base
from auditor.read.open import read_workbook

ROOT = Path(__file__).resolve().parents[2] / "fixtures"
BOOKS = (
    sorted((ROOT / "workbooks").glob("*.xlsx"))
    + sorted((ROOT / "layouts" / "workbooks").glob("*.xlsx"))[::5]
)
NESTED = ("drop", "lack", "outside", "working_range", "simple")


def _asdict_flattened(metrics: DesignMetrics) -> dict[str, object]:
    """The design's JSON part the way dataclasses.asdict gives it (the former writing)."""
    out: dict[str, object] = {
        key: clean_number(value) for key, value in asdict(metrics).items() if key not in NESTED
    }
    out["x_range"] = clean_number(metrics.x_range)
    if metrics.drop is not None:
        out |= {f"drop_one_{k}": clean_number(v) for k, v in asdict(metrics.drop).items()}
    return out


def _x(seed: int) -> np.ndarray:
    """Levels with replicates or without, a NaN now and then."""
    rng = random.Random(seed)
    levels = [float(v) for v in range(rng.randint(2, 12))]
    x = [rng.choice(levels) for _ in range(rng.randint(3, 40))]
    if rng.random() < 0.15:
        x[0] = float("nan")
    return np.array(x)


@pytest.mark.parametrize("seed", range(40))
def test_design_json_is_asdict_flattened(seed: int) -> None:
    x = np.unique(_x(seed)[1:])  # finite, distinct
    x = np.concatenate([x, x, [x[0] + 0.5]])  # replicated (a lack-of-fit test) and one more
    y = 1.5 * x + np.random.default_rng(seed).normal(0.0, 0.3, x.size)
    ctx = context(x, y)
    metrics = compute_design(ctx.data, ctx.fit, ctx.policy)
    written = metrics.to_dict()
    expected = _asdict_flattened(metrics)
    assert {k: written[k] for k in expected} == expected
    assert list(written)[: len(expected)] == list(expected)  # in the same order
    assert metrics.drop is not None and "drop_one_p_min" in written


@pytest.mark.parametrize("seed", range(60))
def test_replicates_judged_alike_with_the_counts_given(seed: int) -> None:
    x = _x(seed)
    assert designed_replicates(x, level_counts(x)) == designed_replicates(x)


def _plain_predictions(
    reader: DesignInputReader, spec: RegressionSpec
) -> list[tuple[str, float, str]]:
    """Every formula of the workbook walked in full for this regression (the former reading):
    (cell, x, how) of each prediction."""
    slope_cells = {cell_key(s.cell) for k, s in spec.stats.items() if stat_base(k) == "slope"}
    intercept_cells = {
        cell_key(s.cell) for k, s in spec.stats.items() if stat_base(k) == "intercept"
    }
    own = {cell_key(s.cell) for s in spec.stats.values()} | {cell_key(u.cell) for u in spec.uses}
    found = []
    for key, node in reader.parsed.items():
        if (key[0].lower(), key[1], key[2]) in own:
            continue
        for x, how in reader._predictions_in(node, key[0], spec, slope_cells, intercept_cells):
            found.append((f"{key[0]}!{coord(key[1], key[2])}", x, how))
    return found


@pytest.mark.parametrize("path", BOOKS, ids=[p.name for p in BOOKS])
def test_predictions_from_the_cells_found_once_are_a_full_walks(path: Path) -> None:
    workbook = read_workbook(path)
    locator = Locator(workbook)
    reader = DesignInputReader(workbook, Evaluator(workbook), locator.parsed)
    for spec in locate(workbook, None, locator):
        got = [(p.cell, p.x, p.how) for p in reader.read(spec).predictions]
        assert got == _plain_predictions(reader, spec), spec.id


def test_the_corpus_has_each_kind_of_prediction() -> None:
    """The comparison above is not empty: every shape of prediction occurs in the books."""
    kinds = set()
    for path in BOOKS:
        workbook = read_workbook(path)
        locator = Locator(workbook)
        reader = DesignInputReader(workbook, Evaluator(workbook), locator.parsed)
        kinds |= {
            p.how for spec in locate(workbook, None, locator) for p in reader.read(spec).predictions
        }
    assert kinds == {"FORECAST", "TREND", "b0 + b1·x", "(y − b0)/b1"}
