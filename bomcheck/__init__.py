"""bomcheck: audit a bill of materials for capacitor derating and stress before release."""

__version__ = "0.1.0"
