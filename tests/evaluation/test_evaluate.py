"""The evaluator's spreadsheet semantics, on small workbooks built in memory.

Outside references named beside each check: scipy.stats (linregress, the t, F and normal
distributions), numpy (polyfit, lstsq), statsmodels OLS for the LINEST layout, and Excel's
documented behaviour where a rule is a convention rather than arithmetic (from memory; the same
rules are checked against LibreOffice's recalculation in tests/test_evaluate_libreoffice.py).
"""

from __future__ import annotations

import math
from typing import Any

import numpy as np
import pytest
import statsmodels.api as sm
from scipy import stats

from auditor.evaluation.evaluator import Evaluator, Unsupported, Unverifiable
from auditor.formula.syntax import Ref
from auditor.grid import parse_cell
from auditor.read.workbook import Cell, DefinedName, ErrorValue, Sheet, Workbook

X = [1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0]
Y = [2.3, 4.1, 6.2, 7.8, 10.1, 12.2, 13.8, 16.3]


def book(
    cells: dict[str, object],
    arrays: dict[str, str] | None = None,
    names: list[DefinedName] | None = None,
    more: dict[str, dict[str, object]] | None = None,
) -> Workbook:
    """A workbook from {"A1": value or "=formula"} per sheet ("Data" first); arrays maps a block
    such as "E1:F5" to the formula its anchor holds."""
    sheets: dict[str, Sheet] = {}
    anchors: dict[tuple[str, int, int], tuple[int, int, int, int]] = {}
    for name, content in {"Data": cells, **(more or {})}.items():
        sheet = Sheet(name)
        for coord, value in content.items():
            row, col = parse_cell(coord)
            formula = value if isinstance(value, str) and value.startswith("=") else None
            sheet.cells[(row, col)] = Cell(name, row, col, None if formula else value, formula)  # type: ignore[arg-type]
        for block, formula in (arrays or {}).items() if name == "Data" else ():
            first, last = block.split(":")
            (r1, c1), (r2, c2) = parse_cell(first), parse_cell(last)
            sheet.cells[(r1, c1)] = Cell(name, r1, c1, 0.0, formula, array_ref=block)
            for r in range(r1, r2 + 1):
                for c in range(c1, c2 + 1):
                    anchors[(name, r, c)] = (r1, c1, r2, c2)
                    if (r, c) != (r1, c1):
                        sheet.cells[(r, c)] = Cell(name, r, c, 0.0)
        sheet.max_row = max((r for r, _ in sheet.cells), default=0)
        sheet.max_col = max((c for _, c in sheet.cells), default=0)
        sheets[name] = sheet
    return Workbook("mem.xlsx", "", sheets, names or [], True, anchors)


def columns(**cols: list[object]) -> dict[str, object]:
    """{"A": [...], "B": [...]} -> cells from row 1 down; None leaves a cell empty."""
    out: dict[str, object] = {}
    for letter, values in cols.items():
        for i, value in enumerate(values, start=1):
            if value is not None:
                out[f"{letter}{i}"] = value
    return out


def value(cells: dict[str, object], formula: str, **kw: object) -> object:
    return Evaluator(book({**cells, "Z1": formula}, **kw)).cell_value("Data", 1, 26)  # type: ignore[arg-type]


ERR = ErrorValue


