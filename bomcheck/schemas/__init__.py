"""JSON schemas of the report, substitute, batch and rule-set files (package data)."""
