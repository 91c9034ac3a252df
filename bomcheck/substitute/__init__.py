"""Substitute check: a proposed alternate audited in every placement of the part it replaces."""
