"""The audit workbook reporter, one module per sheet family."""