class TestPairSkipping:
    # y with a number stored as text, a blank, a logical and a word: SLOPE and its kin keep only
    # pairs where both cells are numbers (Excel's documentation: "text, logical values, or empty
    # cells are ignored").
    y_typed: list[object] = [2.3, "4.1", 6.2, None, 10.1, True, 13.8, "n/a"]
    cells = columns(A=list(X), B=y_typed)
    kept = [0, 2, 4, 6]

    def reference(self) -> Any:
        return stats.linregress([X[i] for i in self.kept], [Y[i] for i in self.kept])

    def test_slope_intercept_rsq_correl(self) -> None:
        fit = self.reference()  # scipy.stats.linregress over the four numeric pairs
        assert value(self.cells, "=SLOPE(B1:B8,A1:A8)") == pytest.approx(fit.slope, rel=1e-12)
        assert value(self.cells, "=INTERCEPT(B1:B8,A1:A8)") == pytest.approx(fit.intercept)
        assert value(self.cells, "=RSQ(B1:B8,A1:A8)") == pytest.approx(fit.rvalue**2)
        assert value(self.cells, "=CORREL(B1:B8,A1:A8)") == pytest.approx(fit.rvalue)
        assert value(self.cells, "=PEARSON(A1:A8,B1:B8)") == pytest.approx(fit.rvalue)
        expected = fit.intercept + fit.slope * 10
        assert value(self.cells, "=FORECAST(10,B1:B8,A1:A8)") == pytest.approx(expected)

    def test_steyx(self) -> None:
        fit = self.reference()
        xs = np.array([X[i] for i in self.kept])
        # linregress: stderr = s / sqrt(Sxx), so s = stderr * sqrt(Sxx)
        s = fit.stderr * math.sqrt(((xs - xs.mean()) ** 2).sum())
        assert value(self.cells, "=STEYX(B1:B8,A1:A8)") == pytest.approx(s, rel=1e-10)

    def test_a_skipped_x_drops_its_pair(self) -> None:
        cells = columns(A=[1.0, "2", 3.0, 4.0], B=[1.0, 50.0, 3.1, 3.9])
        fit = stats.linregress([1.0, 3.0, 4.0], [1.0, 3.1, 3.9])
        assert value(cells, "=SLOPE(B1:B4,A1:A4)") == pytest.approx(fit.slope)

    def test_zero_counts(self) -> None:
        cells = columns(A=[0.0, 1.0, 2.0], B=[0.0, 0.0, 3.0])
        assert value(cells, "=SLOPE(B1:B3,A1:A3)") == pytest.approx(1.5)  # numpy: polyfit 1.5
        assert np.polyfit([0, 1, 2], [0, 0, 3], 1)[0] == pytest.approx(1.5)

    def test_linest_refuses_the_same_cells(self) -> None:
        # Excel: LINEST gives #VALUE! when a cell of y or x is not a number.
        assert value(self.cells, "=INDEX(LINEST(B1:B8,A1:A8),1)") == ERR("#VALUE!")
        blank = columns(A=list(X), B=[*Y[:3], None, *Y[4:]])
        assert value(blank, "=INDEX(LINEST(B1:B8,A1:A8),1)") == ERR("#VALUE!")


