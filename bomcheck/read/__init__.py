"""Read stage: the only code that opens input files (bytes, tables, TOML, workbook scans)."""
