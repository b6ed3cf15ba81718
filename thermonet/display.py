"""HTML and text views of thermonet objects for notebooks.

Jupyter shows an object by calling its ``_repr_html_`` method; the classes of thermonet
(:class:`~thermonet.network.Network`, :class:`~thermonet.constructions.Construction`,
:class:`~thermonet.constructions.DynamicCharacteristics`, the comfort results) delegate to the
functions here, which build plain HTML tables from what the objects hold. The functions read
attributes only (no import of the classes), so they can be called on their own:
``IPython.display.HTML(network_html(net))``.

Units follow the glossary: capacitance [J/K] shown in MJ/K, conductance [W/K], areas [m²],
thicknesses in mm, U-values and admittances [W/(m²K)], time shifts [h].
"""

from __future__ import annotations

import html
import math

import numpy as np
import pandas as pd

__all__ = ["construction_html", "criteria_html", "dynamic_characteristics_html",
           "dynamic_characteristics_text", "network_html", "network_tables", "results_html",
           "table_html"]

#: J per MJ (definition of the mega prefix).
J_PER_MJ = 1.0e6

_STYLE = ("<style>.tn-view table{border-collapse:collapse;margin:.3em 0 .6em}"
          ".tn-view th,.tn-view td{border:1px solid #ddd;padding:.15em .5em;text-align:right}"
          ".tn-view td:first-child,.tn-view th:first-child{text-align:left}"
          ".tn-view th{background:#eef4fa}.tn-view .pass{background:#e6f4ea}"
          ".tn-view .fail{background:#fde8e8}</style>")


def _esc(x) -> str:
    return html.escape(str(x))


def _num(v, digits: int = 3) -> str:
    if v is None or v is pd.NA:
        return "–"
    if isinstance(v, (bool, np.bool_)):
        return "yes" if v else "no"
    if isinstance(v, (int, np.integer)):
        return f"{int(v):,}"
    try:
        x = float(v)
    except (TypeError, ValueError):
        return _esc(v)
    if not math.isfinite(x):
        return "–"
    if x == 0.0:
        return "0"
    if abs(x) >= 1e6 or abs(x) < 10.0 ** -digits:
        return f"{x:.{digits}g}"
    text = f"{x:,.{digits}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def table_html(df: pd.DataFrame, *, digits: int = 3, index: bool = True) -> str:
    """A DataFrame as a small HTML table with readable numbers.

    Parameters
    ----------
    df : pandas.DataFrame
        The table; column names are shown as given (put the unit in them).
    digits : int, default 3
        Decimals of floats (trailing zeros dropped).
    index : bool, default True
        Show the index as the first column.

    Returns
    -------
    str
        An HTML ``<table>``.
    """
    cols = list(df.columns)
    head = ("<tr>" + (f"<th>{_esc(df.index.name or '')}</th>" if index else "")
            + "".join(f"<th>{_esc(c)}</th>" for c in cols) + "</tr>")
    rows = []
    for key, r in df.iterrows():
        cells = "".join(f"<td>{_num(r[c], digits)}</td>" for c in cols)
        rows.append("<tr>" + (f"<td>{_esc(key)}</td>" if index else "") + cells + "</tr>")
    return f"<table>{head}{''.join(rows)}</table>"


def _mean(value) -> float:
    return float(np.mean(np.asarray(value, dtype=float)))


def network_tables(net) -> dict:
    """The tables of :func:`network_html`: nodes by kind, links by path, sources by path.

    Parameters
    ----------
    net : thermonet.Network
        The network to summarise.

    Returns
    -------
    dict of str to pandas.DataFrame
        ``"nodes"``: count and total capacitance [MJ/K] per node kind; ``"boundaries"``:
        count per kind; ``"links"``: count and total conductance UA [W/K] (mean over time when
        scheduled) per path and link kind; ``"sources"``: count and mean total power [W] per
        path. A network with parameters (:mod:`thermonet.parameters`) is shown at their
        defaults.
    """
    if getattr(net, "parameters", None):
        net = net.with_values()
    nodes = pd.DataFrame([dict(kind=n.kind, C=n.capacitance) for n in net.nodes.values()],
                         columns=["kind", "C"])
    t_nodes = nodes.groupby("kind").agg(count=("C", "size"), C=("C", "sum"))
    t_nodes["total capacitance [MJ/K]"] = t_nodes.pop("C") / J_PER_MJ
    bounds = pd.DataFrame([dict(kind=b.kind) for b in net.boundaries.values()],
                          columns=["kind"])
    t_bounds = bounds.groupby("kind").size().rename("count").to_frame()
    links = pd.DataFrame([dict(path=ln.path, kind=ln.kind, G=_mean(ln.conductance))
                          for ln in net.links.values()], columns=["path", "kind", "G"])
    t_links = links.groupby(["path", "kind"]).agg(count=("G", "size"),
                                                  UA=("G", "sum"))
    t_links = t_links.rename(columns={"UA": "total conductance UA [W/K]"})
    srcs = pd.DataFrame([dict(path=s.path, P=_mean(s.power)) for s in net.sources.values()],
                        columns=["path", "P"])
    t_src = srcs.groupby("path").agg(count=("P", "size"), P=("P", "sum"))
    t_src = t_src.rename(columns={"P": "mean power [W]"})
    for t, unit in ((t_nodes, {"total capacitance [MJ/K]": "MJ/K"}),
                    (t_links, {"total conductance UA [W/K]": "W/K"}),
                    (t_src, {"mean power [W]": "W"})):
        t.attrs["units"] = unit
    return {"nodes": t_nodes, "boundaries": t_bounds, "links": t_links, "sources": t_src}


