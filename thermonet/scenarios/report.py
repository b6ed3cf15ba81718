"""The report folder of the sunny-room study: CSV tables, PNG figures and one HTML page.

:func:`write_report` takes a :class:`~thermonet.scenarios.sunny_room.SunnyRoomStudy` and writes
the files listed in :data:`REPORT_FILES` (all of them, always) into a folder. ``index.html``
is self-contained: its figures are embedded as base64 PNG, so the page can be mailed or
archived alone. Energies are in kWh, temperatures in °C, powers in W; in balances, positive
is heat INTO the room.

The page states what was simulated, the cautions (estimates for design guidance, invented
site, weather and building), the results per option, which heat path moved against the
baseline, the verdicts of each criterion and the figures.
"""

from __future__ import annotations

import base64
import html
import io
import textwrap
from pathlib import Path

import matplotlib.pyplot as plt
import numpy as np
import pandas as pd

from thermonet import __version__, comfort, plots
from thermonet.constants import CAUTION
from thermonet.labels import LABELS, label
from thermonet.scenarios.criteria import CRITERION_SETS
from thermonet.scenarios.fernhollow import BUILDING, INVENTED_NOTE

__all__ = ["CSV_FILES", "FIGURES", "INVENTED_NOTE", "OPTION_PALETTE", "REPORT_FILES",
           "check_folder", "option_colors", "path_change_sentences", "write_report"]

#: CSV tables written by :func:`write_report`: file name -> what it holds.
CSV_FILES: dict[str, str] = {
    "options.csv": "the options: description, design change, invented cost/hassle rank",
    "summary.csv": "one row per option: overheating, comfort, heating metrics",
    "verdicts.csv": "one row per option and criterion: value, limit, unit, passed, source",
    "balance_annual.csv": "room balance by heat path per option over the simulated period "
                          "[kWh]",
    "balance_summer.csv": "room balance by heat path per option, June–August [kWh]",
    "balance_monthly_baseline.csv": "monthly room balance of the baseline [kWh]",
    "path_changes.csv": "change of every path against the baseline, annual and summer [kWh]",
    "hourly_operative.csv": "hourly operative temperature per option and outdoor air [°C]",
    "inputs.csv": "inputs and assumptions of the baseline: areas, U-values, airflows, gains, "
                  "schedules",
}

#: PNG figures written by :func:`write_report`: file name -> caption.
FIGURES: dict[str, str] = {
    "balance_summer_by_option.png":
        "Where the heat of June–August comes from and goes, per option (room control "
        "volume; + into the room, − out of it).",
    "balance_annual_by_option.png":
        "The same over the whole simulated period, heating included.",
    "balance_monthly_baseline.png": "Month by month for the baseline.",
    "option_comparison.png":
        "Key metrics per option (each option in its own colour, the same in every figure).",
    "temperatures_hot_week.png":
        "Operative temperature of each option during the hottest week of the period, with "
        "the EN 16798-1 category II adaptive band.",
    "heatmap_operative.png":
        "Operative temperature, day by hour: the baseline and the option with the fewest "
        "hours above 26 °C (same colour scale).",
    "duration_curves.png":
        "Operative temperature duration curves: how many hours each temperature is reached "
        "or exceeded.",
    "adaptive_scatter.png":
        "Occupied hours against the running mean outdoor temperature with the EN 16798-1 "
        "limits: the baseline and the option with the fewest hours above 26 °C.",
}

#: Every file of the report folder.
REPORT_FILES: tuple[str, ...] = (*CSV_FILES, *FIGURES, "index.html")


_DPI = 100

#: Colours of the design options, in study order: the baseline black, then Okabe & Ito
#: (2008) colours without their green (kept for the comfort band) and Tol (2021) muted ones.
#: Every figure of the report draws an option in the same colour.
OPTION_PALETTE: tuple[str, ...] = ("#000000", "#0072B2", "#D55E00", "#CC79A7", "#E69F00",
                                   "#56B4E9", "#882255", "#117733", "#999933", "#661100")


def option_colors(study) -> dict:
    """Option key -> colour, and option label -> the same colour (for tables by label).

    Parameters
    ----------
    study : SunnyRoomStudy
        The study whose options are coloured, in their order.

    Returns
    -------
    dict of str to str
        Hex colours of :data:`OPTION_PALETTE`, repeating after ten options.
    """
    out = {}
    for k, (key, o) in enumerate(study.options.items()):
        c = OPTION_PALETTE[k % len(OPTION_PALETTE)]
        out[key] = c
        out[o.label] = c
    return out


