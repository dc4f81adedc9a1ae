"""The formula evaluator's parts; :mod:`auditor.evaluation.evaluator` is the interface to import.

Layers, lowest first (a module imports only from those above it)::

    values        errors, MISSING, RangeValue, the evaluation context, function signatures
    coerce        a value as arithmetic, logic or text sees it
    operators     element-wise application, + - * / ^ & and the comparisons
    maths, distributions, summaries, regression, logic
                  the spreadsheet functions, one family a module
    functions     the merged function tables
    layout        where a workbook's formula cells and array blocks are
    expressions   a syntax tree evaluated against the cells the engine provides
    engine        Evaluator: cells in dependency order, memoised, cycles detected

Names with a leading underscore are shared between these modules and nowhere else.
"""
