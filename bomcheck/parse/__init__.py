"""Parse stage: value text, designators, BOM rows, design and parts tables to SI columns."""
