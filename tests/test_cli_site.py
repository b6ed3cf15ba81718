"""`thermonet run/check` and the site of the weather: read from the file's own comment line,
and not needed at all when nothing in the model uses the sun (no irradiance column read)."""

from pathlib import Path

import thermonet as tn
from thermonet import io
from thermonet.cli import main
from thermonet.cli.run import read_weather_csv, site_from_header

SAMPLE = Path(__file__).resolve().parents[1] / "weather_samples" / "fernhollow_sample.csv"


def _readme_network() -> tn.Network:
    """The README's kind of model: outdoor air only, no solar input."""
    net = tn.Network("no sun")
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1.2e5)
    net.add_node("slab", kind="mass", capacitance=8e6)
    net.add_link("room", "slab", conductance=150.0, path="internal")
    net.add_link("outdoor", "room", conductance=40.0, path="opaque")
    net.add_airflow("outdoor", "room", flow_m3h=30.0, path="infiltration")
    net.add_source("room", power=200.0, path="internal")
    net.add_thermostat("room", heating_setpoint=20.0, max_heating_w=3000.0)
    return net


def _week_without_header(tmp_path: Path) -> Path:
    lines = SAMPLE.read_text(encoding="utf-8").splitlines()
    assert lines[0].startswith("#")
    path = tmp_path / "week.csv"  # no comment line, no sidecar: the site is unknown
    path.write_text("\n".join(lines[1:2 + 24 * 7]) + "\n", encoding="utf-8")
    return path


def test_site_is_read_from_the_comment_line(tmp_path):
    path = tmp_path / "w.csv"
    path.write_text("# some station (33.5S 70.6W 520 m, UTC-4) hour ending\n"
                    "time,temp_air\n2025-01-01T01:00-0400,1.0\n", encoding="utf-8")
    # south and west are negative; a UTC-4 offset is the POSIX zone Etc/GMT+4
    assert site_from_header(path) == {"latitude": -33.5, "longitude": -70.6,
                                      "elevation": 520.0, "tz": "Etc/GMT+4"}
    assert site_from_header(SAMPLE)["latitude"] == 48.3
    path.write_text("# no site here\ntime,temp_air\n", encoding="utf-8")
    assert site_from_header(path) == {}


def test_check_and_run_a_sun_free_model_on_the_sample_file(tmp_path, capsys):
    model = io.save_model(_readme_network(), tmp_path / "model.json")
    assert main(["check", str(model), "--weather", str(SAMPLE)]) == 0
    weather = _week_without_header(tmp_path)
    out = tmp_path / "run"
    assert main(["run", str(model), "--weather", str(weather), "--out", str(out), "-q"]) == 0
    assert (out / "provenance.json").is_file()
    w = read_weather_csv(weather, required=["temp_air"], needs_site=False)
    assert "site" not in w.attrs and "site unknown" in w.attrs["source"]


def test_a_model_that_reads_irradiance_still_needs_a_site(tmp_path, capsys):
    model = io.save_model(_readme_network(), tmp_path / "model.json",
                          weather_columns=["temp_air", "ghi"])
    weather = _week_without_header(tmp_path)
    code = main(["run", str(model), "--weather", str(weather), "--out", str(tmp_path / "o"),
                 "-q"])
    err = capsys.readouterr().err
    assert code == 2 and "--latitude" in err and "uses the sun" in err
