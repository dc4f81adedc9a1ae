"""The evaluator against LibreOffice's own recalculation: the key outside check of evaluate.py.

The optional test writes a workbook with one cell per supported function and variant, has
LibreOffice (headless, recalculation on load forced) recalculate and save it, and asserts that for
every formula cell, and every cell of every array block, the evaluator's value equals the value
LibreOffice stored: to 1e-9 relative for numbers (LibreOffice stores 15 significant digits), the
same text, the same error code.

Where Excel, whose files regaudit audits, and LibreOffice disagree, the evaluator follows Excel;
those cells sit in KNOWN_DIFFERENCES with both values asserted. The non-optional test runs the
same comparison over the committed fixture workbooks (also LibreOffice outputs), so CI checks the
evaluator without LibreOffice installed.
"""

from __future__ import annotations

import math
import shutil
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pytest
import xlsxwriter
from make_fixtures import recalculate as recalculate_with_libreoffice

from auditor.evaluation.evaluator import SUPPORTED_FUNCTIONS, Evaluator, Unverifiable
from auditor.formula.syntax import calls, parse
from auditor.grid import parse_cell
from auditor.read.open import read_workbook
from auditor.read.workbook import ErrorValue, Workbook

FIXTURES = Path(__file__).resolve().parents[1].parent / "fixtures" / "workbooks"
RELATIVE_TOLERANCE = 1e-9


# --- the workbook --------------------------------------------------------------------------------

X = [1.0, 2.0, 3.5, 4.0, 5.5, 6.0, 7.0, 8.5, 9.0, 10.0, 11.5, 12.0]
NOISE = [0.31, -0.52, 0.18, 0.77, -0.29, -0.64, 0.45, 0.12, -0.38, 0.59, -0.21, 0.08]
Y = [3.2 + 1.7 * x + e for x, e in zip(X, NOISE, strict=True)]
X2 = [4.1, 3.3, 5.9, 2.2, 6.7, 1.5, 7.4, 3.8, 8.2, 2.9, 5.1, 6.3]
X3 = [0.5, 1.9, 1.1, 2.8, 0.7, 3.3, 2.1, 0.4, 1.6, 2.5, 3.0, 0.9]
Y_MULTI = [
    2.0 + 1.5 * a - 0.7 * b + 0.9 * c + e for a, b, c, e in zip(X, X2, X3, NOISE, strict=True)
]
# The y column as people really leave it: a number stored as text, a blank, a word. (A logical
# goes in a column of its own, L: LibreOffice, having no logical type, counts TRUE as 1.)
Y_MIXED: list[object] = list(Y)
Y_MIXED[2], Y_MIXED[5], Y_MIXED[9] = "9.43", None, "n/a"
Y_LOGICAL: list[object] = list(Y)
Y_LOGICAL[7] = True
# Outside reference for the logical column: numpy.polyfit over the pairs each engine keeps.
_KEPT = [(x, y) for x, y in zip(X, Y_LOGICAL, strict=True) if not isinstance(y, bool)]
SLOPE_LOGICAL_SKIPPED = float(np.polyfit([p[0] for p in _KEPT], [p[1] for p in _KEPT], 1)[0])
SLOPE_LOGICAL_AS_ONE = float(np.polyfit(X, [1.0 if y is True else y for y in Y_LOGICAL], 1)[0])
Y_OTHER = [10.0 - 0.8 * x + 0.5 * e for x, e in zip(X, NOISE, strict=True)]

FIRST, LAST = 2, 13  # data rows on the sheet "Data"
D = "Data!$A$2:$A$13", "Data!$B$2:$B$13"
XS, YS = D

