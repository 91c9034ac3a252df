"""Stress stage: placement and circuit stresses as column arithmetic."""
