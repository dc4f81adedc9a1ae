"""auditor.frames: an audit (audit.json or the ledger) as pandas DataFrames for notebooks.

The values are checked against fixtures/manifest.json, the declared truth the fixture generator
wrote beside the workbooks (not regaudit's own output)."""

from __future__ import annotations

import json
import shutil
from pathlib import Path

import pandas as pd
import pytest

from auditor.cli.main import main
from auditor.errors import UsageError
from auditor.frames import FINDING_COLUMNS, STATISTIC_COLUMNS, load_audit

FIXTURES = Path(__file__).resolve().parents[1] / "fixtures"
MANIFEST = json.loads((FIXTURES / "manifest.json").read_text(encoding="utf-8"))
BOOKS = ("lab_nitrate_calibration_beside.xlsx", "lab_p_value_slips.xlsx")


@pytest.fixture(scope="module")
def audited(tmp_path_factory: pytest.TempPathFactory) -> tuple[Path, Path]:
    root = tmp_path_factory.mktemp("frames")
    folder = root / "books"
    folder.mkdir()
    for name in BOOKS:
        shutil.copyfile(FIXTURES / "workbooks" / name, folder / name)
    ledger = root / "ledger.sqlite"
    out = str(root / "out")
    # The general policy: the manifest's "clean" is declared under it.
    main(
        [
            "audit",
            str(folder),
            "--out",
            out,
            "--ledger",
            str(ledger),
            "--jobs",
            "0",
            "--policy",
            "general",
        ]
    )
    return root / "out", ledger


def _truth(name: str) -> dict:  # type: ignore[type-arg]
    return next(w for w in MANIFEST["workbooks"] if w["file"] == name)


def test_statistics_hold_the_three_values_against_the_declared_truth(
    audited: tuple[Path, Path],
) -> None:
    frames = load_audit(audited[0] / "audit.json")
    assert list(frames.statistics.columns) == list(STATISTIC_COLUMNS)
    truth = _truth(BOOKS[0])["regressions"][0]
    nitrate = frames.statistics[frames.statistics["workbook"].str.endswith(BOOKS[0])]
    slope = nitrate.set_index("statistic").loc["slope"]
    assert slope["cell"] == truth["stats"]["slope"]
    assert slope["intended"] == pytest.approx(truth["intended"]["slope"], rel=1e-9)
    assert slope["reported"] == pytest.approx(truth["intended"]["slope"], rel=1e-9)
    assert slope["verdict"] == "confirmed"
    assert set(nitrate["statistic"]) == set(truth["stats"])
    assert nitrate["intended"].dtype == float


def test_findings_and_mismatches_match_the_manifest(audited: tuple[Path, Path]) -> None:
    frames = load_audit(audited[0])  # the folder is enough
    assert list(frames.findings.columns) == list(FINDING_COLUMNS)
    slips = frames.statistics[frames.statistics["workbook"].str.endswith(BOOKS[1])]
    declared = {
        (regression["stats"][key], key)
        for regression in _truth(BOOKS[1])["regressions"]
        for key in regression["mismatched_stats"]
    }
    mismatched = slips[slips["verdict"] == "mismatch"]
    assert set(zip(mismatched["cell"], mismatched["statistic"], strict=True)) == declared
    flagged = frames.findings[frames.findings["workbook"].str.endswith(BOOKS[1])]
    assert set(flagged["severity"]) <= {"critical", "major", "minor", "info"}
    assert (flagged["decision"] == "open").all()
    clean = frames.findings[frames.findings["workbook"].str.endswith(BOOKS[0])]
    assert clean.empty  # the manifest declares the nitrate calibration clean


def test_design_and_workbooks(audited: tuple[Path, Path]) -> None:
    frames = load_audit(audited[0] / "audit.json")
    truth = _truth(BOOKS[0])["regressions"][0]
    row = frames.design[frames.design["workbook"].str.endswith(BOOKS[0])].iloc[0]
    assert row["n"] == truth["n"]
    assert {"sxx", "levels", "max_leverage", "power"} <= set(frames.design.columns)
    assert list(frames.workbooks["status"]) == ["audited", "audited"]
    assert frames.workbooks["sha256"].str.fullmatch("[0-9a-f]{64}").all()
    assert frames.policy == "general"


def test_the_ledger_gives_the_same_tables(audited: tuple[Path, Path]) -> None:
    from_json = load_audit(audited[0] / "audit.json")
    from_ledger = load_audit(audited[1])
    for name in ("statistics", "regressions", "design"):
        pd.testing.assert_frame_equal(
            getattr(from_json, name).reset_index(drop=True),
            getattr(from_ledger, name).reset_index(drop=True),
            check_like=True,
        )
    # The ledger keeps no identities (they depend on the audited root): compare the rest.
    keep = [c for c in FINDING_COLUMNS if c != "identity"]
    pd.testing.assert_frame_equal(from_json.findings[keep], from_ledger.findings[keep])


def test_not_an_audit_is_said_in_words(tmp_path: Path) -> None:
    with pytest.raises(UsageError, match="no audit at"):
        load_audit(tmp_path / "missing.json")
    (tmp_path / "audit.json").write_text("not json", encoding="utf-8")
    with pytest.raises(UsageError, match="neither audit.json nor a ledger"):
        load_audit(tmp_path)
