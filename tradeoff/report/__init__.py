"""Reports and exports: terminal, JSON, workbook, CSV, plots, netlists, sweeps."""
