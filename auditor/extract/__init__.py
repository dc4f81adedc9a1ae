"""The data of a regression: as its formulas see it, and as the table the author meant.

``entry`` (``extract()``, the one entry), ``record`` (the ``Extracted`` record, reading a cell as a
number), ``intended`` (the intended rows, total and mean rows left out), ``tables`` (tables paired
by position and chart series), ``totals`` (evidence of a total row, extension over added rows),
``pasted`` (a pasted table's stored cells), ``fallback`` (reading stored values where a formula
cannot be evaluated).
"""