# label -> formula; each lands in one cell of the sheet "Calc" (column B, label in column A).
SCALAR_FORMULAS: dict[str, str] = {
    "slope": f"=SLOPE({YS},{XS})",
    "intercept": f"=INTERCEPT({YS},{XS})",
    "steyx": f"=STEYX({YS},{XS})",
    "rsq": f"=RSQ({YS},{XS})",
    "correl": f"=CORREL({YS},{XS})",
    "pearson": f"=PEARSON({XS},{YS})",
    "forecast": f"=FORECAST(15,{YS},{XS})",
    "forecast.linear": f"=_xlfn.FORECAST.LINEAR(15,{YS},{XS})",
    "covar": f"=COVAR({YS},{XS})",
    "covariance.p": f"=_xlfn.COVARIANCE.P({XS},{YS})",
    "covariance.s": f"=_xlfn.COVARIANCE.S({YS},{XS})",
    "covariance.s skips text, blank": f"=_xlfn.COVARIANCE.S(Data!$C$2:$C$13,{XS})",
    "hand-built slope over rows that differ": (
        f"=_xlfn.COVARIANCE.S(Data!$C$2:$C$13,{XS})/_xlfn.VAR.S({XS})"
    ),
    "slope skips text, blank, logical": f"=SLOPE(Data!$C$2:$C$13,{XS})",
    "intercept skips": f"=INTERCEPT(Data!$C$2:$C$13,{XS})",
    "steyx skips": f"=STEYX(Data!$C$2:$C$13,{XS})",
    "rsq skips": f"=RSQ(Data!$C$2:$C$13,{XS})",
    "linest #VALUE! on text": f"=INDEX(LINEST(Data!$C$2:$C$13,{XS}),1)",
    "slope whole columns": "=SLOPE(Data!$B:$B,Data!$A:$A)",
    "slope by names (sheet scope wins)": "=SLOPE(ys,xs)",
    "slope quoted sheet": "=SLOPE('My Data'!$B$2:$B$13,'My Data'!$A$2:$A$13)",
    "apostrophe sheet": "='It''s'!A1*2",
    "slope error in range": f"=SLOPE(Data!$E$2:$E$13,{XS})",
    "sum error in range": "=SUM(Data!$E$2:$E$13)",
    "count ignores errors": "=COUNT(Data!$E$2:$E$13)",
    "count": "=COUNT(Data!$C$2:$C$13)",
    "counta": "=COUNTA(Data!$C$2:$C$13)",
    "average": f"=AVERAGE({YS})",
    "sum": "=SUM(Data!$C$2:$C$13)",
    "sumsq": f"=SUMSQ({XS})",
    "devsq": f"=DEVSQ({XS})",
    "stdev": f"=STDEV({YS})",
    "stdev.s": f"=_xlfn.STDEV.S({YS})",
    "stdev.p": f"=_xlfn.STDEV.P({YS})",
    "stdevp": f"=STDEVP({YS})",
    "var": f"=VAR({YS})",
    "var.s": f"=_xlfn.VAR.S({YS})",
    "var.p": f"=_xlfn.VAR.P({YS})",
    "varp": f"=VARP({YS})",
    "min": "=MIN(Data!$C$2:$C$13)",
    "max": f"=MAX({YS})",
    "sqrt": "=SQRT(2)",
    "abs": "=ABS(-3.25)",
    "ln": "=LN(10)",
    "log10": "=LOG10(250)",
    "exp": "=EXP(1.5)",
    "power": "=POWER(1.5,2.5)",
    "round half up": "=ROUND(2.675,2)",
    "round negative": "=ROUND(-2.5,0)",
    "round tens": "=ROUND(1234.567,-2)",
    "int": "=INT(-2.5)",
    "if true": f'=IF(SLOPE({YS},{XS})>1,"steep","flat")',
    "if omitted else": "=IF(1>2,5)",
    "isnumber text-number": "=ISNUMBER(Data!$C$4)",
    "isnumber number": "=ISNUMBER(Data!$C$3)",
    "t.dist left tail": "=_xlfn.T.DIST(-1.2,9,TRUE)",
    "t.dist density": "=_xlfn.T.DIST(0.7,9,FALSE)",
    "t.dist.2t": "=_xlfn.T.DIST.2T(2.3,10)",
    "t.dist.2t small p": "=_xlfn.T.DIST.2T(14.5,10)",
    "t.dist.rt": "=_xlfn.T.DIST.RT(1.9,10)",
    "tdist one tail": "=TDIST(1.9,10,1)",
    "tdist two tails": "=TDIST(2.3,10,2)",
    "tdist truncates df": "=TDIST(2.3,10.9,2)",
    "t.inv": "=_xlfn.T.INV(0.975,10)",
    "t.inv.2t": "=_xlfn.T.INV.2T(0.05,10)",
    "tinv": "=TINV(0.05,10)",
    "tinv truncates df": "=TINV(0.05,10.7)",
    "norm.s.dist": "=_xlfn.NORM.S.DIST(1.3,TRUE)",
    "norm.s.dist density": "=_xlfn.NORM.S.DIST(1.3,FALSE)",
    "normsdist": "=NORMSDIST(-0.4)",
    "norm.s.inv": "=_xlfn.NORM.S.INV(0.9)",
    "normsinv": "=NORMSINV(0.025)",
    "f.dist.rt": "=_xlfn.F.DIST.RT(4.2,1,10)",
    "fdist": "=FDIST(4.2,2,9)",
    "f.dist cumulative": "=_xlfn.F.DIST(2.5,3,12,TRUE)",
    "f.dist density": "=_xlfn.F.DIST(2.5,3,12,FALSE)",
    "f.inv.rt": "=_xlfn.F.INV.RT(0.05,1,10)",
    "finv": "=FINV(0.05,2,9)",
    "rows": f"=ROWS({XS})",
    "columns": "=COLUMNS(Data!$A$2:$D$13)",
    "rows whole column": "=ROWS(Data!$A:$A)",
    "index linest slope": f"=INDEX(LINEST({YS},{XS}),1)",
    "index linest intercept": f"=INDEX(LINEST({YS},{XS}),1,2)",
    "index linest r2": f"=INDEX(LINEST({YS},{XS},TRUE,TRUE),3,1)",
    "index linest se slope": f"=INDEX(LINEST({YS},{XS},TRUE(),TRUE()),2,1)",
    "index linest omitted const": f"=INDEX(LINEST({YS},{XS},,TRUE),2,2)",
    "index linest F": f"=INDEX(LINEST({YS},{XS},TRUE,TRUE),4,1)",
    "index linest const false": f"=INDEX(LINEST({YS},{XS},FALSE,TRUE),1,1)",
    "index linest const false r2": f"=INDEX(LINEST({YS},{XS},FALSE,TRUE),3,1)",
    "index linest #N/A cell": "=INDEX(LINEST(Data!$K$2:$K$13,Data!$H$2:$I$13,TRUE,TRUE),3,3)",
    "index range": f"=INDEX({YS},4)",
    "index row 0": "=SUM(INDEX(Data!$A$2:$B$13,0,2))",
    "trend": f"=INDEX(TREND({YS},{XS},20),1)",
    "se slope by hand": f"=STEYX({YS},{XS})/SQRT(DEVSQ({XS}))",
    "t by hand": f"=SLOPE({YS},{XS})/(STEYX({YS},{XS})/SQRT(DEVSQ({XS})))",
    "p by hand": (
        f"=_xlfn.T.DIST.2T(ABS(SLOPE({YS},{XS})/(STEYX({YS},{XS})/SQRT(DEVSQ({XS})))),"
        f"COUNT({XS})-2)"
    ),
    "p old style": f"=TDIST(ABS(SLOPE({YS},{XS})/(STEYX({YS},{XS})/SQRT(DEVSQ({XS})))),10,2)",
    "slope by sumproduct": (
        f"=SUMPRODUCT(({XS}-AVERAGE({XS}))*({YS}-AVERAGE({YS})))/SUMPRODUCT(({XS}-AVERAGE({XS}))^2)"
    ),
    "residual ss by sumxmy2": (f"=SUMXMY2({YS},INTERCEPT({YS},{XS})+SLOPE({YS},{XS})*{XS})"),
    "se by sumxmy2": (
        f"=SQRT(SUMXMY2({YS},INTERCEPT({YS},{XS})+SLOPE({YS},{XS})*{XS})/(COUNT({XS})-2))"
        f"/SQRT(DEVSQ({XS}))"
    ),
    "sumx2my2": f"=SUMX2MY2({XS},{YS})",
    "sumx2py2": f"=SUMX2PY2({XS},{YS})",
    "slope dynamic end": "=SLOPE(Data!$B$2:INDEX(Data!$B:$B,13),Data!$A$2:INDEX(Data!$A:$A,13))",
    "slope offset": "=SLOPE(OFFSET(Data!$B$2,0,0,12,1),OFFSET(Data!$A$2,0,0,12,1))",
    "iferror": "=IFERROR(1/0,-1)",
    "text-number arithmetic": "=Data!$C$4+1",
    "text arithmetic": "=Data!$C$11+1",
    "blank reference": "=Data!$C$7",
    "blank arithmetic": "=Data!$C$7+1",
    "minus power": "=-2^2",
    "power left assoc": "=2^3^2",
    "percent": "=5%*3",
    "precedence": "=1+2*3-4/8",
    "compare": "=3>=2",
    "compare text": '="abc"="ABC"',
    "compare number text": '=5<"a"',
    "concatenate": '="n="&COUNT(Data!$A$2:$A$13)&" pts"',
    "concatenate decimal": '=2.5&"x"',
    "true function": "=TRUE()",
    "false function": "=FALSE()",
    "na": "=NA()",
    "div zero": "=1/0",
    "slope constant x": f"=SLOPE({YS},Data!$F$2:$F$13)",
    "ref cell on sheet": "=B2*1",
    "pi": "=PI()",
    "log base": "=LOG(8,2)",
    "sum typed numbers": "=SUM(1,2.5,TRUE)",
    "count typed": '=COUNT(1,"2","x",TRUE)',
}


