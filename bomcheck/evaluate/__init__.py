"""Evaluate stage: rule sets as data, the engine that applies them, waivers, approved sources."""