# ------------------------------------------------------------------------------- tables
def _options_table(study) -> pd.DataFrame:
    rows = []
    for key, o in study.options.items():
        change = ", ".join(f"{k} = {v}" for k, v in dict(o.change).items()) or "none"
        rows.append(dict(option=key, label=o.label, description=o.description,
                         design_change=change, cost_rank_invented=o.cost_rank,
                         cost_note_invented=o.cost_note))
    return pd.DataFrame(rows).set_index("option")


def _hourly_table(study) -> pd.DataFrame:
    out = study.operative.copy()
    out.insert(0, "outdoor_air", study.weather["temp_air"])
    out.index.name = "time (hour ending)"
    return out


def _write_csvs(study, folder: Path) -> None:
    tables = {
        "options.csv": _options_table(study),
        "summary.csv": study.summary,
        "verdicts.csv": study.verdicts,
        "balance_annual.csv": study.balance_annual,
        "balance_summer.csv": study.balance_summer,
        "balance_monthly_baseline.csv": study.balance_monthly,
        "path_changes.csv": study.path_changes,
        "hourly_operative.csv": _hourly_table(study),
        "inputs.csv": study.inputs,
    }
    for name, df in tables.items():
        index = not isinstance(df.index, pd.RangeIndex)
        df.to_csv(folder / name, index=index, float_format="%.6g", lineterminator="\n")


# ------------------------------------------------------------------------------ figures
def _labels(study, keys=None) -> list[str]:
    keys = list(study.options) if keys is None else keys
    return [study.options[k].label for k in keys]


def _best_option(study) -> str:
    """Key of the non-baseline option with the fewest hours above 26 °C (baseline if alone)."""
    s = study.summary.drop(index="baseline", errors="ignore")
    if s.empty:
        return "baseline"
    return str(s["hours_above_26_h"].astype(float).idxmin())


def _hot_week(study) -> slice:
    t = study.weather["temp_air"]
    n = min(168, len(t))
    mean = t.rolling(n).mean().to_numpy()
    end = int(np.nanargmax(mean)) if np.isfinite(mean).any() else n - 1
    return slice(end - n + 1, end + 1)


