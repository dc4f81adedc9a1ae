"""regaudit record: the reports of a folder already audited, with the review decisions and the
SHA-256 of each input, written from the ledger without auditing again."""

from __future__ import annotations

import hashlib
import json
import shutil
from pathlib import Path

import openpyxl
import pytest

from auditor.cli.main import main
from auditor.pipeline import batch

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
BOOK = "lab_p_value_slips.xlsx"


@pytest.fixture
def audited(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> tuple[Path, Path, str]:
    folder = tmp_path / "books"
    folder.mkdir()
    shutil.copyfile(FIXTURES / BOOK, folder / BOOK)
    ledger = tmp_path / "ledger.sqlite"
    out = tmp_path / "first"
    main(["audit", str(folder), "--out", str(out), "--ledger", str(ledger), "--jobs", "0"])
    document = json.loads((out / "audit.json").read_text(encoding="utf-8"))
    identity = document["workbooks"][0]["regressions"][0]["findings"][0]["identity"]
    waivers = folder / "regaudit-waivers.toml"
    reason = "Left tail is the stated hypothesis"
    decision = ["--reason", reason, "--name", "R. Example", "--date", "2026-01-02"]
    main(["waive", "--identity", identity, "--file", str(waivers), *decision])
    capsys.readouterr()
    return folder, ledger, identity


def test_record_carries_decisions_and_hashes_without_auditing(
    audited: tuple[Path, Path, str],
    tmp_path: Path,
    monkeypatch: pytest.MonkeyPatch,
    capsys: pytest.CaptureFixture[str],
) -> None:
    folder, ledger, identity = audited

    def no_audit(*_: object, **__: object) -> None:
        raise AssertionError("record must not audit")

    monkeypatch.setattr(batch, "_audit_one", no_audit)
    out = tmp_path / "record"
    assert main(["record", str(folder), "--out", str(out), "--ledger", str(ledger)]) == 0
    assert "nothing audited again" in capsys.readouterr().out
    document = json.loads((out / "audit.json").read_text(encoding="utf-8"))
    workbook = document["workbooks"][0]
    # The SHA-256 is that of the file's bytes, computed here independently.
    assert workbook["sha256"] == hashlib.sha256((folder / BOOK).read_bytes()).hexdigest()
    findings = [f for r in workbook["regressions"] for f in r["findings"]]
    waived = [f for f in findings if f["identity"] == identity]
    assert waived[0]["decision"] == {
        "decision": "waived",
        "reason": "Left tail is the stated hypothesis",
        "name": "R. Example",
        "date": "2026-01-02",
    }
    assert all(f["decision"] == {"decision": "open"} for f in findings if f is not waived[0])
    book = openpyxl.load_workbook(out / "audit.xlsx")
    rows = list(book["Findings"].iter_rows(values_only=True))
    header = list(rows[0])
    decided = [r for r in rows[1:] if r[header.index("decision")] == "waived"]
    assert len(decided) == 1
    assert decided[0][header.index("decided by")] == "R. Example"
    assert decided[0][header.index("decided on")] == "2026-01-02"
    overview = [(r[0], r[1]) for r in book["Overview"].iter_rows(values_only=True)]
    assert (str(folder / BOOK), workbook["sha256"]) in overview
    assert f"SHA-256 {workbook['sha256']}" in (out / "summary.txt").read_text(encoding="utf-8")


def test_record_refuses_a_file_changed_since_its_audit(
    audited: tuple[Path, Path, str], tmp_path: Path, capsys: pytest.CaptureFixture[str]
) -> None:
    folder, ledger, _ = audited
    with open(folder / BOOK, "ab") as handle:
        handle.write(b"\0")  # another content: the ledger holds no audit of it
    out = tmp_path / "record"
    assert main(["record", str(folder), "--out", str(out), "--ledger", str(ledger)]) == 2
    err = capsys.readouterr().err
    assert "have no audit of their present content" in err and BOOK in err
    assert not out.exists()
