"""The one exception hierarchy of regaudit.

    RegauditError                 anything the user can act on
    ├── UnreadableWorkbook        a file that cannot be read as a workbook (says what it is)
    ├── FormulaError              a formula the tool cannot parse
    ├── PolicyError               a bad policy file, key or value
    └── UsageError                a bad command line (exit 2)

Errors from openpyxl, zipfile and XML parsers are translated into these at the reading
boundary (auditor.read.workbook) with ``raise ... from``; bugs keep their own traceback.
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