def _figures(study) -> dict:
    """File name -> figure (callers save and close them)."""
    figs = {}
    colors = option_colors(study)
    labels = {k: textwrap.fill(study.options[k].label, 11) for k in study.options}
    for name, tab, title in (
            ("balance_summer_by_option.png", study.balance_summer,
             "Room balance by heat path, June–August (simulated steps)"),
            ("balance_annual_by_option.png", study.balance_annual,
             "Room balance by heat path, whole simulated period")):
        fig, ax = plt.subplots(figsize=(11.5, 5.0), layout="constrained")
        plots.balance_bars(tab.rename(index=labels), title=title, xlabel="Design option",
                           ax=ax)
        figs[name] = fig
    fig, _ = plots.balance_bars(study.balance_monthly,
                                title="Baseline: room balance by heat path per month")
    figs["balance_monthly_baseline.png"] = fig

    table = study.summary.set_index("label")
    fig, axes = plt.subplots(2, 2, figsize=(13, 7.5), layout="constrained")
    for ax, (metric, title) in zip(axes.flat, (
            ("hours_above_26_h", "Hours above 26 °C (operative, all hours of the period)"),
            ("adaptive_ii_hours_above_h", "Occupied hours above the EN 16798-1 cat. II limit"),
            ("heating_kwh_m2", "Heating demand per floor area"),
            ("solar_windows_summer_kwh", "Sun through the windows, June–August")),
            strict=True):
        plots.compare_options(table, metric, ax=ax, colors=colors, title=title, sort=False)
    figs["option_comparison.png"] = fig

    week = _hot_week(study)
    named_colors = {study.options[k].label: colors[k] for k in study.options}
    top = study.operative.iloc[week].rename(columns=dict(zip(study.options, _labels(study),
                                                             strict=True)))
    trm = comfort.running_mean_outdoor(study.weather["temp_air"],
                                       init="periodic" if study.full_year else "first_day")
    band = comfort.adaptive_limits(trm, "II")
    fig, _ = plots.temperature_bands(top, outdoor=study.weather["temp_air"], bands=band,
                                     band_label="EN 16798-1 category II", colors=named_colors,
                                     title="Warmest week of the period: operative "
                                           "temperature per option")
    figs["temperatures_hot_week.png"] = fig

    pair = _pair(study)
    lo = float(study.operative[pair].min().min())
    hi = float(study.operative[pair].max().max())
    fig, axes = plt.subplots(len(pair), 1, figsize=(10, 3.6 * len(pair)), layout="constrained",
                             squeeze=False)
    for ax, key in zip(axes[:, 0], pair, strict=True):
        plots.heatmap(study.operative[key].rename("Operative temperature"), ax=ax,
                      vmin=lo, vmax=hi, title=study.options[key].label)
        ax.title.set_color(colors[key])
    figs["heatmap_operative.png"] = fig

    named = study.operative.rename(columns=dict(zip(study.options, _labels(study),
                                                    strict=True)))
    fig, ax = plots.duration_curve(named, unit="°C", label="Operative temperature [°C]",
                                   colors=named_colors,
                                   title="Operative temperature duration curves (all hours "
                                         "of the period)")
    for th, style in ((25.0, ":"), (26.0, "--"), (28.0, "-.")):
        ax.axhline(th, color="#777777", linewidth=0.9, linestyle=style, label=f"{th:g} °C")
    ax.set_xlim(0, min(len(study.operative), 3000))
    ax.legend(frameon=False, fontsize=8, loc="upper left", bbox_to_anchor=(1.01, 1.0))
    figs["duration_curves.png"] = fig

    fig, axes = plt.subplots(1, len(pair), figsize=(7.0 * len(pair), 5.5), layout="constrained",
                             squeeze=False, sharex=True, sharey=True)
    init = "periodic" if study.full_year else "first_day"
    for ax, key in zip(axes[0], pair, strict=True):
        plots.adaptive_scatter(study.operative[key], study.weather["temp_air"], category="II",
                               occupied=study.occupied, ax=ax, init=init,
                               title=f"{study.options[key].label}: EN 16798-1, occupied hours")
        ax.title.set_color(colors[key])
    # paired panels on one range: the union of what each call chose
    xs = [a.get_xlim() for a in axes[0]]
    ys = [a.get_ylim() for a in axes[0]]
    for ax in axes[0]:
        ax.set_xlim(min(x[0] for x in xs), max(x[1] for x in xs))
        ax.set_ylim(min(y[0] for y in ys), max(y[1] for y in ys))
        ax.yaxis.set_tick_params(labelleft=True)
    figs["adaptive_scatter.png"] = fig
    return figs


def _pair(study) -> list:
    """The baseline and the option with the fewest hours above 26 °C (baseline if alone)."""
    best = _best_option(study)
    return ["baseline"] if best == "baseline" else ["baseline", best]


def _alt_texts(study) -> dict:
    """File name -> alternative text: what the figure shows, with its main numbers."""
    s = study.summary
    pair = _pair(study)
    names = ", ".join(study.options[k].label for k in study.options)
    base = s.loc["baseline"]
    best = study.options[pair[-1]].label
    bal = study.balance_summer.loc["baseline"]
    top_paths = bal.drop(["storage", "residual"], errors="ignore").abs().sort_values(
        ascending=False).index[:3]
    paths = "; ".join(f"{label(p, unit=False)} {_kwh(bal[p])}" for p in top_paths)
    m = study.balance_monthly
    heat = m["heating"] if "heating" in m.columns else pd.Series(0.0, index=m.index)
    return {
        "balance_summer_by_option.png":
            f"Stacked bars of the room's June–August energy balance by heat path for each "
            f"option ({names}); gains above zero, losses below. Baseline's largest paths: "
            f"{paths or 'none (the period has no June–August step)'}.",
        "balance_annual_by_option.png":
            f"Stacked bars of the room's energy balance over the whole simulated period by "
            f"heat path for each option; baseline heating {_kwh(float(base['heating_kwh']))}.",
        "balance_monthly_baseline.png":
            f"Stacked bars of the baseline room balance per month; heating is largest in "
            f"{m.index[int(np.argmax(heat.to_numpy()))]:%B} "
            f"({_kwh(float(heat.max()))}).",
        "option_comparison.png":
            f"Four bar charts, one bar per option: hours above 26 °C (baseline "
            f"{_fmt(base['hours_above_26_h'])} h), occupied hours above the EN 16798-1 "
            f"category II limit (baseline {_fmt(base['adaptive_ii_hours_above_h'])} h), "
            f"heating per floor area (baseline {_fmt(base['heating_kwh_m2'], 1)} kWh/m²) and "
            f"sun through the windows in June–August (baseline "
            f"{_fmt(base['solar_windows_summer_kwh'])} kWh).",
        "temperatures_hot_week.png":
            "Lines of the operative temperature of every option over the warmest week of the "
            "period, with the outdoor air in grey and the EN 16798-1 category II band shaded "
            "green.",
        "heatmap_operative.png":
            "Day-by-hour colour maps of the operative temperature of the baseline"
            + (f" and of {best}" if len(pair) > 1 else "")
            + f" on one colour scale; the baseline peaks at "
            f"{_fmt(base['max_operative_c'], 1)} °C.",
        "duration_curves.png":
            "Duration curves of the operative temperature, one line per option, with dotted, "
            "dashed and dash-dotted lines at 25, 26 and 28 °C.",
        "adaptive_scatter.png":
            "Scatter of occupied-hour operative temperatures against the running mean outdoor "
            "temperature with the EN 16798-1 limits, for the baseline"
            + (f" (left) and {best} (right), on the same axes ranges." if len(pair) > 1
               else "."),
    }