def _count(items, noun: str) -> str:
    n = len(items)
    plural = {"boundary": "boundaries", "switch": "switches"}.get(noun, noun + "s")
    return f"{n} {noun if n == 1 else plural}"


def network_html(net) -> str:
    """A network at a glance: nodes by kind, links by path, totals of C and UA.

    Parameters
    ----------
    net : thermonet.Network
        The network to show.

    Returns
    -------
    str
        HTML: a title line with the counts, then the tables of :func:`network_tables`. The
        total UA is the sum of all link conductances by path — for the links that cross the
        envelope it is the heat loss coefficient of that path (W per K of temperature
        difference), for links inside a zone it is only a size indicator.
    """
    t = network_tables(net)
    total_c = float(t["nodes"]["total capacitance [MJ/K]"].sum())
    head = (f"<strong>Network {_esc(net.name)}</strong>: {_count(net.nodes, 'node')} "
            f"(C = {_num(total_c)} MJ/K in total), {_count(net.boundaries, 'boundary')}, "
            f"{_count(net.links, 'link')}, {_count(net.sources, 'source')}, "
            f"{_count(net.thermostats, 'thermostat')}, {_count(net.switches, 'switch')}")
    parts = [f"<p>{head}</p>"]
    for key, title in (("nodes", "Nodes by kind"), ("boundaries", "Boundaries by kind"),
                       ("links", "Links by path"), ("sources", "Sources by path")):
        tab = t[key]
        if len(tab):
            if isinstance(tab.index, pd.MultiIndex):
                tab = tab.reset_index().set_index("path")
            parts.append(f"<p><em>{title}</em></p>{table_html(tab)}")
    return f"<div class='tn-view'>{_STYLE}{''.join(parts)}</div>"


def construction_html(construction) -> str:
    """A construction's layers with U-value, decrement factor and time shift.

    Parameters
    ----------
    construction : thermonet.constructions.Construction
        The construction (layers from the inside to the outside).

    Returns
    -------
    str
        HTML: one row per layer (thickness [mm], λ [W/(mK)], ρ [kg/m³], c [J/(kgK)],
        R [m²K/W], κ = ρcd [kJ/(m²K)]), then U (ISO 6946, wall: heat flow horizontal)
        [W/(m²K)], decrement factor f [–], time shift [h] and internal areal heat capacity
        κ1 [kJ/(m²K)] (ISO 13786, 24 h).
    """
    rows = []
    for layer in construction.layers:
        m = layer.material
        rows.append({
            "layer (inside → outside)": layer.name,
            "d [mm]": layer.thickness * 1000.0,
            "λ [W/(mK)]": m.conductivity if m is not None else np.nan,
            "ρ [kg/m³]": m.density if m is not None else np.nan,
            "c [J/(kgK)]": m.specific_heat if m is not None else np.nan,
            "R [m²K/W]": layer.thermal_resistance,
            "κ [kJ/(m²K)]": (m.density * m.specific_heat * layer.thickness / 1000.0
                             if m is not None else 0.0),
        })
    layers = pd.DataFrame(rows).set_index("layer (inside → outside)")
    d = construction.dynamic_characteristics()
    head = (f"<p><strong>Construction {_esc(construction.name)}</strong>: "
            f"{_num(construction.thickness * 1000.0, 1)} mm, U = {_num(d.u_value)} W/(m²K), "
            f"decrement factor f = {_num(d.decrement_factor)}, time shift "
            f"{_num(d.time_shift, 1)} h, κ1 = {_num(d.kappa1 / 1000.0, 1)} kJ/(m²K) "
            "(ISO 6946 / ISO 13786, 24 h, heat flow horizontal)</p>")
    return f"<div class='tn-view'>{_STYLE}{head}{table_html(layers)}</div>"


