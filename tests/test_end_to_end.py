"""End to end on the fixture corpus: every declared regression found with the right ranges and
statistic cells; clean ones get no major or critical finding; declared errors are flagged; the
JSON validates against the schema kept in tests/; inputs are byte-identical afterwards.

The truth is fixtures/manifest.json, written by fixtures/make_fixtures.py beside the workbooks it
generates (stored values recalculated by LibreOffice).
"""

from __future__ import annotations

import hashlib
import json
from pathlib import Path
from typing import Any

import jsonschema
import pytest

from auditor.cli.main import main

ROOT = Path(__file__).resolve().parents[1]
FIXTURES = ROOT / "fixtures"
MANIFEST = json.loads((FIXTURES / "manifest.json").read_text(encoding="utf-8"))
SCHEMA = json.loads((ROOT / "tests" / "schema" / "audit.schema.json").read_text(encoding="utf-8"))


def _digest(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


@pytest.fixture(scope="module")
def audit(tmp_path_factory: pytest.TempPathFactory) -> dict[str, Any]:
    workbooks = FIXTURES / "workbooks"
    before = {p.name: _digest(p) for p in workbooks.glob("*.xlsx")}
    out = tmp_path_factory.mktemp("audit")
    code = main(
        [
            "audit",
            str(workbooks),
            "--out",
            str(out),
            "--jobs",
            "1",
            "--fail-on",
            "never",
            "--timestamp",
            "2026-01-01T00:00:00+00:00",
        ]
    )
    assert code == 0
    after = {p.name: _digest(p) for p in workbooks.glob("*.xlsx")}
    assert after == before, "an input workbook changed during the audit"
    data = json.loads((out / "audit.json").read_text(encoding="utf-8"))
    data["_out"] = str(out)
    return data


def _workbook(audit: dict[str, Any], name: str) -> dict[str, Any]:
    matches = [w for w in audit["workbooks"] if Path(w["path"]).name == name]
    assert matches, f"{name} missing from audit.json"
    return matches[0]


def _declared() -> list[tuple[str, dict[str, Any]]]:
    return [(entry["file"], reg) for entry in MANIFEST["workbooks"] for reg in entry["regressions"]]


def _match(workbook: dict[str, Any], declared: dict[str, Any]) -> dict[str, Any]:
    for regression in workbook["regressions"]:
        if regression["x_range"] == declared["x_range"] and (
            regression["y_range"] == declared["y_range"]
        ):
            return regression
    found = [(r["x_range"], r["y_range"]) for r in workbook["regressions"]]
    raise AssertionError(
        f"no regression over x={declared['x_range']} y={declared['y_range']}; found {found}"
    )


def test_json_validates_against_schema(audit: dict[str, Any]) -> None:
    document = {k: v for k, v in audit.items() if not k.startswith("_")}
    jsonschema.validate(document, SCHEMA)


def test_every_workbook_in_the_manifest_is_audited(audit: dict[str, Any]) -> None:
    for entry in MANIFEST["workbooks"]:
        workbook = _workbook(audit, entry["file"])
        expected = "audited" if entry["regressions"] else "no-regressions"
        assert workbook["status"] == expected, (entry["file"], workbook["error"])
        assert workbook["stored_values"] == entry["stored_values"], entry["file"]


@pytest.mark.parametrize(
    ("file", "declared"), _declared(), ids=[f"{f}:{r['y_range']}" for f, r in _declared()]
)
def test_declared_regression_found(
    audit: dict[str, Any], file: str, declared: dict[str, Any]
) -> None:
    regression = _match(_workbook(audit, file), declared)
    assert regression["intercept"] == declared.get("intercept", True)
    attached = {(k.split("@")[0], v["cell"]) for k, v in regression["reported"].items()}
    for key, cell in declared.get("stats", {}).items():
        assert (key, cell) in attached, f"{key} in {cell} not attached; have {sorted(attached)}"


def _findings_of(workbook: dict[str, Any], regression: dict[str, Any]) -> list[dict[str, Any]]:
    """The regression's findings and the workbook-level ones that start at one of its cells
    (a check across sibling blocks reports at the workbook level)."""
    cells = {v["cell"] for v in regression["reported"].values()}
    routed = [f for f in workbook["findings"] if f["cells"] and f["cells"][0] in cells]
    return regression["findings"] + routed


def _names_kind(finding: dict[str, Any], kind: str) -> bool:
    """A finding names a kind as its own, or among the kinds of the one mistake it reports (a df
    typed into a p formula is a typed constant and a p with the wrong df: one finding)."""
    return finding["kind"] == kind or kind in finding["evidence"].get("kinds", [])


def _declared_design(declared: dict[str, Any], finding: dict[str, Any]) -> bool:
    """A design finding the manifest expects (a clean regression may still have a weak design)."""
    return any(
        finding["kind"] == e["kind"] and set(e["cells"]) & set(finding["cells"])
        for e in declared.get("design_expected", [])
    )


@pytest.mark.parametrize(
    ("file", "declared"), _declared(), ids=[f"{f}:{r['y_range']}" for f, r in _declared()]
)
def test_findings_as_declared(audit: dict[str, Any], file: str, declared: dict[str, Any]) -> None:
    workbook = _workbook(audit, file)
    regression = _match(workbook, declared)
    findings = _findings_of(workbook, regression)
    serious = [
        f
        for f in findings
        if f["severity"] in ("critical", "major") and not _declared_design(declared, f)
    ]
    if declared.get("clean", False):
        assert serious == [], [f["message"] for f in serious]
        assert all(v["verdict"] != "mismatch" for v in regression["reported"].values())
    else:
        flagged = {cell for f in findings for cell in f["cells"]}
        flagged |= {
            v["cell"] for v in regression["reported"].values() if v["verdict"] == "mismatch"
        }
        for expected in declared.get("expected", []):
            cells = set(expected.get("cells", []))
            assert cells & flagged or not cells, (expected, sorted(flagged))
        assert findings, "an erroneous regression produced no finding"
    # Each planted fault (and each declared risk of a clean regression) is named with its kind
    # at one of its cells.
    for expected in declared.get("expected", []) + declared.get("risks", []):
        named = [
            f
            for f in findings
            if _names_kind(f, expected["kind"]) and set(expected["cells"]) & set(f["cells"])
        ]
        assert named, (expected, [(f["check"], f["kind"], f["cells"][:3]) for f in findings])
    for risk in declared.get("risks", []):
        assert any(f["severity"] == "minor" and _names_kind(f, risk["kind"]) for f in findings), (
            risk
        )


def _workbook_expected() -> list[tuple[str, dict[str, Any]]]:
    return [
        (entry["file"], e) for entry in MANIFEST["workbooks"] for e in entry.get("expected", [])
    ]


@pytest.mark.parametrize(
    ("file", "expected"),
    _workbook_expected(),
    ids=[f"{f}:{e['kind']}:{e['cells'][0]}" for f, e in _workbook_expected()],
)
def test_workbook_faults_as_declared(
    audit: dict[str, Any], file: str, expected: dict[str, Any]
) -> None:
    """Faults outside any regression (formulas that read another workbook) are named there."""
    workbook = _workbook(audit, file)
    everything = workbook["findings"] + [f for r in workbook["regressions"] for f in r["findings"]]
    named = [
        f
        for f in everything
        if _names_kind(f, expected["kind"]) and set(expected["cells"]) & set(f["cells"])
    ]
    assert named, (expected, [(f["check"], f["kind"], f["cells"][:3]) for f in everything])


def test_every_kind_is_planted_twice_in_different_places() -> None:
    """The corpus plants each kind at least twice, on different sheets or workbooks (a risk of a
    clean regression counts: it is a fault that changes no number yet)."""
    places: dict[str, set[tuple[str, str]]] = {}
    for entry in MANIFEST["workbooks"]:
        for regression in entry["regressions"]:
            for expected in regression["expected"] + regression.get("risks", []):
                places.setdefault(expected["kind"], set()).add((entry["file"], regression["sheet"]))
        for expected in entry.get("expected", []):
            sheet = expected["cells"][0].rpartition("!")[0]
            places.setdefault(expected["kind"], set()).add((entry["file"], sheet))
    thin = {kind: sorted(where) for kind, where in places.items() if len(where) < 2}
    assert thin == {}
    clean = [r for e in MANIFEST["workbooks"] for r in e["regressions"] if r["clean"]]
    assert len(clean) >= 10


def _changes_conclusion(value: dict[str, Any], key: str, alpha: float) -> bool:
    reported, intended = value["value"], value["intended"]
    if not isinstance(reported, int | float) or not isinstance(intended, int | float):
        return False
    if key == "p_slope":
        return (reported < alpha) != (intended < alpha)
    return key == "slope" and reported * intended < 0


def test_decision_changing_defects_are_critical(audit: dict[str, Any]) -> None:
    """A reported p on the other side of alpha (0.05, the general policy) or a slope of the
    wrong sign gets a critical finding; the corpus holds several such defects."""
    missed, seen = [], 0
    for file, declared in _declared():
        workbook = _workbook(audit, file)
        regression = _match(workbook, declared)
        changed = [
            v["cell"]
            for key, v in regression["reported"].items()
            if _changes_conclusion(v, key.split("@")[0], 0.05)
        ]
        if not changed:
            continue
        seen += 1
        if not any(f["severity"] == "critical" for f in _findings_of(workbook, regression)):
            missed.append((file, changed))
    assert seen >= 3  # the demo corpus plants several decision-changing defects
    assert missed == []