class TestErrorsAndEdges:
    cells = {**columns(A=list(X), B=list(Y)), "B3": "=1/0", "C1": ERR("#N/A")}

    def test_an_error_cell_propagates(self) -> None:
        for formula in ("=SLOPE(B1:B8,A1:A8)", "=SUM(B1:B8)", "=AVERAGE(B1:B8)", "=STDEV(B1:B8)"):
            assert value(self.cells, formula) == ERR("#DIV/0!"), formula
        assert value(self.cells, "=INDEX(LINEST(B1:B8,A1:A8),1)") == ERR("#DIV/0!")
        assert value(self.cells, "=C1+1") == ERR("#N/A")

    def test_count_skips_errors_counta_counts_them(self) -> None:
        assert value(self.cells, "=COUNT(B1:B8)") == 7.0
        assert value(self.cells, "=COUNTA(B1:B8)") == 8.0

    def test_unequal_sizes(self) -> None:
        # Excel: SLOPE with a different number of points gives #N/A; LINEST gives #REF!.
        cells = columns(A=list(X), B=list(Y))
        assert value(cells, "=SLOPE(B1:B8,A1:A7)") == ERR("#N/A")
        assert value(cells, "=STEYX(B1:B8,A1:A7)") == ERR("#N/A")
        assert value(cells, "=INDEX(LINEST(B1:B8,A1:A7),1)") == ERR("#REF!")

    def test_zero_denominators(self) -> None:
        cells = columns(A=[2.0, 2.0, 2.0], B=[1.0, 2.0, 4.0], C=[5.0, 5.0, 5.0])
        assert value(cells, "=SLOPE(B1:B3,A1:A3)") == ERR("#DIV/0!")  # constant x
        assert value(cells, "=RSQ(C1:C3,B1:B3)") == ERR("#DIV/0!")  # constant y
        assert value(cells, "=STEYX(B1:B2,C1:C2)") == ERR("#DIV/0!")  # n < 3
        assert value(cells, "=SLOPE(D1:D3,B1:B3)") == ERR("#DIV/0!")  # no pairs at all
        assert value(cells, "=AVERAGE(D1:D3)") == ERR("#DIV/0!")
        assert value(cells, "=1/0") == ERR("#DIV/0!")

    def test_t_distribution_arguments(self) -> None:
        # Excel: TDIST and T.DIST.2T need x >= 0; df is truncated to an integer; tails is 1 or 2.
        assert value({}, "=TDIST(-0.5,10,2)") == ERR("#NUM!")
        assert value({}, "=_xlfn.T.DIST.2T(-0.5,10)") == ERR("#NUM!")
        assert value({}, "=TDIST(1,10,3)") == ERR("#NUM!")
        assert value({}, "=TDIST(1,0.5,2)") == ERR("#NUM!")
        # scipy.stats.t as the reference distribution
        assert value({}, "=TDIST(2.1,10.9,2)") == pytest.approx(2 * stats.t.sf(2.1, 10))
        assert value({}, "=TDIST(2.1,10,1)") == pytest.approx(stats.t.sf(2.1, 10))
        assert value({}, "=_xlfn.T.DIST(-1.3,7,TRUE)") == pytest.approx(stats.t.cdf(-1.3, 7))
        assert value({}, "=_xlfn.T.DIST(1.3,7,FALSE)") == pytest.approx(stats.t.pdf(1.3, 7))
        assert value({}, "=_xlfn.T.DIST.RT(-1.3,7)") == pytest.approx(stats.t.sf(-1.3, 7))
        assert value({}, "=TINV(0.05,12.8)") == pytest.approx(stats.t.isf(0.025, 12))
        assert value({}, "=_xlfn.T.INV(0.3,5)") == pytest.approx(stats.t.ppf(0.3, 5))
        assert value({}, "=TINV(0,5)") == ERR("#NUM!")

    def test_other_distributions(self) -> None:
        # scipy.stats.norm and scipy.stats.f as the reference distributions
        assert value({}, "=NORMSDIST(1.1)") == pytest.approx(stats.norm.cdf(1.1))
        assert value({}, "=_xlfn.NORM.S.DIST(1.1,FALSE)") == pytest.approx(stats.norm.pdf(1.1))
        assert value({}, "=NORMSINV(0.975)") == pytest.approx(stats.norm.ppf(0.975))
        assert value({}, "=FDIST(3.2,2,15)") == pytest.approx(stats.f.sf(3.2, 2, 15))
        assert value({}, "=_xlfn.F.DIST(3.2,2,15,TRUE)") == pytest.approx(stats.f.cdf(3.2, 2, 15))
        assert value({}, "=_xlfn.F.DIST.RT(-1,2,15)") == ERR("#NUM!")

    def test_tiny_p_values_keep_their_digits(self) -> None:
        # the upper tail computed directly, not as 1 - cdf (scipy.stats.t.sf as reference)
        p = value({}, "=_xlfn.T.DIST.2T(40,30)")
        assert p == pytest.approx(2 * stats.t.sf(40, 30), rel=1e-12)
        assert isinstance(p, float) and 0 < p < 1e-25