@dataclass(frozen=True)
class Difference:
    """A cell where Excel (followed by the evaluator) and LibreOffice give different values."""

    formula: str
    excel: object  # Excel's documented behaviour (from memory), what the evaluator returns
    libreoffice: object  # what LibreOffice stored
    why: str


KNOWN_DIFFERENCES: dict[str, Difference] = {
    "sumxmy2 skips text": Difference(
        "=SUMXMY2(Data!$C$2:$C$13,Data!$A$2:$A$13)",
        sum(
            (y - x) ** 2
            for x, y in zip(X, Y_MIXED, strict=True)
            if isinstance(y, float)  # the pairs with a number on both sides
        ),
        ErrorValue("#VALUE!"),
        "Excel leaves out a pair with text, a logical or a blank (from memory)",
    ),
    "sumxmy2 unequal sizes": Difference(
        "=SUMXMY2(Data!$B$2:$B$13,Data!$A$2:$A$12)",
        ErrorValue("#N/A"),
        ErrorValue("#VALUE!"),
        "Excel documents #N/A for arrays of different sizes (from memory)",
    ),
    "sum typed text": Difference(
        '=SUM("3",1)', 4.0, ErrorValue("#VALUE!"), "Excel counts typed text-numbers in SUM"
    ),
    "average typed": Difference(
        '=AVERAGE(TRUE,"2")', 1.5, ErrorValue("#VALUE!"), "likewise for AVERAGE"
    ),
    "steyx two points": Difference(
        "=STEYX(Data!$B$2:$B$3,Data!$A$2:$A$3)",
        ErrorValue("#DIV/0!"),
        ErrorValue("#VALUE!"),
        "LibreOffice writes its 'invalid argument' (Err:502) as #VALUE!",
    ),
    "slope unequal sizes": Difference(
        "=SLOPE(Data!$B$2:$B$13,Data!$A$2:$A$12)",
        ErrorValue("#N/A"),
        ErrorValue("#VALUE!"),
        "Excel documents #N/A for a different number of points",
    ),
    "linest unequal sizes": Difference(
        "=INDEX(LINEST(Data!$B$2:$B$13,Data!$A$2:$A$12),1)",
        ErrorValue("#REF!"),
        ErrorValue("#VALUE!"),
        "Excel gives #REF! for x and y that do not line up",
    ),
    "t.dist.2t negative": Difference(
        "=_xlfn.T.DIST.2T(-1,3)", ErrorValue("#NUM!"), ErrorValue("#VALUE!"), "Err:502 again"
    ),
    "tdist negative": Difference(
        "=TDIST(-1,3,2)", ErrorValue("#NUM!"), ErrorValue("#VALUE!"), "Err:502 again"
    ),
    "sqrt negative": Difference(
        "=SQRT(-1)", ErrorValue("#NUM!"), ErrorValue("#VALUE!"), "Err:502 again"
    ),
    "ln zero": Difference("=LN(0)", ErrorValue("#NUM!"), ErrorValue("#VALUE!"), "Err:502 again"),
    "zero to the zero": Difference(
        "=0^0", ErrorValue("#NUM!"), 1, "Excel refuses 0^0; LibreOffice returns 1"
    ),
    "logical in text": Difference(
        "=1&TRUE()", "1TRUE", "11", "LibreOffice has no logical type: TRUE is the number 1"
    ),
    "index beyond linest": Difference(
        "=INDEX(LINEST(Data!$B$2:$B$13,Data!$A$2:$A$13,TRUE,TRUE),5,3)",
        ErrorValue("#REF!"),
        ErrorValue("#VALUE!"),
        "Excel: #REF! for an index outside the array",
    ),
    "slope skips a logical": Difference(
        "=SLOPE(Data!$L$2:$L$13,Data!$A$2:$A$13)",
        SLOPE_LOGICAL_SKIPPED,
        SLOPE_LOGICAL_AS_ONE,
        "LibreOffice has no logical type: a TRUE cell is the number 1 to SLOPE",
    ),
    "count skips a logical": Difference(
        "=COUNT(Data!$L$2:$L$13)", 11.0, 12, "likewise: LibreOffice counts the TRUE cell"
    ),
    "devsq of nothing": Difference(
        "=DEVSQ(Data!$G$2:$G$5)", ErrorValue("#NUM!"), ErrorValue("#DIV/0!"), "Excel: #NUM!"
    ),
}


