"""A batch of several files calls the caller's ``meanwhile`` once, when its first result is in
(the run imports the reporters then, while the workers audit the rest); the results are those
of a batch without it."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy

BOOKS = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
PATHS = [BOOKS / "lab_clean_reference.xlsx", BOOKS / "lab_p_value_slips.xlsx"]


def test_meanwhile_runs_once_after_the_first_result() -> None:
    policy = load_policy("general")
    calls: list[int] = []
    seen: list[int] = []

    def meanwhile() -> None:
        calls.append(len(seen))

    results = audit_batch(PATHS, policy, jobs=2, meanwhile=meanwhile)
    seen.append(len(results))
    plain = audit_batch(PATHS, policy, jobs=2)
    assert calls == [0]  # once, during the batch
    assert [r.to_dict() for r in results] == [r.to_dict() for r in plain]


def test_one_file_leaves_meanwhile_to_the_caller() -> None:
    # Nothing runs beside a single file's audit: the caller's work is no sooner done here.
    calls: list[str] = []
    audit_batch(PATHS[:1], load_policy("general"), jobs=2, meanwhile=lambda: calls.append("x"))
    assert calls == []


def test_prepare_reporters_imports_the_chosen_reporters_only() -> None:
    code = (
        "import sys; from auditor.report import prepare_reporters; "
        "prepare_reporters(['json', 'text']); "
        "print('auditor.report.text' in sys.modules, 'auditor.report.json' in sys.modules, "
        "'auditor.report.xlsx.workbook' in sys.modules, 'xlsxwriter' in sys.modules)"
    )
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.split() == ["True", "True", "False", "False"]
