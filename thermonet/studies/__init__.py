"""Design studies: variants on the engine's variant axis, sensitivity, calibration."""

from thermonet.studies.variants import (  # noqa: F401
    CalibrationResult,
    SensitivityResult,
    calibrate,
    morris,
    one_at_a_time,
    read_study,
    run_variants,
    sobol,
    tornado_plot,
    variant_traces,
)

__all__ = [
    "CalibrationResult",
    "SensitivityResult",
    "calibrate",
    "morris",
    "one_at_a_time",
    "read_study",
    "run_variants",
    "sobol",
    "tornado_plot",
    "variant_traces",
]
