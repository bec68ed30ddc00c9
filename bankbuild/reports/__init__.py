"""Reports read results only: terminal summary, JSON, tables (CSV/XLSX) and PDF documents."""
