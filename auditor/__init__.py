"""regaudit: audit the regressions people build in spreadsheets."""

__version__ = "0.1.0"
