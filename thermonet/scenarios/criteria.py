"""The criterion sets of the demo report: names and scope notes (no physics).

Kept apart from :mod:`thermonet.scenarios.sunny_room` (which computes the verdicts) so that
the report module reads them without importing the study.
"""

from __future__ import annotations

#: Criterion sets of the report: key -> (title, scope note). Each verdict row names its set.
CRITERION_SETS: dict[str, tuple[str, str]] = {
    "en16798": ("EN 16798-1 adaptive comfort, category II",
                "This room, occupied hours 09:00–22:00, operative temperature. The standard "
                "states the limits but no pass mark; the 5 % of occupied hours used here is an "
                "indication (acceptable deviation suggested in EN 15251:2007 Annex G and "
                "CEN/TR 16798-2, from memory)."),
    "tm52": ("CIBSE TM52, category II",
             "This room, occupied hours 09:00–22:00 in May–September, operative temperature; "
             "fails when two or more of the three criteria fail."),
    "tm59": ("CIBSE TM59, living room, natural ventilation",
             "This room as a living room, criterion (a), occupied hours 09:00–22:00."),
    "very_low_energy": ("Very-low-energy house criteria — an indication only",
                        "These criteria are defined for a WHOLE building over a year with its "
                        "own design-load method; here they are applied to one room's simulated "
                        "operative temperature and simulated hourly peak. Read them as an "
                        "indication, not as a certification result. For heating, the scheme "
                        "accepts either the demand or the load criterion."),
}
