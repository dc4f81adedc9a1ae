"""The stable identity of a finding (auditor.review.identity).

Outside truth for the R1C1 form: the spreadsheet's own R1C1 reference style as its vendor
documents it — ``R[-2]C`` is the cell two rows up in the same column, ``R2C2`` the absolute cell
B2, ``RC[-1]`` the cell one column left, ``C[-2]`` a whole column two to the left, ``R[-1]`` a
whole row one up; a mixed ``$A1`` keeps its column absolute. Identity stability is checked on a
real fixture whose every block is moved 5 rows down and 1 column right with openpyxl's
formula-translating move (``translate=True``), the way an inserted row and column move them.
"""

from __future__ import annotations

import shutil
from pathlib import Path

import openpyxl
import pytest

from auditor.model import AuditResult, Finding, RegressionResult, ReportedValue, WorkbookResult
from auditor.pipeline.audit import collect_inputs
from auditor.pipeline.batch import audit_batch
from auditor.policy import load_policy
from auditor.review.identity import (
    assign_identities,
    audit_root,
    formula_r1c1,
    identity_keys,
    readable,
    relative_workbook_path,
)

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "workbooks"
LINES = "ops_line_review_with_errors.xlsx"  # six blocks of hand-built statistics, all relative


@pytest.mark.parametrize(
    ("formula", "cell", "expected"),
    [
        ("=E4/E10", "Line 1!E11", "=R[-7]C/R[-1]C"),
        ("=$B$2*2", "S!D9", "=R2C2*2"),
        ("=$A1+A$1", "S!C3", "=R[-2]C1+R1C[-2]"),
        ("=SLOPE(B4:B13,A4:A13)", "S!E4", "=SLOPE(RC[-3]:R[9]C[-3],RC[-4]:R[9]C[-4])"),
        ("=SUM(A:A)+SUM(1:1)", "S!C3", "=SUM(C[-2])+SUM(R[-2])"),
        ("=SUM($A:B)", "S!C3", "=SUM(C1:C[-1])"),
        ("='My Data'!B2", "S!A1", "='My Data'!R[1]C[1]"),
        ("=_xlfn.T.DIST.2T(ABS(E11),E9)", "S!E12", "=_xlfn.T.DIST.2T(ABS(R[-1]C),R[-3]C)"),
    ],
)
def test_formula_in_relative_r1c1(formula: str, cell: str, expected: str) -> None:
    assert formula_r1c1(formula, cell) == expected


def test_text_names_and_spacing_are_not_references() -> None:
    # "A1" inside a string and the defined name x_vals are no cells; spacing is not identity.
    assert formula_r1c1('=IF(x_vals>0, "A1", B2)', "S!B3") == '=IF(x_vals>0,"A1",R[-1]C)'
    assert formula_r1c1("= SLOPE( B4:B13 , A4:A13 )", "S!E4") == formula_r1c1(
        "=SLOPE(B4:B13,A4:A13)", "S!E4"
    )


def test_copies_of_one_formula_share_their_r1c1_form() -> None:
    # The same relative formula filled down or across: one R1C1 text.
    assert formula_r1c1("=E4/E10", "S!E11") == formula_r1c1("=F14/F20", "S!F21")


def test_an_unreadable_formula_is_kept_as_written() -> None:
    assert formula_r1c1('="unclosed', "S!A1") == '="unclosed'


def test_paths_are_relative_to_the_common_folder_of_the_inputs(tmp_path: Path) -> None:
    (tmp_path / "team" / "lab").mkdir(parents=True)
    book = tmp_path / "team" / "lab" / "curve.xlsx"
    book.write_bytes(b"")
    assert audit_root([book]) == tmp_path / "team" / "lab"
    assert audit_root([tmp_path / "team"]) == tmp_path / "team"
    assert relative_workbook_path(book, audit_root([tmp_path / "team"])) == "lab/curve.xlsx"
    # Auditing the file alone or its folder names it the same way.
    assert relative_workbook_path(book, audit_root([book])) == "curve.xlsx"
    assert relative_workbook_path(book, audit_root([book.parent])) == "curve.xlsx"


def _two_blocks(first_row: int) -> AuditResult:
    """Two copies of one block side by side (columns E and K), starting at ``first_row``."""
    regressions = []
    for column in ("E", "K"):
        t_cell = f"S!{column}{first_row + 7}"
        se_row = first_row + 6
        reported = {
            "t_slope": ReportedValue(
                "t_slope", t_cell, 2.0, f"={column}{first_row}/{column}{se_row}"
            ),
            "slope": ReportedValue("slope", f"S!{column}{first_row}", 0.5, None),
        }
        findings = [
            Finding("stat-recompute", "major", "t differs", cells=[t_cell]),
            Finding("stat-recompute", "major", "slope differs", cells=[f"S!{column}{first_row}"]),
        ]
        regressions.append(
            RegressionResult(
                f"S/{column}",
                "S",
                "",
                "",
                "formulas",
                10,
                True,
                reported=reported,
                findings=findings,
            )
        )
    book = WorkbookResult("books/a.xlsx", "", "audited", regressions=regressions)
    return AuditResult("0", "general", [book], inputs=["books"])


def test_identity_ignores_the_block_position_and_numbers_copies() -> None:
    low, high = _two_blocks(4), _two_blocks(40)
    keys_low = [readable(key) for _, key in identity_keys(low)]
    keys_high = [readable(key) for _, key in identity_keys(high)]
    assert keys_low == keys_high
    assert keys_low[0] == "a.xlsx | S | stat-recompute | t_slope:=R[-7]C/R[-1]C"
    assert keys_low[1] == "a.xlsx | S | stat-recompute | slope:constant"
    # The copy to the right has the same formula in R1C1: it is numbered, not merged.
    assert keys_low[2] == keys_low[0] + "#2"
    identities = [f.identity for f in assign_identities(low).all_findings()]
    assert len(set(identities)) == 4
    assert all(len(i) == 16 and int(i, 16) >= 0 for i in identities)


def _audit(folder: Path) -> AuditResult:
    paths = collect_inputs([folder])
    workbooks = audit_batch(paths, load_policy("general"))
    return assign_identities(AuditResult("0", "general", workbooks, inputs=[str(folder)]))


def test_identities_survive_rows_and_columns_inserted_above_and_left(tmp_path: Path) -> None:
    before, after = tmp_path / "before", tmp_path / "after"
    before.mkdir()
    after.mkdir()
    # Both copies go through openpyxl, so both lack stored values alike; only the place differs.
    openpyxl.load_workbook(FIXTURES / LINES).save(before / LINES)
    moved = openpyxl.load_workbook(FIXTURES / LINES)
    for sheet in moved:
        sheet.move_range(sheet.dimensions, rows=5, cols=1, translate=True)
    moved.save(after / LINES)
    old, new = _audit(before).all_findings(), _audit(after).all_findings()
    assert len(old) == len(new) > 5
    assert [f.cells for f in old] != [f.cells for f in new]  # the cells did move
    assert [f.identity for f in old] == [f.identity for f in new]
    assert len({f.identity for f in old}) == len(old)


def test_identities_are_the_same_for_a_file_and_its_folder(tmp_path: Path) -> None:
    shutil.copyfile(FIXTURES / LINES, tmp_path / LINES)
    by_folder = [f.identity for f in _audit(tmp_path).all_findings()]
    by_file = [f.identity for f in _audit(tmp_path / LINES).all_findings()]
    assert by_folder == by_file and by_folder