class TestAggregates:
    cells = columns(A=[1.5, "2", True, None, 4.0, 7.5, "x"])
    numbers = np.array([1.5, 4.0, 7.5])  # what a range gives SUM and kin: its numbers only

    def test_ranges_ignore_text_and_logicals(self) -> None:
        nums = self.numbers
        checks = {
            "=SUM(A1:A7)": nums.sum(),
            "=SUMSQ(A1:A7)": (nums**2).sum(),
            "=AVERAGE(A1:A7)": nums.mean(),
            "=COUNT(A1:A7)": 3.0,
            "=COUNTA(A1:A7)": 6.0,
            "=DEVSQ(A1:A7)": ((nums - nums.mean()) ** 2).sum(),
            "=STDEV(A1:A7)": nums.std(ddof=1),
            "=_xlfn.STDEV.S(A1:A7)": nums.std(ddof=1),
            "=_xlfn.STDEV.P(A1:A7)": nums.std(ddof=0),
            "=STDEVP(A1:A7)": nums.std(ddof=0),
            "=VAR(A1:A7)": nums.var(ddof=1),
            "=_xlfn.VAR.S(A1:A7)": nums.var(ddof=1),
            "=_xlfn.VAR.P(A1:A7)": nums.var(ddof=0),
            "=MIN(A1:A7)": 1.5,
            "=MAX(A1:A7)": 7.5,
        }
        for formula, expected in checks.items():  # numpy as the reference
            assert value(self.cells, formula) == pytest.approx(expected), formula

    def test_typed_arguments_count(self) -> None:
        # Excel's documentation: numbers, logicals and text-numbers typed into the argument list
        # are counted (LibreOffice refuses the text: see KNOWN_DIFFERENCES).
        assert value({}, '=SUM("3",TRUE,2)') == 6.0
        assert value({}, '=AVERAGE("3",TRUE,2)') == 2.0
        assert value({}, '=COUNT("3",TRUE,2,"x",#N/A)') == 3.0
        assert value({}, '=SUM("x",1)') == ERR("#VALUE!")

    def test_single_cell_reference_is_a_range(self) -> None:
        # a referenced cell holding text is ignored, as in any range
        assert value(self.cells, "=SUM(A2,A1)") == 1.5

    def test_empty_devsq(self) -> None:
        assert value({}, "=DEVSQ(B1:B3)") == ERR("#NUM!")  # Excel: #NUM!
        assert value({}, "=MIN(B1:B3)") == 0.0


class TestArithmetic:
    def test_text_that_looks_like_a_number(self) -> None:
        cells = {"A1": "12.5", "A2": "abc", "A3": " 3 ", "A4": "50%", "A5": "1,250"}
        assert value(cells, "=A1+1") == 13.5
        assert value(cells, "=A2+1") == ERR("#VALUE!")
        assert value(cells, "=A3*2") == 6.0
        assert value(cells, "=A4*10") == 5.0
        assert value(cells, "=A5+0") == 1250.0
        assert value(cells, '=""+1') == ERR("#VALUE!")

    def test_operators(self) -> None:
        assert value({}, "=-2^2") == 4.0
        assert value({}, "=2^3^2") == 64.0
        assert value({}, "=5%*3") == pytest.approx(0.15)
        assert value({}, "=TRUE+1") == 2.0
        assert value({"A1": None}, "=B7+1") == 1.0  # an empty cell is 0
        assert value({}, "=0^0") == ERR("#NUM!")  # Excel; LibreOffice gives 1
        assert value({}, "=(-8)^(1/3)") == ERR("#NUM!")
        assert value({}, "=10^400") == ERR("#NUM!")

    def test_comparisons_and_text(self) -> None:
        # Excel: text comparison ignores case; numbers sort before text, text before logicals.
        assert value({}, '="abc"="ABC"') is True
        assert value({}, '=5<"a"') is True
        assert value({}, '="a"<TRUE') is True
        assert value({}, "=B9=0") is True
        assert value({}, '=1&TRUE&2.5&"x"') == "1TRUE2.5x"
        assert value({}, '=(0.1+0.2)&""') == "0.3"  # 15 significant digits, as Excel shows

    def test_rounding_half_away_from_zero(self) -> None:
        # Excel's ROUND: halves away from zero, on the decimal the cell shows (2.675 -> 2.68)
        assert value({}, "=ROUND(2.5,0)") == 3.0
        assert value({}, "=ROUND(-2.5,0)") == -3.0
        assert value({}, "=ROUND(2.675,2)") == 2.68
        assert value({}, "=ROUND(1234.5,-2)") == 1200.0

    def test_functions_of_one_number(self) -> None:
        assert value({}, "=SQRT(2)") == pytest.approx(math.sqrt(2))
        assert value({}, "=SQRT(-1)") == ERR("#NUM!")
        assert value({}, "=LN(0)") == ERR("#NUM!")
        assert value({}, "=EXP(1)") == pytest.approx(math.e)
        assert value({}, "=POWER(2,-1)") == 0.5
        assert value({}, "=ABS(-3)") == 3.0
        assert value({"A1": "7"}, "=ISNUMBER(A1)") is False
        assert value({"A1": 7}, "=ISNUMBER(A1)") is True

    def test_if(self) -> None:
        assert value({}, "=IF(1>2,1/0,5)") == 5.0  # the branch not taken is not evaluated
        assert value({}, "=IF(1>2,5)") is False
        assert value({}, "=IF(1<2,,5)") == 0.0
        assert value({}, '=IF("x",1,2)') == ERR("#VALUE!")
        assert value({}, "=IFERROR(1/0,7)") == 7.0


