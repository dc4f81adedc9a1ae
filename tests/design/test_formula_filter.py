"""The text test of auditor.design.formula_filter never leaves out a formula whose parsed tree
holds what is looked for: on generated workbooks whose defined names lead to a linked workbook
or to a product directly, through another name, or not at all, used by formulas in any case."""

from __future__ import annotations

import random
from pathlib import Path

import pytest
import xlsxwriter

from auditor.design.formula_filter import formulas_that_may_hold, leading_names
from auditor.formula.syntax import Binary, NameNode, Node, RefNode, walk
from auditor.locate.locator import Locator
from auditor.read.open import read_workbook
from auditor.read.workbook import DefinedName


def _linked(node: Node) -> bool:
    return any(
        (isinstance(sub, RefNode) and sub.ref.external is not None)
        or (isinstance(sub, NameNode) and sub.external is not None)
        for sub in walk(node)
    )


def _product(node: Node) -> bool:
    return any(isinstance(sub, Binary) and sub.op == "*" for sub in walk(node))


def _book(path: Path, seed: int) -> Path:
    """Invented: a dosing log with names for its ranges, some read from a partner's file."""
    rng = random.Random(seed)
    book = xlsxwriter.Workbook(path)
    sheet = book.add_worksheet("Dosing")
    for row in range(1, 9):
        sheet.write_row(row, 0, [row * 1.0, row * 2.1, row * 0.3])
    names: list[str] = []
    for index in range(rng.randint(2, 6)):
        name = f"dose_{index}"
        kind = rng.choice(("link", "product", "plain", "other") if names else ("link", "plain"))
        target = {
            "link": "=[1]Bench!$A$2:$A$9",
            "product": "=Dosing!$B$2*2",
            "plain": "=Dosing!$A$2:$A$9",
            "other": f"={rng.choice(names)}" if names else "=Dosing!$C$2:$C$9",
        }[kind]
        book.define_name(name, target)
        names.append(name)
    for row in range(1, 15):
        used = rng.choice(names).upper() if rng.random() < 0.5 else rng.choice(names)
        text = rng.choice(
            (
                f"=SUM({used})",
                "=SUM(A2:A9)",
                "=A2*B2",
                "=SUM([1]Bench!C2:C9)",
                f"=MAX({used})+1",
            )
        )
        sheet.write_formula(row, 5, text)
    book.close()
    return path


@pytest.mark.parametrize("seed", range(30))
def test_no_formula_holding_a_link_or_a_product_is_left_out(tmp_path: Path, seed: int) -> None:
    workbook = read_workbook(_book(tmp_path / "dosing.xlsx", seed))
    parsed = Locator(workbook).parsed
    for holds, written in ((_linked, lambda t: "[" in t), (_product, lambda t: "*" in t)):
        kept = dict(formulas_that_may_hold(parsed, workbook, written))
        assert list(kept) == [key for key in parsed if key in kept]  # in order
        missed = [key for key, node in parsed.items() if holds(node) and key not in kept]
        assert not missed, missed


def test_names_leading_to_a_link_through_other_names() -> None:
    names = [
        DefinedName("far", "[2]Archive!$A$1:$A$9"),
        DefinedName("Middle", "OFFSET(far,0,1)"),
        DefinedName("near", "middle"),
        DefinedName("alone", "Dosing!$A$2:$A$9"),
    ]
    assert leading_names(names, lambda text: "[" in text) == ["FAR", "MIDDLE", "NEAR"]
