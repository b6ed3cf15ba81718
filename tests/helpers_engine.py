"""Small shared builders for the engine tests (not a test module)."""

import numpy as np
import pandas as pd

TZ = "Etc/GMT-1"


def hourly_weather(n_hours, temp_air=0.0, start="2025-01-01 01:00", freq="h", **cols):
    idx = pd.date_range(start, periods=n_hours, freq=freq, tz=TZ)
    data = {"temp_air": np.broadcast_to(np.asarray(temp_air, dtype=float), (n_hours,)).copy()}
    for k, v in cols.items():
        data[k] = np.broadcast_to(np.asarray(v, dtype=float), (n_hours,)).copy()
    return pd.DataFrame(data, index=idx)
