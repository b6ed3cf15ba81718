"""Exception and warning classes of thermonet, kept in one place.

Every error says three things: what is wrong (which node, link, column or
parameter), what is allowed, and what was received or how to fix it.
"""

from __future__ import annotations


class ThermonetError(Exception):
    """Base class of every error raised on purpose by thermonet."""


class NetworkError(ThermonetError, ValueError):
    """A node, link, source or control of a network is invalid."""


class WeatherError(ThermonetError, ValueError):
    """Weather data are missing, irregular or physically impossible."""


class TimeZoneError(WeatherError):
    """A time zone name or object that pandas does not know."""


class ScheduleError(ThermonetError, ValueError):
    """A schedule or time series does not align with the simulation index."""


class SolverError(ThermonetError, RuntimeError):
    """The solver could not meet its accuracy target or failed numerically."""


class ConstructionError(ThermonetError, ValueError):
    """A material, layer or construction is invalid."""


class ModelFileError(ThermonetError, ValueError):
    """A model file cannot be read: unknown key, wrong type, missing reference or version."""


class StudyError(ThermonetError, ValueError):
    """A design study cannot run: bad parameter table, failed variants, wrong output folder."""


class OutputFolderError(ThermonetError, ValueError):
    """A result folder cannot be written: not ours, locked by another run, or not a folder."""


class ParameterError(ThermonetError, ValueError):
    """A parameter of a parametric network, or a table of its values, is invalid (names the
    parameter, the column or the row)."""


class ReadOnlyError(ThermonetError, AttributeError):
    """An element of a network was changed after it was added (elements are read-only)."""


class ThermonetWarning(UserWarning):
    """Base class of warnings issued by thermonet."""


class AccuracyWarning(ThermonetWarning):
    """A result may be less accurate than requested."""


class StudyWarning(ThermonetWarning):
    """Some variants of a design study failed; the others finished."""


class AirflowError(ThermonetError, ValueError):
    """An opening, flow or driving quantity of an airflow calculation is invalid."""


class PlausibilityWarning(ThermonetWarning):
    """An input or result is possible but implausible for a building (a unit mix-up?)."""


class MemoryBudgetWarning(ThermonetWarning):
    """A run is about to keep more hourly results in memory than its stated budget."""