class TestLinest:
    rng = np.random.default_rng(20240611)
    x = np.column_stack([np.linspace(1, 12, 12), rng.uniform(0, 5, 12), rng.uniform(-2, 2, 12)])
    y = 1.5 + x @ np.array([0.8, -1.1, 2.3]) + rng.normal(0, 0.4, 12)
    cells = {
        **columns(A=list(x[:, 0]), B=list(x[:, 1]), C=list(x[:, 2]), D=list(y)),
    }

    def table(self, formula: str, block: str) -> np.ndarray:
        workbook = book(self.cells, arrays={block: formula})
        evaluator = Evaluator(workbook)
        anchor = workbook.cell("Data", *parse_cell(block.split(":")[0]))
        assert anchor is not None
        result = evaluator.evaluate_cell(anchor)
        assert isinstance(result, np.ndarray)
        return result

    def test_layout_against_statsmodels(self) -> None:
        table = self.table("=LINEST(D1:D12,A1:C12,TRUE,TRUE)", "F1:I5")
        ols = sm.OLS(self.y, sm.add_constant(self.x)).fit()  # statsmodels as the reference
        na = ERR("#N/A")
        # row 1: coefficients in reverse order of the x columns, then the intercept
        assert list(table[0]) == pytest.approx([*ols.params[:0:-1], ols.params[0]], rel=1e-10)
        assert list(table[1]) == pytest.approx([*ols.bse[:0:-1], ols.bse[0]], rel=1e-10)
        assert list(table[2, :2]) == pytest.approx([ols.rsquared, math.sqrt(ols.scale)])
        assert list(table[3, :2]) == pytest.approx([ols.fvalue, ols.df_resid])
        assert list(table[4, :2]) == pytest.approx([ols.ess, ols.ssr])
        assert list(table[2:, 2:].ravel()) == [na] * 6

    def test_without_intercept_against_statsmodels(self) -> None:
        table = self.table("=LINEST(D1:D12,A1:B12,FALSE,TRUE)", "F1:H5")
        ols = sm.OLS(self.y, self.x[:, :2]).fit()  # no constant: statsmodels' R² is uncentred
        assert list(table[0]) == pytest.approx([ols.params[1], ols.params[0], 0.0])
        assert list(table[1, :2]) == pytest.approx([ols.bse[1], ols.bse[0]])
        assert table[1, 2] == ERR("#N/A")
        assert list(table[2, :2]) == pytest.approx([ols.rsquared, math.sqrt(ols.scale)])
        assert list(table[3, :2]) == pytest.approx([ols.fvalue, ols.df_resid])
        assert list(table[4, :2]) == pytest.approx([ols.ess, ols.ssr])

    def test_one_x_against_numpy_lstsq(self) -> None:
        table = self.table("=LINEST(D1:D12,A1:A12)", "F1:G1")
        design = np.column_stack([self.x[:, 0], np.ones(12)])
        solution = np.linalg.lstsq(design, self.y, rcond=None)[0]  # numpy as the reference
        assert table.shape == (1, 2)
        assert list(table[0]) == pytest.approx(list(solution), rel=1e-12)

    def test_y_in_a_row(self) -> None:
        cells = {f"{chr(65 + i)}1": X[i] for i in range(8)} | {
            f"{chr(65 + i)}2": Y[i] for i in range(8)
        }
        fit = stats.linregress(X, Y)  # scipy as the reference
        assert value(cells, "=INDEX(LINEST(A2:H2,A1:H1),1)") == pytest.approx(fit.slope)

    def test_index_into_linest(self) -> None:
        fit = stats.linregress(X, Y)  # scipy as the reference
        cells = columns(A=list(X), B=list(Y))
        assert value(cells, "=INDEX(LINEST(B1:B8,A1:A8),1)") == pytest.approx(fit.slope)
        assert value(cells, "=INDEX(LINEST(B1:B8,A1:A8),2)") == pytest.approx(fit.intercept)
        assert value(cells, "=INDEX(LINEST(B1:B8,A1:A8),1,2)") == pytest.approx(fit.intercept)
        se = "=INDEX(LINEST(B1:B8,A1:A8,TRUE(),TRUE()),2,1)"
        assert value(cells, se) == pytest.approx(fit.stderr)
        assert value(cells, "=INDEX(LINEST(B1:B8,A1:A8,,TRUE),3,1)") == pytest.approx(fit.rvalue**2)
        assert value(cells, "=INDEX(LINEST(B1:B8,A1:A8,TRUE,TRUE),9,1)") == ERR("#REF!")
        # column 2 of the stats block: intercept, its SE, residual SD, df, residual SS
        residuals = np.array(Y) - (fit.intercept + fit.slope * np.array(X))
        ssresid = float(residuals @ residuals)
        expected = fit.intercept + fit.intercept_stderr + math.sqrt(ssresid / 6) + 6 + ssresid
        formula = "=SUM(INDEX(LINEST(B1:B8,A1:A8,TRUE,TRUE),0,2))"
        assert value(cells, formula) == pytest.approx(expected)

    def test_collinear_columns_are_dropped(self) -> None:
        # Excel (from memory): a column that repeats the others is removed, shown with
        # coefficient 0 and SE 0, and the residual df counts only the columns kept.
        # statsmodels on the independent columns is the reference.
        cells = columns(
            A=list(self.x[:, 0]),
            B=list(2 * self.x[:, 0]),
            C=list(self.x[:, 1]),
            D=list(self.x[:, 2]),
            E=list(self.y),
        )
        evaluator = Evaluator(book(cells, arrays={"G1:K5": "=LINEST(E1:E12,A1:D12,TRUE,TRUE)"}))
        table = evaluator.evaluate_cell(evaluator.workbook.cell("Data", 1, 7))  # type: ignore[arg-type]
        assert isinstance(table, np.ndarray)
        ols = sm.OLS(self.y, sm.add_constant(self.x)).fit()
        coef_d, coef_c, coef_b, coef_a, intercept = (float(v) for v in table[0])
        assert [coef_d, coef_c, intercept] == pytest.approx(
            [ols.params[3], ols.params[2], ols.params[0]]
        )
        assert 0.0 in (coef_a, coef_b)
        assert coef_a + 2 * coef_b == pytest.approx(ols.params[1])  # B is 2 A
        assert 0.0 in (table[1, 2], table[1, 3])
        assert table[2, 0] == pytest.approx(ols.rsquared)
        assert table[3, 1] == ols.df_resid == 8.0

    def test_array_block_cells_and_padding(self) -> None:
        workbook = book(columns(A=list(X), B=list(Y)), arrays={"D1:F6": "=LINEST(B1:B8,A1:A8,1,1)"})
        evaluator = Evaluator(workbook)
        fit = stats.linregress(X, Y)  # scipy as the reference
        assert evaluator.cell_value("Data", 1, 4) == pytest.approx(fit.slope)
        assert evaluator.cell_value("Data", 2, 5) == pytest.approx(fit.intercept_stderr)
        assert evaluator.cell_value("Data", 3, 4) == pytest.approx(fit.rvalue**2)
        assert evaluator.cell_value("Data", 4, 5) == 6.0
        # Beyond LINEST's 5 x 2 result, an array formula's block shows #N/A.
        assert evaluator.cell_value("Data", 6, 4) == ERR("#N/A")
        assert evaluator.cell_value("Data", 1, 6) == ERR("#N/A")
        # A formula reading the block sees the evaluated elements.
        assert Evaluator(
            book(
                {**columns(A=list(X), B=list(Y)), "H1": "=D1/D2"},
                arrays={"D1:E5": "=LINEST(B1:B8,A1:A8,1,1)"},
            )
        ).cell_value("Data", 1, 8) == pytest.approx(fit.slope / fit.stderr)