def _png(fig) -> bytes:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=_DPI)
    return buf.getvalue()


# --------------------------------------------------------------------------- narrative
def _kwh(v: float) -> str:
    return f"{v:+,.0f}".replace("-", "\u2212") + " kWh"


def path_change_sentences(study, period: str = "summer", n: int = 2) -> dict:
    """One plain-language sentence per option: which heat paths moved most vs the baseline.

    Parameters
    ----------
    study : SunnyRoomStudy
    period : {"summer", "annual"}
    n : int, default 2
        Paths named per option.

    Returns
    -------
    dict of str to str
        Option key -> sentence (baseline left out). Values are "baseline → option" [kWh],
        + into the room, − out of it. When no path moves by more than 5 % of the baseline's
        gains over the period, the sentence says so and gives the mean daily swing of the
        operative temperature in June–August instead, where an option such as added mass
        acts (it changes when heat arrives, not how much).
    """
    main = study.main_changes(period, n)
    tab = study.balance_summer if period == "summer" else study.balance_annual
    base = tab.loc["baseline"].drop(["storage", "residual"], errors="ignore")
    gains = float(base[base > 0].sum())
    out = {}
    empty = not (tab.drop(columns=["residual"], errors="ignore") != 0).any().any()
    for key in study.options:
        if key == "baseline":
            continue
        if empty:
            out[key] = ("no step of the simulated period falls in June–August" if
                        period == "summer" else "nothing was simulated")
            continue
        rows = main[main["option"] == key]
        parts = [f"{label(r.path, unit=False).lower()} {_kwh(r.baseline_kwh)} → "
                 f"{_kwh(r.option_kwh)}" for r in rows.itertuples()]
        text = "; ".join(parts) if parts else "no path changed"
        biggest = float(rows["change_kwh"].abs().max()) if len(rows) else 0.0
        s = study.summary
        swings = (s.loc["baseline", "daily_swing_summer_k"], s.loc[key, "daily_swing_summer_k"])
        if gains > 0 and biggest < 0.05 * gains and np.isfinite(swings).all():
            text = (f"the {period} totals hardly move ({text}); the option acts on timing: "
                    f"the mean daily swing of the operative temperature in June–August goes "
                    f"from {_fmt(s.loc['baseline', 'daily_swing_summer_k'], 1)} to "
                    f"{_fmt(s.loc[key, 'daily_swing_summer_k'], 1)} K")
        out[key] = text
    return out