# Array formulas on "Calc": LINEST blocks as reviewers lay them out (one and several x columns,
# const FALSE, a block cut short, a block too wide), TREND down a column, element-wise maths.
TWO_X, THREE_X, MULTI_Y = "Data!$H$2:$I$13", "Data!$H$2:$J$13", "Data!$K$2:$K$13"
ARRAY_FORMULAS: dict[str, str] = {
    "E1:F5": f"=LINEST({YS},{XS},TRUE,TRUE)",
    "E7:G11": f"=LINEST({MULTI_Y},{TWO_X},TRUE,TRUE)",
    "E13:H17": f"=LINEST({MULTI_Y},{THREE_X},1,1)",
    "I1:K5": f"=LINEST({MULTI_Y},{TWO_X},FALSE,TRUE)",
    "E19:F19": f"=LINEST({YS},{XS})",
    "E21:F23": f"=LINEST({YS},{XS},TRUE,TRUE)",
    "I7:K7": f"=LINEST({YS},{XS})",
    "M1:M12": f"=TREND({YS},{XS})",
    "N1:N12": f"={XS}*2+1",
    "O1:O3": "=SQRT({4;9;16})",
    "P1:P12": f"=IF({XS}>5,{YS},0)",
}
# Formula cells on "Data": =1/0 in the error column, two implicit intersections, and the TRUE
# cell, which LibreOffice saves as the formula =TRUE().
DATA_FORMULA_CELLS = 4


