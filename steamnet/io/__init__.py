"""Output files: JSON export, atomic writes."""