class TestReferencesAndCells:
    def test_whole_columns_skip_the_header(self) -> None:
        cells = columns(A=["x", *X], B=["y", *Y])
        fit = stats.linregress(X, Y)  # scipy as the reference
        assert value(cells, "=SLOPE(B:B,A:A)") == pytest.approx(fit.slope)

    def test_names_and_other_sheets(self) -> None:
        names = [
            DefinedName("xs", "Data!$A$1:$A$8"),
            DefinedName("ys", "Data!$B$1:$B$8"),
            DefinedName("ys", "'My Data'!$B$1:$B$8", scope="Data"),
        ]
        other = columns(B=[2 * v for v in Y])
        fit = stats.linregress(X, [2 * v for v in Y])  # scipy: sheet scope's y is 2 Y
        workbook = book(
            {**columns(A=list(X), B=list(Y)), "Z1": "=SLOPE(ys,xs)"},
            names=names,
            more={"My Data": other},
        )
        assert Evaluator(workbook).cell_value("Data", 1, 26) == pytest.approx(fit.slope)

    def test_implicit_intersection_in_a_normal_cell(self) -> None:
        # A column reference where one value is wanted takes the formula's own row.
        cells = {**columns(A=list(X)), "C3": "=A1:A8*10", "C12": "=A1:A8*10"}
        evaluator = Evaluator(book(cells))
        assert evaluator.cell_value("Data", 3, 3) == 30.0
        assert evaluator.cell_value("Data", 12, 3) == ERR("#VALUE!")

    def test_evaluate_returns_blocks(self) -> None:
        evaluator = Evaluator(book(columns(A=list(X), B=[1.0, None, "t"])))
        block = evaluator.evaluate("=A1:A3*2", "Data")
        assert isinstance(block, np.ndarray) and list(block.ravel()) == [2.0, 4.0, 6.0]
        cells = evaluator.range_values(Ref("Data", 1, 2, 3, 2))
        assert cells.shape == (3, 1) and list(cells.ravel()) == [1.0, None, "t"]

    def test_dynamic_ranges(self) -> None:
        cells = columns(A=list(X), B=list(Y))
        fit = stats.linregress(X[:6], Y[:6])  # scipy as the reference
        assert value(cells, "=SLOPE(B1:INDEX(B:B,6),A1:INDEX(A:A,6))") == pytest.approx(fit.slope)
        assert value(cells, "=SLOPE(OFFSET(B1,0,0,6,1),OFFSET(A1,0,0,6))") == pytest.approx(
            fit.slope
        )

    def test_sumproduct_slope(self) -> None:
        cells = columns(A=list(X), B=list(Y))
        formula = "=SUMPRODUCT((A1:A8-AVERAGE(A1:A8))*(B1:B8-AVERAGE(B1:B8)))/DEVSQ(A1:A8)"
        assert value(cells, formula) == pytest.approx(np.polyfit(X, Y, 1)[0])  # numpy polyfit