def block_size(block: str) -> int:
    first, last = block.split(":")
    (r1, c1), (r2, c2) = parse_cell(first), parse_cell(last)
    return (r2 - r1 + 1) * (c2 - c1 + 1)


def write_workbook(path: Path) -> dict[str, str]:
    """The test workbook; returns label -> 'Calc!B<row>' for the scalar and difference cells."""
    book = xlsxwriter.Workbook(str(path))
    data = book.add_worksheet("Data")
    for col, header in enumerate(["x", "y", "y as typed", "x2", "y with error", "constant x"]):
        data.write(0, col, header)
    for i in range(len(X)):
        row = FIRST - 1 + i
        data.write_number(row, 0, X[i])
        data.write_number(row, 1, Y[i])
        mixed = Y_MIXED[i]
        if isinstance(mixed, str):
            data.write_string(row, 2, mixed)
        elif mixed is not None:
            data.write_number(row, 2, mixed)
        data.write_number(row, 3, X2[i])
        if i == 4:
            data.write_formula(row, 4, "=1/0")
        else:
            data.write_number(row, 4, Y[i])
        data.write_number(row, 5, 4.0)
        data.write_number(row, 7, X[i])  # H:J hold the x columns of the multiple fit
        data.write_number(row, 8, X2[i])
        data.write_number(row, 9, X3[i])
        data.write_number(row, 10, Y_MULTI[i])
        if Y_LOGICAL[i] is True:
            data.write_boolean(row, 11, True)
        else:
            data.write_number(row, 11, Y[i])
    # Implicit intersection: a column reference in a normal cell takes the formula's own row.
    data.write_formula("N5", "=$A$2:$A$13*2")
    data.write_formula("N6", "=$A$2:$A$13+$B$2:$B$13")

    other = book.add_worksheet("My Data")
    for i in range(len(X)):
        other.write_number(FIRST - 1 + i, 0, X[i])
        other.write_number(FIRST - 1 + i, 1, Y_OTHER[i])
    quoted = book.add_worksheet("It's")
    quoted.write_number(0, 0, 21.5)

    calc = book.add_worksheet("Calc")
    book.define_name("xs", "=Data!$A$2:$A$13")
    book.define_name("ys", "=Data!$B$2:$B$13")
    book.define_name("Calc!ys", "='My Data'!$B$2:$B$13")  # sheet scope beats workbook scope
    book.define_name("Calc!xs", "='My Data'!$A$2:$A$13")
    cells: dict[str, str] = {}
    row = 0
    for label, formula in SCALAR_FORMULAS.items():
        calc.write_string(row, 0, label)
        calc.write_formula(row, 1, formula)
        cells[label] = f"Calc!B{row + 1}"
        row += 1
    for label, difference in KNOWN_DIFFERENCES.items():
        calc.write_string(row, 0, label)
        calc.write_formula(row, 1, difference.formula)
        cells[label] = f"Calc!B{row + 1}"
        row += 1

    # Array formulas: LINEST blocks as reviewers lay them out, and TREND down a column.
    for block, formula in ARRAY_FORMULAS.items():
        calc.write_array_formula(block, "{" + formula + "}")
    book.close()
    return cells


