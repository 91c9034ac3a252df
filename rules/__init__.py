"""Shipped derating rule sets (TOML data); installed as the package ``bomcheck.rulesets``."""
