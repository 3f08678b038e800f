"""Reading schedules: CSV, XLSX and PDF into the canonical schedule frame."""