# --- recalculation and comparison ----------------------------------------------------------------


def recalculate(sources: list[Path], out_dir: Path, profile: Path) -> list[Path]:
    """Have LibreOffice recalculate and save the files (the fixtures' own recalculation: one
    soffice call with a fresh profile that forces recalculation on load)."""
    out_dir.mkdir(parents=True, exist_ok=True)
    recalculate_with_libreoffice(sources, out_dir, profile)
    outputs = [out_dir / s.name for s in sources]
    for output in outputs:
        assert output.is_file(), f"LibreOffice did not write {output.name}"
    return outputs


def is_number(value: object) -> bool:
    return isinstance(value, int | float) and not isinstance(value, bool)


def agree(ours: object, stored: object) -> bool:
    if is_number(ours) and is_number(stored):
        return math.isclose(ours, stored, rel_tol=RELATIVE_TOLERANCE)  # type: ignore[arg-type]
    if isinstance(ours, ErrorValue) or isinstance(stored, ErrorValue):
        return ours == stored
    return type(ours) is type(stored) and ours == stored


def computed_cells(workbook: Workbook) -> list[tuple[str, int, int]]:
    """Every formula cell and every cell of an array block: the cells an engine computes."""
    keys = [(c.sheet, c.row, c.col) for c in workbook.formula_cells()]
    keys += [k for k in workbook.array_anchors if workbook.cell(*k) is not None]
    return sorted(set(keys))


