"""pinlib: pin characteristics and bus budgets for board designers."""

__version__ = "0.1.0"
