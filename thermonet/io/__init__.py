"""Files: model files (JSON) and the provenance record of a run."""

from thermonet.io.models import (  # noqa: F401
    FORMAT,
    SCHEMA_VERSION,
    ModelFile,
    dumps,
    from_dict,
    load_model,
    loads,
    read_model,
    required_weather_columns,
    save_model,
    to_dict,
)
from thermonet.io.provenance import (  # noqa: F401
    PROVENANCE_FILE,
    file_sha256,
    jsonable,
    library_versions,
    provenance_record,
    read_provenance,
    write_provenance,
)

__all__ = [
    "FORMAT",
    "ModelFile",
    "PROVENANCE_FILE",
    "SCHEMA_VERSION",
    "dumps",
    "file_sha256",
    "from_dict",
    "jsonable",
    "library_versions",
    "load_model",
    "loads",
    "provenance_record",
    "read_model",
    "read_provenance",
    "required_weather_columns",
    "save_model",
    "to_dict",
    "write_provenance",
]