class TestDependencies:
    def test_cycles_are_an_error_not_a_crash(self) -> None:
        evaluator = Evaluator(book({"A1": "=B1+1", "B1": "=A1*2", "C1": "=A1", "D1": "=D1"}))
        assert evaluator.cell_value("Data", 1, 1) == ERR("#CYCLE!")
        assert evaluator.cell_value("Data", 1, 2) == ERR("#CYCLE!")
        assert evaluator.cell_value("Data", 1, 3) == ERR("#CYCLE!")
        assert evaluator.cell_value("Data", 1, 4) == ERR("#CYCLE!")

    def test_a_long_chain(self) -> None:
        cells: dict[str, object] = {"A1": 1.0}
        cells |= {f"A{r}": f"=A{r - 1}+1" for r in range(2, 10_001)}
        cells["B1"] = "=SUM(A1:A10000)"
        evaluator = Evaluator(book(cells))
        assert evaluator.cell_value("Data", 10_000, 1) == 10_000.0
        assert evaluator.cell_value("Data", 1, 2) == 10_000 * 10_001 / 2  # Gauss

    def test_a_long_chain_through_computed_references(self) -> None:
        cells: dict[str, object] = {"A1": 1.0}
        # Each cell reaches the one above only through OFFSET, so the dependency is found
        # while the formula runs, not from its text.
        cells |= {f"A{r}": f"=OFFSET(A1,{r - 2},0)+1" for r in range(2, 10_001)}
        evaluator = Evaluator(book(cells))
        assert evaluator.cell_value("Data", 10_000, 1) == 10_000.0

    def test_unsupported_functions_name_themselves(self) -> None:
        evaluator = Evaluator(book({"A1": "=GROWTH(B1:B3)", "A2": "=A1+1"}))
        with pytest.raises(Unsupported, match="GROWTH"):
            evaluator.evaluate_cell(evaluator.workbook.cell("Data", 1, 1))  # type: ignore[arg-type]
        with pytest.raises(Unsupported, match=r"Data!A1"):
            evaluator.cell_value("Data", 2, 1)

    def test_other_workbooks_are_unverifiable(self) -> None:
        evaluator = Evaluator(book({"A1": "=[1]Sheet1!B2*2", "A2": "=SUM('[x.xlsx]S'!A1:A4)"}))
        for row in (1, 2):
            with pytest.raises(Unverifiable):
                evaluator.cell_value("Data", row, 1)

    def test_names_that_do_not_resolve(self) -> None:
        assert value({}, "=undefined_name+1") == ERR("#NAME?")
        with pytest.raises(Unsupported, match="Table1"):
            value({}, "=SUM(Table1[Dose])")