# ---------------------------------------------------------------------------------- html
_CSS = """
body{font-family:system-ui,-apple-system,'Segoe UI',sans-serif;margin:0;color:#222;
background:#fafafa;line-height:1.45}
main{max-width:1100px;margin:0 auto;padding:1.5em 2em 3em;background:#fff}
h1{font-size:1.6em;margin-bottom:.2em}h2{border-bottom:2px solid #0072B2;padding-bottom:.15em;
margin-top:1.8em}
.caution{border-left:6px solid #D55E00;background:#fff4ec;padding:.7em 1em;margin:1em 0}
.note{color:#555;font-size:.92em}
table{border-collapse:collapse;font-size:.86em;margin:.6em 0}
th,td{border:1px solid #ddd;padding:.25em .5em;text-align:right}
th{background:#eef4fa}td:first-child,th:first-child{text-align:left}
td.pass{background:#e6f4ea}td.fail{background:#fde8e8}
figure{margin:1.2em 0}figure img{max-width:100%;border:1px solid #eee}
figcaption{font-size:.9em;color:#444}
.sw{display:inline-block;width:.8em;height:.8em;margin-right:.4em;vertical-align:baseline}
.tw{overflow-x:auto}table.small{font-size:.8em}td.txt,th.txt{text-align:left}
td:first-child{white-space:nowrap}
.scope{border-left:4px solid #0072B2;background:#f2f7fb;padding:.4em .8em;font-size:.92em}
code{background:#f2f2f2;padding:0 .25em}
"""


def _esc(x) -> str:
    return html.escape(str(x))


def _fmt(v, digits=0) -> str:
    if v is None or (isinstance(v, float) and not np.isfinite(v)) or v is pd.NA:
        return "–"
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, (int, np.integer)):
        return f"{int(v):,}".replace("-", "\u2212")
    return f"{float(v):,.{digits}f}".replace("-", "\u2212")


def _verdict_cell(v, short: bool = False) -> str:
    if v is None or v is pd.NA or (isinstance(v, float) and np.isnan(v)):
        return "<td>–</td>" if short else "<td>not assessed</td>"
    return '<td class="pass">pass</td>' if bool(v) else '<td class="fail">fail</td>'


#: Columns of the headline results table (labels and units from thermonet.labels.LABELS).
#: The other metrics are in summary.csv.
RESULT_COLUMNS: tuple[tuple[str, int], ...] = (
    ("hours_above_26_h", 0), ("max_operative_c", 1), ("adaptive_ii_hours_above_h", 0),
    ("heating_kwh_m2", 1), ("peak_heating_w_m2", 1), ("solar_windows_summer_kwh", 0))


def _header(name: str) -> str:
    words, unit = LABELS[name]
    return f"{_esc(words)}" + (f" [{_esc(unit)}]" if unit else "")


def _results_table(study) -> str:
    s = study.summary
    colors = option_colors(study)
    head = ("<tr><th>option</th>" + "".join(f"<th>{_header(c)}</th>" for c, _ in RESULT_COLUMNS)
            + "<th>EN 16798-1 cat. II (indication)</th><th>CIBSE TM52</th>"
            "<th>CIBSE TM59 living</th><th>cost and hassle 1–5 (invented)</th></tr>")
    rows = []
    for key, r in s.iterrows():
        swatch = (f"<span class='sw' style='background:{colors[key]}'></span>")
        rows.append(
            f"<tr><td>{swatch}{_esc(r['label'])}</td>"
            + "".join(f"<td>{_fmt(r[c], d)}</td>" for c, d in RESULT_COLUMNS)
            + f"{_verdict_cell(r['adaptive_ii_ok'], short=True)}"
            f"{_verdict_cell(r['tm52_ok'], short=True)}{_verdict_cell(r['tm59_ok'], short=True)}"
            f"<td>{'–' if key == 'baseline' else _fmt(int(r['cost_rank']))}</td></tr>")
    return f"<div class='tw'><table>{head}{''.join(rows)}</table></div>"


def _balance_table(tab: pd.DataFrame, study) -> str:
    """Heat paths as rows (in words), options as columns; residual last."""
    colors = option_colors(study)
    paths = [c for c in tab.columns if c != "residual" and (tab[c] != 0).any()]
    head = "<tr><th>heat path [kWh]</th>" + "".join(
        f"<th><span class='sw' style='background:{colors[k]}'></span>"
        f"{_esc(study.options[k].label)}</th>" for k in tab.index) + "</tr>"
    body = "".join(
        f"<tr><td class='txt'>{_esc(label(p, unit=False))}</td>"
        + "".join(f"<td>{_fmt(tab.loc[k, p])}</td>" for k in tab.index) + "</tr>"
        for p in paths)
    body += ("<tr><td class='txt'>Residual (rounding)</td>"
             + "".join(f"<td>{tab.loc[k, 'residual']:.1e}</td>" for k in tab.index) + "</tr>")
    return f"<div class='tw'><table>{head}{body}</table></div>"