def _dc_rows(d) -> list[tuple[str, float, str]]:
    return [
        ("period", d.period / 3600.0, "h"),
        ("U-value", d.u_value, "W/(m²K)"),
        ("decrement factor f = |Y12|/U", d.decrement_factor, "–"),
        ("time shift of the heat flow through", d.time_shift, "h"),
        ("periodic transmittance |Y12|", d.y12_magnitude, "W/(m²K)"),
        ("internal admittance |Y11|", d.y11_magnitude, "W/(m²K)"),
        ("time shift of Y11", d.y11_time_shift, "h"),
        ("external admittance |Y22|", d.y22_magnitude, "W/(m²K)"),
        ("time shift of Y22", d.y22_time_shift, "h"),
        ("internal areal heat capacity κ1", d.kappa1 / 1000.0, "kJ/(m²K)"),
        ("external areal heat capacity κ2", d.kappa2 / 1000.0, "kJ/(m²K)"),
        ("surface resistances Rsi, Rse", f"{d.rsi:g}, {d.rse:g}", "m²K/W"),
    ]


def dynamic_characteristics_text(d) -> str:
    """ISO 13786 characteristics as aligned text lines (for ``print`` and ``str``).

    Parameters
    ----------
    d : thermonet.constructions.DynamicCharacteristics
        The characteristics to show.

    Returns
    -------
    str
        One quantity per line with its unit.
    """
    rows = _dc_rows(d)
    width = max(len(r[0]) for r in rows)
    lines = ["ISO 13786 dynamic thermal characteristics (per m²)"]
    for name, value, unit in rows:
        v = value if isinstance(value, str) else _num(value, 3)
        lines.append(f"  {name:<{width}}  {v:>10} {unit}")
    return "\n".join(lines)


def dynamic_characteristics_html(d) -> str:
    """ISO 13786 characteristics as an HTML table.

    Parameters
    ----------
    d : thermonet.constructions.DynamicCharacteristics
        The characteristics to show.

    Returns
    -------
    str
        HTML table: quantity, value, unit.
    """
    df = pd.DataFrame([dict(quantity=n, value=v, unit=u) for n, v, u in _dc_rows(d)]
                      ).set_index("quantity")
    return (f"<div class='tn-view'>{_STYLE}<p><strong>ISO 13786 dynamic thermal "
            f"characteristics</strong> (per m²)</p>{table_html(df)}</div>")


def criteria_html(title: str, criteria, *, passed=None, note: str = "") -> str:
    """Pass/fail criteria (objects with name, value, limit, unit, passed, source) as HTML.

    Parameters
    ----------
    title : str
        Heading line, e.g. "CIBSE TM52, category II".
    criteria : sequence of CriterionResult
        The criteria to list.
    passed : bool, optional
        Overall verdict shown in the heading.
    note : str, optional
        A line under the table (scope, counts).

    Returns
    -------
    str
        HTML table: criterion, value, limit, unit, verdict, source.
    """
    rows = []
    for c in criteria:
        ok = "pass" if c.passed else "fail"
        rows.append(f"<tr><td>{_esc(c.name)}</td><td>{_num(c.value)}</td>"
                    f"<td>{_num(c.limit)}</td><td>{_esc(c.unit)}</td>"
                    f"<td class='{ok}'>{ok}</td><td>{_esc(c.source)}</td></tr>")
    verdict = "" if passed is None else (" — <strong>passes</strong>" if passed
                                         else " — <strong>fails</strong>")
    head = ("<tr><th>criterion</th><th>value</th><th>limit</th><th>unit</th><th>verdict</th>"
            "<th>source</th></tr>")
    tail = f"<p>{_esc(note)}</p>" if note else ""
    return (f"<div class='tn-view'>{_STYLE}<p><strong>{_esc(title)}</strong>{verdict}</p>"
            f"<table>{head}{''.join(rows)}</table>{tail}</div>")


def results_html(res) -> str:
    """A simulation result: how it ran, and its heating and cooling summary.

    Parameters
    ----------
    res : thermonet.Results
        What :func:`thermonet.simulate` returned.

    Returns
    -------
    str
        HTML: method, steps and step length, time, then the table of ``res.summary()``
        (energies [kWh], peaks [W]) and the period covered.
    """
    info = res.info
    idx = res.index
    s = res.summary()
    units = {"heating_kwh": "kWh", "cooling_kwh": "kWh", "peak_heating_w": "W",
             "peak_cooling_w": "W"}
    names = {"heating_kwh": "heating energy", "cooling_kwh": "cooling energy",
             "peak_heating_w": "peak heating power (step mean)",
             "peak_cooling_w": "peak cooling power (step mean)"}
    df = pd.DataFrame([dict(quantity=names.get(k, k), value=float(v), unit=units.get(k, ""))
                       for k, v in s.items()]).set_index("quantity")
    head = (f"<p><strong>Results</strong>: method {_esc(info.get('method'))}, "
            f"{_num(info.get('steps'))} steps of {_num(info.get('step_s', 0) / 3600.0)} h "
            f"({_esc(idx[0])} … {_esc(idx[-1])}, hour-ending labels), "
            f"{_num(info.get('seconds', float('nan')), 2)} s</p>")
    return f"<div class='tn-view'>{_STYLE}{head}{table_html(df)}</div>"