def test_a_200000_row_slope_is_exact() -> None:
    # Its speed is measured in benchmarks/, never asserted here (shared CI machines are noisy).
    n = 200_000
    rng = np.random.default_rng(7)
    xs = np.arange(1.0, n + 1)
    ys = 3.0 * xs + rng.normal(0, 50, n)
    sheet = Sheet("Data", max_row=n, max_col=3)
    for i in range(n):
        sheet.cells[(i + 1, 1)] = Cell("Data", i + 1, 1, float(xs[i]))
        sheet.cells[(i + 1, 2)] = Cell("Data", i + 1, 2, float(ys[i]))
    sheet.cells[(1, 3)] = Cell("Data", 1, 3, None, f"=SLOPE(B1:B{n},A1:A{n})")
    workbook = Workbook("big.xlsx", "", {"Data": sheet}, [], True)
    slope = Evaluator(workbook).cell_value("Data", 1, 3)
    assert slope == pytest.approx(np.polyfit(xs, ys, 1)[0], rel=1e-10)  # numpy polyfit


def test_a_range_of_the_whole_sheet_is_refused_not_allocated() -> None:
    # A1:XFD1048576 holds 17,179,869,184 cells (16,384 columns × 1,048,576 rows, the xlsx
    # limits: common practice); allocating it would need over 100 GiB.
    from auditor.evaluation.evaluator import Evaluator, Unsupported
    from auditor.read.workbook import Cell, Sheet, Workbook

    sheet = Sheet("S", {(1, 1): Cell("S", 1, 1, 1.0)}, max_row=1, max_col=1)
    evaluator = Evaluator(Workbook("mem.xlsx", "", {"S": sheet}, [], True))
    with pytest.raises(Unsupported, match="17,179,869,184 cells"):
        evaluator.evaluate("=SUM(A1:XFD1048576)", "S")
