"""snrgain.outputs: what users read: terminal tables, JSON and CSV, figures, the report, notices in words."""
