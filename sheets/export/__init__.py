"""Stage 5, export: results (JSON, CSV) and other files, always written atomically."""
