"""The design planner (auditor.design.planner) and ``regaudit plan`` (auditor.cli.plan).

Sources: hand arithmetic of Sxx for each layout (common practice: Sxx = Σ(x − x̄)²), the textbook
closed form n(n² − 1)h²/12 for even spacing, statsmodels' TTestPower for power, and
fixtures/manifest.json (an independent numpy fit written by the fixture script) for --from.
"""

from __future__ import annotations

import argparse
import json
import math
import re
from pathlib import Path

import pytest
from statsmodels.stats.power import TTestPower

from auditor.cli.plan import add_plan_parser, parse_n, run_plan
from auditor.design.planner import PlanRequest, best, candidates, layouts
from auditor.errors import UsageError
from auditor.policy import load_policy

ROOT = Path(__file__).resolve().parents[2]
MANIFEST = json.loads((ROOT / "fixtures" / "manifest.json").read_text(encoding="utf-8"))


def parse(argv: list[str]) -> argparse.Namespace:
    parser = argparse.ArgumentParser(prog="regaudit")
    add_plan_parser(parser.add_subparsers(dest="command", required=True))
    return parser.parse_args(["plan", *argv])


def test_layouts_for_eight_points_over_10_to_40() -> None:
    found = dict(layouts(8, 10.0, 40.0, 3))
    assert found["evenly spaced, ends replicated"] == [10, 10, 16, 22, 28, 34, 40, 40]
    assert found["two-end"] == [10.0] * 4 + [40.0] * 4
    assert found["3 levels (policy minimum), replicated"] == [10, 10, 10, 25, 25, 40, 40, 40]


def test_candidate_sxx_se_and_power() -> None:
    request = PlanRequest([8], 10.0, 40.0, sigma=0.41, detect_slope=0.02)
    by_design = {c.design: c for c in candidates(request, load_policy("general"))}
    # Hand arithmetic about the mean 25: even spacing, h = 30/7: n(n² − 1)h²/12 = 42·(30/7)²;
    # ends replicated: 4·15² + 9² + 3² + 3² + 9² = 1080; two-end: 8·15² = 1800.
    assert by_design["evenly spaced"].sxx == pytest.approx(42.0 * (30.0 / 7.0) ** 2, rel=1e-12)
    assert by_design["evenly spaced, ends replicated"].sxx == pytest.approx(1080.0, rel=1e-12)
    assert by_design["two-end"].sxx == pytest.approx(1800.0, rel=1e-12)
    two_end = by_design["two-end"]
    assert two_end.se == pytest.approx(0.41 / math.sqrt(1800.0), rel=1e-12)
    # statsmodels: a one-sample t test with nobs = df + 1 and effect δ/√nobs has power(δ, df).
    delta = 0.02 * math.sqrt(1800.0) / 0.41
    expected = TTestPower().power(effect_size=delta / math.sqrt(7), nobs=7, alpha=0.05)
    assert two_end.power == pytest.approx(expected, abs=1e-9)
    assert two_end.meets_policy is False and "cannot show curvature" in two_end.notes


def test_best_is_the_smallest_n_that_meets_target_and_policy() -> None:
    request = PlanRequest(list(range(6, 10)), 10.0, 40.0, sigma=0.41, detect_slope=0.05)
    found = candidates(request, load_policy("calibration"))
    pick = best(found)
    assert pick is not None
    assert pick.meets_policy and pick.meets_target and pick.lack_of_fit_testable
    assert all(not (c.meets_policy and c.meets_target) for c in found if c.n < pick.n)


def test_calibration_policy_wants_replicates() -> None:
    request = PlanRequest([10], 0.0, 5.0, sigma=0.003, target_se=0.001)
    by_design = {c.design: c for c in candidates(request, load_policy("calibration"))}
    assert by_design["evenly spaced"].meets_policy is False  # no replicate, no lack-of-fit test
    assert by_design["5 levels (policy minimum), replicated"].meets_policy is True


def test_plan_json_output(capsys: pytest.CaptureFixture[str]) -> None:
    argv = ["--n", "6-8", "--x-low", "10", "--x-high", "40", "--sd", "0.41"]
    assert run_plan(parse([*argv, "--detect-slope", "0.05", "--json"])) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["policy"] == "general" and data["targets"]["detect_slope"] == 0.05
    assert {c["n"] for c in data["candidates"]} == {6, 7, 8}
    assert data["recommended"] is not None


def test_plan_table_output(capsys: pytest.CaptureFixture[str]) -> None:
    argv = ["--n", "8", "--x-low", "10", "--x-high", "40", "--sd", "0.41", "--detect-slope", "0.02"]
    assert run_plan(parse(argv)) == 0
    text = capsys.readouterr().out
    assert "meets policy" in text and "two-end" in text
    assert "No candidate meets both the target and the policy." in text
    assert "cannot show curvature" in text


def test_plan_from_a_workbook_takes_its_scatter(capsys: pytest.CaptureFixture[str]) -> None:
    declared = next(
        r
        for w in MANIFEST["workbooks"]
        if w["file"] == "ops_design_questions.xlsx"
        for r in w["regressions"]
        if r["sheet"] == "Humidity"
    )
    source = str(ROOT / "fixtures" / "workbooks" / "ops_design_questions.xlsx")
    assert run_plan(parse(["--from", source, "--regression", "Humidity/E4", "--json"])) == 0
    data = json.loads(capsys.readouterr().out)
    assert data["sigma"] == pytest.approx(declared["intended"]["residual_sd"], rel=1e-12)
    assert [c["n"] for c in data["candidates"]][0] == declared["n"]


@pytest.mark.parametrize(
    ("argv", "message"),
    [
        (["--n", "2", "--x-low", "0", "--x-high", "1", "--sd", "1"], "'2': n must lie between 3"),
        (["--n", "eight"], "--n 'eight' is not a number of points"),
        (["--n", "8", "--x-low", "0"], "plan needs --x-high, --sd"),
        (["--n", "8", "--x-low", "5", "--x-high", "1", "--sd", "1"], "must be greater than"),
        (
            ["--n", "8", "--x-low", "0", "--x-high", "1", "--sd", "-1"],
            "--sd -1.0 must be a positive number",
        ),
        (["--from", "no/such.xlsx"], "--from 'no/such.xlsx' is not a file"),
    ],
)
def test_bad_options_stop_with_a_message(argv: list[str], message: str) -> None:
    with pytest.raises(UsageError, match=re.escape(message)):
        run_plan(parse(argv))


def test_unknown_regression_lists_the_known_ones() -> None:
    source = str(ROOT / "fixtures" / "workbooks" / "ops_design_questions.xlsx")
    with pytest.raises(UsageError, match="'Humidity/E4', 'Speed Trial/E4'"):
        run_plan(parse(["--from", source, "--regression", "Nope"]))


def test_parse_n_ranges() -> None:
    assert (
        parse_n("6-9") == [6, 7, 8, 9] and parse_n("12") == [12] and parse_n("9:6") == [6, 7, 8, 9]
    )
