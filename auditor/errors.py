"""The one exception hierarchy of regaudit.

    RegauditError                 anything the user can act on
    ├── UnreadableWorkbook        a file that cannot be read as a workbook (says what it is)
    ├── FormulaError              a formula the tool cannot parse
    ├── PolicyError               a bad policy file, key or value
    ├── LedgerError               a ledger file that cannot be opened or is not regaudit's
    ├── Unsupported               a function or construct the evaluator does not evaluate
    │   └── Unverifiable          a formula that reads another workbook, not at hand
    └── UsageError                a bad command line (exit 2)

Errors from openpyxl, zipfile and XML parsers are translated into these at the reading
boundary (auditor.read) with ``raise ... from``; bugs keep their own traceback.
"""

from __future__ import annotations


class RegauditError(Exception):
    """Base of every error regaudit reports in words."""


class UnreadableWorkbook(RegauditError):
    """The file is not a workbook regaudit can read; the message says what it is instead."""


class FormulaError(RegauditError):
    """A formula could not be parsed."""


class PolicyError(RegauditError):
    """A policy file, key or value is not valid."""


class UsageError(RegauditError):
    """The command line asks for something that cannot be done."""


class LedgerError(RegauditError):
    """The ledger file cannot be opened or is not a regaudit ledger."""


class Unsupported(RegauditError):
    """A function or construct the evaluator does not evaluate; the message names it."""


class Unverifiable(Unsupported):
    """The formula reads another workbook, which is not at hand."""
