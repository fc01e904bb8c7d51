"""fieldcheck: wire-antenna measurement, fit, trim advice, acceptance and diagnosis."""

__version__ = "0.1.0"
