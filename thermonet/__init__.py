"""thermonet: hourly lumped-RC thermal networks of buildings, balanced by heat path."""

__version__ = "0.1.0"
