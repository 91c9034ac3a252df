"""The pipeline end to end: one board (audit) or many (batch)."""
