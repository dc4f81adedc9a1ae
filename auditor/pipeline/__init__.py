"""Running audits: one workbook, a batch under limits, a Dask cluster, the ledger."""
