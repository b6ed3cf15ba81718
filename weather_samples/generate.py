"""Regenerate weather_samples/fernhollow_sample.csv — INVENTED demo weather, not a real place.

Run from anywhere:  python weather_samples/generate.py [seed]
"""

from __future__ import annotations

import sys
from pathlib import Path

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))  # the repository root

from thermonet.scenarios.sample_weather import DEFAULT_SEED, write_sample_csv  # noqa: E402

if __name__ == "__main__":
    seed = int(sys.argv[1]) if len(sys.argv) > 1 else DEFAULT_SEED
    out = write_sample_csv(Path(__file__).resolve().parent / "fernhollow_sample.csv", seed)
    print(f"wrote {out} ({out.stat().st_size / 1e6:.2f} MB, seed {seed})")