def _inputs_table(study) -> str:
    t = study.inputs
    if t is None or t.empty:
        return "<p>(no inputs recorded)</p>"
    head = ("<tr><th>group</th><th class='txt'>item</th><th>value</th><th class='txt'>unit</th>"
            "<th class='txt'>note</th></tr>")
    rows = []
    for r in t.itertuples():
        digits = 3 if r.unit in ("W/(m²K)", "1/h") else 1
        rows.append(f"<tr><td>{_esc(r.group)}</td><td class='txt'>{_esc(r.item)}</td>"
                    f"<td>{_fmt(r.value, digits)}</td><td class='txt'>{_esc(r.unit)}</td>"
                    f"<td class='txt'>{_esc(r.note)}</td></tr>")
    return f"<table>{head}{''.join(rows)}</table>"


def _shown(value, limit, unit):
    """Value, limit and unit as shown: shares [–] as percent."""
    if unit == "–":
        return (None if value is None else 100.0 * value), 100.0 * limit, "%"
    return value, limit, unit


def _verdict_cell_value(value, unit, passed) -> str:
    digits = 0 if unit == "criteria failed" else 1
    text = "–" if value is None or not np.isfinite(value) else \
        f"{_fmt(value, digits)}{' ' + _esc(unit) if unit else ''}"
    if passed is None or passed is pd.NA or (isinstance(passed, float) and np.isnan(passed)):
        return f"<td>{text}<br><span class='note'>not assessed</span></td>"
    ok = bool(passed)
    return f"<td class='{'pass' if ok else 'fail'}'>{text}<br>{'pass' if ok else 'fail'}</td>"


def _verdict_sets(study) -> str:
    """One table per criterion set (options × criteria), its scope note and its sources."""
    v = study.verdicts
    out = []
    for cset, (title, scope) in CRITERION_SETS.items():
        part = v[v["criterion_set"] == cset]
        head = f"<h3>{_esc(title)}</h3><p class='scope'><strong>Scope.</strong> {_esc(scope)}</p>"
        if part.empty:
            out.append(head + "<p>Not assessed for this period: the criteria need a whole "
                       "year (run without <code>--hours</code>).</p>")
            continue
        names = list(dict.fromkeys(part["criterion"]))
        cols = []
        for name in names:
            r = part[part["criterion"] == name].iloc[0]
            _, lim, unit = _shown(r.value, r.limit, r.unit)
            limit = "" if not np.isfinite(lim) else f" (pass: ≤ {_fmt(lim, 1)} {_esc(unit)})"
            cols.append(f"<th>{_esc(name)}{limit}</th>")
        rows = []
        for key in study.options:
            cells = []
            for name in names:
                hit = part[(part["option"] == key) & (part["criterion"] == name)]
                if hit.empty:
                    cells.append("<td>–</td>")
                    continue
                r = hit.iloc[0]
                val, _, unit = _shown(r.value, r.limit, r.unit)
                cells.append(_verdict_cell_value(float(val), unit, r.passed))
            rows.append(f"<tr><td>{_esc(study.options[key].label)}</td>{''.join(cells)}</tr>")
        sources = "; ".join(_esc(x) for x in dict.fromkeys(part["source"]))
        out.append(f"{head}<div class='tw'><table><tr><th>option</th>{''.join(cols)}</tr>"
                   f"{''.join(rows)}</table></div><p class='note'>Sources: {sources}.</p>")
    return "".join(out)


