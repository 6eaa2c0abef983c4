"""optimag: power-inductor design search for switch-mode converters."""

__version__ = "0.1.0"