def compare(workbook: Workbook, skip: frozenset[str] = frozenset()) -> tuple[int, list[str]]:
    """(cells compared, one line per disagreement) between the evaluator and stored values."""
    evaluator = Evaluator(workbook)
    compared, disagreements = 0, []
    for sheet, row, col in computed_cells(workbook):
        cell = workbook.cell(sheet, row, col)
        assert cell is not None
        if cell.address in skip:
            continue
        try:
            ours = evaluator.cell_value(sheet, row, col)
        except Unverifiable:
            continue  # another workbook's cells are not at hand: nothing to compare
        compared += 1
        if not agree(ours, cell.value):
            anchor = workbook.array_anchors.get((sheet, row, col))
            formula = cell.formula or f"(array block from row {anchor and anchor[0]})"
            disagreements.append(
                f"{Path(workbook.path).name} {cell.address} {formula}: "
                f"LibreOffice {cell.value!r}, evaluator {ours!r}"
            )
    return compared, disagreements


@pytest.fixture(scope="module")
def recalculated(tmp_path_factory: pytest.TempPathFactory) -> tuple[Workbook, dict[str, str]]:
    if shutil.which("soffice") is None:
        pytest.skip("LibreOffice (soffice) is not installed")
    base = tmp_path_factory.mktemp("libreoffice")
    source = base / "in" / "every_function.xlsx"
    source.parent.mkdir()
    cells = write_workbook(source)
    (output,) = recalculate([source], base / "out", base / "profile")
    return read_workbook(output), cells


@pytest.mark.optional
def test_every_formula_cell_matches_libreoffice(
    recalculated: tuple[Workbook, dict[str, str]],
) -> None:
    # Source of truth: LibreOffice's recalculation of the workbook, stored in the file it saved.
    workbook, cells = recalculated
    assert workbook.stored_values
    skip = frozenset(cells[label] for label in KNOWN_DIFFERENCES)
    compared, disagreements = compare(workbook, skip)
    assert not disagreements, "\n".join(disagreements)
    written = len(SCALAR_FORMULAS) + sum(map(block_size, ARRAY_FORMULAS)) + DATA_FORMULA_CELLS
    assert compared == written


@pytest.mark.optional
@pytest.mark.parametrize("label", sorted(KNOWN_DIFFERENCES))
def test_known_differences_from_libreoffice(
    recalculated: tuple[Workbook, dict[str, str]], label: str
) -> None:
    # LibreOffice's stored value on one side; Excel's documented behaviour (from memory) on the
    # other, which the evaluator follows because the audited files come from Excel.
    workbook, cells = recalculated
    difference = KNOWN_DIFFERENCES[label]
    sheet, coord = cells[label].split("!")
    cell = next(c for c in workbook.sheets[sheet].cells.values() if c.coord == coord)
    assert agree(difference.libreoffice, cell.value), f"LibreOffice now gives {cell.value!r}"
    assert agree(Evaluator(workbook).evaluate_cell(cell), difference.excel)


@pytest.mark.optional
def test_the_workbook_uses_every_supported_function(
    recalculated: tuple[Workbook, dict[str, str]],
) -> None:
    workbook, _ = recalculated
    used = {
        call.name
        for cell in workbook.formula_cells()
        for call in calls(parse(cell.formula or "", cell.sheet, workbook))
    }
    assert SUPPORTED_FUNCTIONS - used == set()


def fixture_workbooks() -> list[Path]:
    return sorted(FIXTURES.glob("*.xlsx")) if FIXTURES.is_dir() else []


@pytest.mark.parametrize("path", fixture_workbooks(), ids=lambda p: p.name)
def test_fixture_workbooks_match_their_stored_values(path: Path) -> None:
    # Source of truth: the committed fixtures were recalculated and saved by LibreOffice
    # (fixtures/make_fixtures.py); their stored values are LibreOffice's.
    workbook = read_workbook(path)
    if not workbook.stored_values:
        pytest.skip(f"{path.name} was written by a script and carries no stored values")
    compared, disagreements = compare(workbook)
    assert compared > 0
    assert not disagreements, "\n".join(disagreements)


def test_fixture_folder_is_checked() -> None:
    assert len(fixture_workbooks()) >= 20  # the committed demo and test corpus
    with_values = [p for p in fixture_workbooks() if read_workbook(p).stored_values]
    assert with_values, "no fixture workbook carries LibreOffice's stored values"