def _conclusion(study) -> str:
    s = study.summary
    if not study.full_year:
        return ("<p>This was a short run (the first "
                f"{len(study.weather)} h of the year): the annual and summer verdicts are not "
                "meaningful. Run <code>thermonet demo</code> without <code>--hours</code> for "
                "the full study.</p>")
    passes = s["tm52_ok"].astype(bool) & s["adaptive_ii_ok"].astype("boolean").fillna(False)
    ok = s[passes.to_numpy(dtype=bool)].drop(index="baseline", errors="ignore")
    base = s.loc["baseline"]
    lines = [f"<p>The baseline's operative temperature exceeds 26 °C for "
             f"{_fmt(base['hours_above_26_h'])} h of the period. In the occupied hours it "
             f"{'passes' if bool(base['tm52_ok']) else 'fails'} CIBSE TM52 (category II), and "
             f"{_fmt(base['adaptive_ii_hours_above_h'])} h lie above the EN 16798-1 category "
             f"II upper limit.</p>"]
    if len(ok):
        cheapest = ok.sort_values(["cost_rank", "hours_above_26_h"]).index[0]
        r = s.loc[cheapest]
        which = (f"Of the options that pass both CIBSE TM52 and the EN 16798-1 indication "
                 f"({', '.join(_esc(x) for x in ok['label'])}), "
                 f"<strong>{_esc(r['label'])}</strong> has the lowest (invented) cost and hassle "
                 "rank" if len(ok) > 1 else
                 f"Only <strong>{_esc(r['label'])}</strong> passes both CIBSE TM52 and the "
                 "EN 16798-1 indication")
        lines.append(
            f"<p>{which}: {_fmt(r['hours_above_26_h'])} h above 26 °C; heating "
            f"{_fmt(r['heating_kwh_m2'], 1)} kWh/m² against "
            f"{_fmt(base['heating_kwh_m2'], 1)} kWh/m² for the baseline.</p>")
    else:
        best = _best_option(study)
        lines.append(f"<p>No single option passes both CIBSE TM52 and the EN 16798-1 "
                     f"indication; the one with the fewest hours above 26 °C is "
                     f"<strong>{_esc(study.options[best].label)}</strong>. Try combinations "
                     "(see the notebook <code>01_sunny_room_study.ipynb</code>).</p>")
    return "".join(lines)


def _html(study, images: dict) -> str:
    w = study.weather
    site = w.attrs.get("site", {})
    first, last = w.index[0], w.index[-1]
    moved_s = path_change_sentences(study, "summer")
    moved_a = path_change_sentences(study, "annual")
    colors = option_colors(study)
    alts = _alt_texts(study)
    opts = "".join(
        f"<li><span class='sw' style='background:{colors[k]}'></span>"
        f"<strong>{_esc(o.label)}</strong>: {_esc(o.description)}"
        + (f" <span class='note'>Cost and hassle {o.cost_rank}/5 (invented): "
           f"{_esc(o.cost_note)}.</span>" if k != "baseline" else "") + "</li>"
        for k, o in study.options.items())
    moved = "".join(
        f"<li><strong>{_esc(study.options[k].label)}</strong> — June–August: {_esc(moved_s[k])}."
        f" Whole period: {_esc(moved_a[k])}.</li>" for k in moved_s)
    figures = "".join(
        f"<figure><img alt='{_esc(alts[name])}' src='data:image/png;base64,{images[name]}'>"
        f"<figcaption>{_esc(cap)} <span class='note'>({_esc(name)})</span></figcaption>"
        "</figure>" for name, cap in FIGURES.items())
    files = "".join(f"<li><code>{_esc(n)}</code> — {_esc(d)}</li>" for n, d in CSV_FILES.items())
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>thermonet demo — will the sunny room overheat?</title>
<style>{_CSS}</style></head>
<body><main>
<h1>Will the sunny room overheat — and what fixes it?</h1>
<p class="note">thermonet {_esc(__version__)} · demo study of the {_esc(_building())}</p>
<div class="caution"><strong>Cautions.</strong> {_esc(CAUTION)} {_esc(INVENTED_NOTE)}</div>

<h2>What was simulated</h2>
<p>A lumped-RC thermal network of the room, its walls, roof, floor and partitions, the unheated
common stair next to it (a buffer space) and the neighbouring flats, run hour by hour
({len(w):,} steps of 1 h, {_esc(first)} … {_esc(last)}, hour-ending labels) on the
<strong>invented</strong> sample weather of {_esc(site.get("name", "the site"))}
(latitude {_esc(site.get("latitude", "?"))}°, longitude {_esc(site.get("longitude", "?"))}°),
after a 14-day warm-up. Heating by a thermostat at 20 °C from October to April; no heating
from May to September and no cooling, so the room runs free in summer. Occupants open a
window in the daytime when the room is above 25 °C and warmer than outdoors.</p>
<p>Window airflow: the flow through an open window is not fixed; it follows the
single-sided ventilation correlation of de Gids &amp; Phaff (1982) from the indoor–outdoor
temperature difference (stack) and the wind speed, and is re-evaluated every step. The
engine keeps a reference conductance in its exact step and solves the correlation's
departure from it together with the thermostat, predicting from the start of the hour and
correcting at the hour's mean temperatures. Checked against a fine solution of the same
model: within 0.1 K with 15-minute steps; with the hourly steps of this report, typically
within 0.02 K and up to about 0.5 K in single hours when the outdoor air changes by some
10 K within the hour (thunderstorms).</p>
<p>Comfort is judged on the operative temperature (mean of air and area-weighted surface
temperature). Hours above a fixed temperature count every hour of the period; the EN 16798-1,
TM52 and TM59 criteria count the occupied hours 09:00–22:00.</p>
<p>Options compared (each one change against the baseline; the colour is the option's colour
in every figure):</p><ul>{opts}</ul>

<h2>Results per option</h2>
{_results_table(study)}
<p class="note">Verdicts: EN 16798-1 category II with the indicative 5 % of occupied hours;
CIBSE TM52 category II (fails when two or more of its three criteria fail); CIBSE TM59 living
room, natural ventilation, criterion (a). "–": not assessed, the simulated period does not
allow the criterion (e.g. a short winter run). More metrics per option are in
<code>summary.csv</code>. Each criterion set and its scope is listed under
"Criteria" below.</p>
{_conclusion(study)}

<h2>Which heat path moved</h2>
<p>Energy balance of the room (air, surfaces and its own walls, roof and floor) by heat path,
baseline → option, + into the room, − out of it. The balance closes: the residual row of
the tables is rounding noise.</p>
<ul>{moved}</ul>
<h3>June–August [kWh]</h3>
{_balance_table(study.balance_summer, study)}
<h3>Whole simulated period [kWh]</h3>
{_balance_table(study.balance_annual, study)}
<p class="note">"Walls and roof" is the net heat the opaque envelope exchanges with outdoor air,
sky and sun (the builders book the sun absorbed on the outer faces under this path, so
<code>res.balance(room.nodes)</code> gives the same numbers); "Sun through the windows" is the
transmitted solar gain; "Released from storage" is heat given back by the room's fabric
(− = stored).</p>

<h2>Figures</h2>
{figures}

<h2 id="criteria">Criteria</h2>
<p>Several published criterion sets, each judged on its own with its scope. None of them is a
code-compliance calculation.</p>
{_verdict_sets(study)}

<h2>Inputs and assumptions (baseline)</h2>
<p>As built by <code>thermonet.scenarios.sunny_room.build_sunny_room</code>; all values are
INVENTED for the demo. The options change only what their description says.</p>
{_inputs_table(study)}

<h2>Sources</h2>
<p>Published methods and the confidence of each value (confirmed or from memory) are listed in
<code>docs/references.md</code> of the thermonet repository.</p>

<h2>Files in this folder</h2>
<ul>{files}<li>PNG figures: {", ".join(f"<code>{_esc(n)}</code>" for n in FIGURES)}</li></ul>

<div class="caution">{_esc(CAUTION)} {_esc(INVENTED_NOTE)}</div>
</main></body></html>
"""


def _building() -> str:
    return BUILDING


# --------------------------------------------------------------------------------- write
def check_folder(out) -> Path:
    """The report folder as a Path; raises NotADirectoryError if it exists as a file.

    Parameters
    ----------
    out : str or os.PathLike
        The report folder.
    """
    folder = Path(out)
    if folder.exists() and not folder.is_dir():
        raise NotADirectoryError(f"report folder {str(folder)!r} exists and is a file; pass "
                                 "another folder (--out DIR)")
    return folder


def write_report(study, out, progress=None) -> Path:
    """Write the report folder of a study.

    Parameters
    ----------
    study : SunnyRoomStudy
        From :func:`thermonet.scenarios.sunny_room.run_study`.
    out : str or pathlib.Path
        Folder, created if missing (with parents); the files of :data:`REPORT_FILES` are
        overwritten, other files are left alone.
    progress : callable, optional
        Receives one message per stage.

    Returns
    -------
    pathlib.Path
        Path of ``index.html``.

    Raises
    ------
    NotADirectoryError
        ``out`` exists and is not a folder.
    """
    say = progress if callable(progress) else (lambda msg: None)
    folder = check_folder(out)
    folder.mkdir(parents=True, exist_ok=True)
    say(f"writing tables to {folder}")
    _write_csvs(study, folder)
    say("drawing figures")
    images = {}
    figs = _figures(study)
    try:
        for name, fig in figs.items():
            data = _png(fig)
            (folder / name).write_bytes(data)
            images[name] = base64.b64encode(data).decode("ascii")
    finally:
        for fig in figs.values():
            plt.close(fig)
    index = folder / "index.html"
    index.write_text(_html(study, images), encoding="utf-8")
    return index
