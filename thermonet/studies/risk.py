"""Overheating risk under uncertainty: how likely each design option is to fail a criterion.

A design is judged on one simulated year with one set of assumptions. The occupants' gains,
how they use blinds and windows, the airtightness reached on site, the g-value delivered
and the summers to come are not known. :func:`overheating_risk` treats them as uncertain
inputs with distributions, samples them, runs every (design option × sample) and reports per
option the **probability of failing** each criterion with a confidence interval, and which
uncertain inputs drive the failures::

    from scipy import stats
    risk = overheating_risk(
        build, options={"as designed": {"g_value": 0.6}, "solar glass": {"g_value": 0.35}},
        uncertain={"gains_w": (100.0, 400.0),                 # uniform [W]
                   "n50": stats.lognorm(s=0.3, scale=3.0)},  # any frozen scipy distribution
        weather=weather, temperature="living", occupied=("09:00", "22:00"),
        warming=(0.0, 2.0), n_samples=128, seed=1)
    print(risk.summary()); risk.plot()

How it works
------------
1. **Sampling** (:func:`sample_inputs`): a Latin hypercube [1]_ (default), a scrambled
   Sobol' sequence [2]_ [3]_ or plain random numbers on the unit cube,
   ``scipy.stats.qmc``, seeded; each column is mapped to its distribution by the inverse
   CDF (``ppf``). The same samples are used for every option (common random numbers), so the
   options are compared on the same futures and their difference is estimated more
   precisely than each risk alone.
2. **Runs**: one row per (option, sample) goes through :func:`thermonet.studies.run_variants`
   (executors, progress bar, ``out=`` folders that resume, failed runs collected). Each row
   calls ``build(**option_parameters, **sampled_inputs)``; the networks of a chunk are
   stepped together by the engine's batch path (:func:`thermonet.engine.batch.run_batch`,
   the same numbers as :func:`thermonet.simulate` one by one, tested), on the weather with
   its ``temp_air`` raised by each run's sampled warming offset, if any (runs with the same
   offset share a batch: with a sampled offset these are the options of one sample). The
   hourly traces of the chunk are kept for :class:`RiskJudge`, which evaluates every
   :class:`Criterion` on each run, and dropped after.
3. **Probability of failing** per option and criterion: the share of runs that fail, with a
   binomial confidence interval (:func:`binomial_interval`): Wilson's score interval [4]_
   (default) or the Clopper–Pearson interval [5]_.
4. **What drives the failures** (:func:`failure_drivers`): Monte Carlo filtering, also called
   regional sensitivity analysis [6]_ [7]_: the runs of an option are split into those that
   fail and those that pass, and for each uncertain input the two-sample Kolmogorov–Smirnov
   distance D between its values in the two groups is computed (0 = the input's values are
   spread alike in both groups, so it does not decide failure; 1 = the groups do not
   overlap). Spearman's rank correlation [8]_ of the input with the criterion's value gives
   the direction and strength on the continuous scale.

Why Monte Carlo filtering
-------------------------
The question is "which inputs decide pass or fail", a binary outcome. Monte Carlo filtering
answers it directly, on the very runs that estimated the probability (no extra design such
as Saltelli's, whose runs would not be a plain sample of the inputs and could not also give
the failure probability), needs no model of the outcome (a logistic regression assumes a
monotone logit-linear effect and breaks down when one input separates the groups
completely, which is common here), and handles inputs of any distribution. Its limits:
interactions show only through each input's marginal shift, and D is noisy when few runs
fail; the table gives the group sizes and the KS p-value so a reader can weigh it.

Reading the numbers (caution)
-----------------------------
These probabilities are **estimates**: conditional on the model, on the weather used and on
the input distributions that were assumed. The confidence interval covers the sampling
error of a finite number of runs only. The binomial interval assumes independent samples;
for Latin hypercube and scrambled Sobol' samples it is usually conservative (Latin hypercube
sampling does not increase the variance of a mean for outputs monotone in each input [1]_),
but not guaranteed so. Every report carries :data:`thermonet.constants.CAUTION`.

References
----------
.. [1] McKay, M. D., Beckman, R. J., Conover, W. J., "A comparison of three methods for
   selecting values of input variables in the analysis of output from a computer code",
   Technometrics 21(2), 239–245, 1979. doi:10.1080/00401706.1979.10489755
.. [2] Sobol', I. M., "On the distribution of points in a cube and the approximate
   evaluation of integrals", USSR Computational Mathematics and Mathematical Physics 7(4),
   86–112, 1967. doi:10.1016/0041-5553(67)90144-9
.. [3] Owen, A. B., "Scrambling Sobol' and Niederreiter–Xing points", Journal of
   Complexity 14(4), 466–489, 1998. doi:10.1006/jcom.1998.0487
.. [4] Wilson, E. B., "Probable inference, the law of succession, and statistical
   inference", Journal of the American Statistical Association 22(158), 209–212, 1927.
   doi:10.1080/01621459.1927.10502953
.. [5] Clopper, C. J., Pearson, E. S., "The use of confidence or fiducial limits
   illustrated in the case of the binomial", Biometrika 26(4), 404–413, 1934.
   doi:10.1093/biomet/26.4.404
.. [6] Hornberger, G. M., Spear, R. C., "An approach to the preliminary analysis of
   environmental systems", Journal of Environmental Management 12(1), 7–18, 1981.
.. [7] Saltelli, A., Ratto, M., Andres, T., Campolongo, F., Cariboni, J., Gatelli, D.,
   Saisana, M., Tarantola, S., Global Sensitivity Analysis: The Primer, Wiley, 2008,
   chapter 5 (Monte Carlo filtering) — from memory.
.. [8] Spearman, C., "The proof and measurement of association between two things",
   American Journal of Psychology 15(1), 72–101, 1904. doi:10.2307/1412159
.. [9] Newcombe, R. G., "Two-sided confidence intervals for the single proportion:
   comparison of seven methods", Statistics in Medicine 17(8), 857–872, 1998.
   doi:10.1002/(SICI)1097-0258(19980430)17:8<857::AID-SIM777>3.0.CO;2-E
"""

from __future__ import annotations

import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from thermonet import comfort
from thermonet.constants import CAUTION
from thermonet.errors import StudyError
from thermonet.studies.outputs import comfort_outputs, occupied_rows
from thermonet.studies.variants import ERROR, run_variants

__all__ = [
    "WARMING",
    "Criterion",
    "RiskResult",
    "RiskRun",
    "adaptive_criterion",
    "binomial_interval",
    "degree_hours_criterion",
    "failure_drivers",
    "hours_above_criterion",
    "overheating_risk",
    "sample_inputs",
    "tm52_criterion",
    "tm59_criterion",
]

#: Name of the sampled warming offset [K] in the sample and run tables.
WARMING = "warming_k"

#: Tolerance [unit of the criterion] of "value > limit", against floating-point noise only
#: (as :mod:`thermonet.comfort`: 3 % of 200 h computed as 6.000000000000001 h passes).
TOLERANCE = 1e-9

#: Binomial confidence intervals offered by :func:`binomial_interval` → scipy's method name.
INTERVALS = {"wilson": "wilson", "clopper-pearson": "exact"}

#: Samplers of :func:`sample_inputs`.
SAMPLERS = ("lhs", "sobol", "random")


# ============================================================================ one run
@dataclass(eq=False)
class RiskRun:
    """What a criterion sees of one run (one option, one sample).

    Attributes
    ----------
    results : thermonet.Results
        The run's results.
    handles : object
        The second item returned by ``build`` (e.g. the builder's record of the room), or
        None when ``build`` returned a network alone.
    weather : pandas.DataFrame
        The weather simulated (``temp_air`` raised by the run's warming offset).
    inputs : dict
        The build arguments of the run (option parameters and sampled inputs) and, when
        sampled, the warming offset under :data:`WARMING` [K].
    default_temperature : str or callable
        The study's ``temperature=``, used by :meth:`temperature` when a criterion names
        none.
    plan : dict
        ``{comfort key: options}`` (:func:`comfort_plan`): the options of
        :func:`~thermonet.studies.outputs.comfort_outputs` calls merged across the
        study's criteria, so that one call per judged temperature and setting serves
        them all (default: each criterion calls it with its own options).
    _cache : dict
        Internal: judged temperatures already formed by :meth:`temperature`, by spec
        (leave it to its default).
    """

    results: object
    handles: object
    weather: pd.DataFrame
    inputs: dict
    default_temperature: object = None
    plan: dict = field(default_factory=dict, repr=False)
    _cache: dict = field(default_factory=dict, repr=False)

    def temperature(self, spec=None) -> pd.Series:
        """The judged temperature [°C] of this run.

        Parameters
        ----------
        spec : str or callable, optional
            A node name (its step-mean temperature, ``Results.mean_temperatures``) or a
            function ``f(results, handles) -> Series`` (e.g. a room's operative
            temperature); default the study's ``temperature=``.

        Returns
        -------
        pandas.Series
        """
        spec = self.default_temperature if spec is None else spec
        key = spec if isinstance(spec, str) else id(spec)
        if key not in self._cache:
            self._cache[key] = temperature_of(spec, self.results, self.handles)
        return self._cache[key]

    def comfort(self, spec, options: dict) -> dict:
        """:func:`~thermonet.studies.outputs.comfort_outputs` of a judged temperature.

        Parameters
        ----------
        spec : str or callable or None
            Judged temperature (see :meth:`temperature`).
        options : dict
            Keyword arguments of ``comfort_outputs`` (``occupied`` may be a clock window);
            replaced by the merged options of :attr:`plan` when it holds them.

        Returns
        -------
        dict
            The outputs (names of the glossary, "Study outputs per variant").
        """
        spec = self.default_temperature if spec is None else spec
        ck = comfort_key(options)
        merged = self.plan.get(ck)
        if merged is None:     # not planned: this call's own thresholds are part of the key
            merged = options
            ck = (ck, tuple(tuple(options.get(k, ())) for k in MERGED_OPTIONS))
        key = (spec if isinstance(spec, str) else id(spec), ck)
        if key not in self._cache:
            t = self.temperature(spec)
            opts = dict(merged)
            opts["occupied"] = occupied_rows(opts.get("occupied"), t.index)
            self._cache[key] = comfort_outputs(t, self.weather["temp_air"], **opts)
        return self._cache[key]


#: Options of :func:`~thermonet.studies.outputs.comfort_outputs` that list thresholds: calls
#: that differ only in them are merged (each threshold's value does not depend on the others).
MERGED_OPTIONS = ("hours_above", "degree_hours_above")


def comfort_key(options: dict) -> tuple:
    """Key of a ``comfort_outputs`` call up to its threshold lists (see :data:`MERGED_OPTIONS`).

    Parameters
    ----------
    options : dict
        Keyword arguments of :func:`~thermonet.studies.outputs.comfort_outputs`.

    Returns
    -------
    tuple
        Hashable; objects other than numbers, strings and tuples (e.g. an occupancy Series)
        enter by identity.
    """
    def part(v):
        return v if isinstance(v, (str, int, float, tuple, type(None))) else ("id", id(v))

    return tuple(sorted((k, part(v)) for k, v in options.items() if k not in MERGED_OPTIONS))


def comfort_plan(criteria) -> dict:
    """Merged ``comfort_outputs`` options of the criteria that read them (:class:`ComfortValue`).

    Parameters
    ----------
    criteria : sequence of Criterion

    Returns
    -------
    dict
        ``{comfort_key(options): options}`` with the union of the thresholds of every
        criterion of that key, in the order first met.
    """
    plan: dict = {}
    for c in criteria:
        f = c.function
        if not isinstance(f, ComfortValue):
            continue
        key = comfort_key(f.options)
        merged = plan.setdefault(key, dict(f.options))
        for k in MERGED_OPTIONS:
            have = list(merged.get(k, ()))
            merged[k] = tuple(have + [x for x in f.options.get(k, ()) if x not in have])
    return plan


def temperature_of(spec, results, handles) -> pd.Series:
    """A node's step-mean temperature or ``spec(results, handles)`` [°C] (see :class:`RiskRun`).

    Parameters
    ----------
    spec : str or callable
    results : thermonet.Results
    handles : object

    Returns
    -------
    pandas.Series
    """
    if isinstance(spec, str):
        temps = results.mean_temperatures
        if spec not in temps.columns:
            raise StudyError(f"temperature={spec!r} is not a node of the network; nodes: "
                             f"{', '.join(map(str, temps.columns))}. Give a node name or a "
                             "function (results, handles) -> Series")
        return temps[spec]
    if callable(spec):
        t = spec(results, handles)
        if not isinstance(t, pd.Series):
            raise StudyError(f"temperature function {getattr(spec, '__name__', spec)!r} "
                             f"returned {type(t).__name__}; it must return a pandas Series "
                             "of temperatures [°C] on the results' index")
        return t
    raise TypeError("temperature must be a node name or a function (results, handles) -> "
                    f"Series [°C], got {type(spec).__name__}")


def finite_value(value, what: str) -> float:
    """``value`` as a finite float, or a :class:`~thermonet.errors.StudyError` naming ``what``.

    Parameters
    ----------
    value : number
    what : str

    Returns
    -------
    float
    """
    try:
        x = float(value)
    except (TypeError, ValueError):
        raise StudyError(f"{what} must be a number, got {value!r}") from None
    if not math.isfinite(x):
        raise StudyError(f"{what} is {x}; a criterion needs a finite value (does the "
                         "simulated period hold what it judges, e.g. May–September for TM52?)")
    return x


# ============================================================================ criteria
@dataclass(frozen=True)
class Criterion:
    """A pass/fail test of one run: the run **fails** when ``function(run) > limit``.

    Attributes
    ----------
    key : str
        Column name of the value in the run table (glossary names, e.g.
        ``"hours_above_26_pct"``); unique within a study.
    label : str
        The criterion in words, for the summary and the plot.
    limit : float
        Largest value that passes, in ``unit``.
    unit : str
        Unit of the value (``"h"``, ``"%"``, ``"K·h"``, ``"criteria failed"`` ...).
    function : callable
        ``function(run: RiskRun) -> float``. For a process-pool executor it must be
        picklable (a module-level function or class instance).
    source : str, optional
        Where the criterion is published, or "common practice, no source".
    """

    key: str
    label: str
    limit: float
    unit: str
    function: Callable
    source: str = ""

    def __post_init__(self):
        if not isinstance(self.key, str) or not self.key:
            raise StudyError(f"Criterion key must be a non-empty string, got {self.key!r}")
        finite_value(self.limit, f"Criterion {self.key!r}: limit")
        if not callable(self.function):
            raise TypeError(f"Criterion {self.key!r}: function must be callable (run -> "
                            f"float), got {type(self.function).__name__}")

    def evaluate(self, run: RiskRun) -> float:
        """The criterion's value for one run, a finite float [unit].

        Parameters
        ----------
        run : RiskRun
            The run to judge.

        Raises
        ------
        StudyError
            The function returned NaN/inf or a non-number (see :func:`finite_value`).
        """
        return finite_value(self.function(run), f"criterion {self.key!r}")

    def fails(self, value) -> np.ndarray:
        """Whether value(s) fail: ``value > limit`` beyond :data:`TOLERANCE`.

        Parameters
        ----------
        value : float or array_like
            Criterion value(s) [unit].

        Returns
        -------
        ndarray of bool
        """
        return np.asarray(value, dtype=float) > self.limit + TOLERANCE


@dataclass(frozen=True)
class ComfortValue:
    """One value of :func:`thermonet.studies.outputs.comfort_outputs` for a run.

    Attributes
    ----------
    column : str
        The output's name.
    options : dict
        Keyword arguments of ``comfort_outputs`` (``occupied`` may be a clock window).
    temperature : str or callable, optional
        Judged temperature (default the study's, see :meth:`RiskRun.temperature`).
    scale : float, default 1
        Factor applied to the value.
    """

    column: str
    options: dict
    temperature: object = None
    scale: float = 1.0

    def __call__(self, run: RiskRun) -> float:
        return float(run.comfort(self.temperature, self.options)[self.column]) * self.scale


@dataclass(frozen=True)
class ShareAbove:
    """Percentage of occupied hours with a temperature above a threshold [%]."""

    threshold: float
    occupied: object = None
    temperature: object = None

    def __call__(self, run: RiskRun) -> float:
        t = run.temperature(self.temperature)
        occ = occupied_rows(self.occupied, t.index)
        return 100.0 * comfort.overheating_frequency(t, self.threshold, occ)


_NO_OUTDOOR = dict(hours_above=(), degree_hours_above=(), adaptive_category=None,
                   tm52_category=None)


def hours_above_criterion(threshold: float = 26.0, *, max_hours: float | None = None,
                          max_pct: float | None = None, occupied=None,
                          temperature=None) -> Criterion:
    """Fails when the occupied hours above ``threshold`` exceed a number or a share.

    Parameters
    ----------
    threshold : float, default 26
        Temperature [°C]; an hour counts when θ > threshold.
    max_hours : float, optional
        Largest number of occupied hours above the threshold that passes [h]
        (key ``hours_above_<T>_h``).
    max_pct : float, optional
        Largest share of the occupied hours above the threshold that passes [%]
        (key ``hours_above_<T>_pct``). Give exactly one of ``max_hours`` and ``max_pct``.
    occupied : None, (start, end) or pandas.Series of bool, optional
        Occupied rows (:func:`thermonet.studies.outputs.occupied_rows`); default all.
    temperature : str or callable, optional
        Judged temperature; default the study's ``temperature=``.

    Returns
    -------
    Criterion

    Notes
    -----
    26 °C for no more than 3 % of the occupied hours is the fixed criterion CIBSE TM59
    applies to mechanically ventilated homes (see :func:`thermonet.comfort.tm59`; from
    memory) and the default of :func:`overheating_risk`.
    """
    if (max_hours is None) == (max_pct is None):
        raise StudyError("hours_above_criterion: give exactly one of max_hours [h] and "
                         f"max_pct [% of occupied hours], got max_hours={max_hours!r}, "
                         f"max_pct={max_pct!r}")
    th = finite_value(threshold, "hours_above_criterion: threshold")
    name = f"{th:g}"
    where = "occupied hours" if occupied is not None else "hours"
    if max_pct is not None:
        return Criterion(f"hours_above_{name}_pct", f"more than {max_pct:g} % of {where} "
                         f"above {name} °C", float(max_pct), "%",
                         ShareAbove(th, occupied, temperature),
                         "CIBSE TM59 (2017) fixed criterion for mechanically ventilated homes "
                         "(26 °C, 3 %), from memory" if (th, max_pct) == (26.0, 3.0)
                         else "user limit")
    opts = dict(_NO_OUTDOOR, hours_above=(th,), occupied=occupied)
    during = " in occupied hours" if occupied is not None else ""
    return Criterion(f"hours_above_{name}_h", f"more than {max_hours:g} h above {name} °C"
                     f"{during}", float(max_hours), "h",
                     ComfortValue(f"hours_above_{name}_h", opts, temperature), "user limit")


def degree_hours_criterion(threshold: float = 26.0, max_kelvin_hours: float = 0.0, *, occupied=None,
                           temperature=None) -> Criterion:
    """Fails when the occupied degree-hours above ``threshold`` exceed ``max_kelvin_hours``.

    Parameters
    ----------
    threshold : float, default 26
        Temperature [°C].
    max_kelvin_hours : float
        Largest Σ max(θ − threshold, 0)·Δt over occupied hours that passes [K·h].
    occupied, temperature
        As for :func:`hours_above_criterion`.

    Returns
    -------
    Criterion
        Key ``degree_hours_above_<T>_kelvin_hours``.
    """
    th = finite_value(threshold, "degree_hours_criterion: threshold")
    opts = dict(_NO_OUTDOOR, degree_hours_above=(th,), occupied=occupied)
    key = f"degree_hours_above_{th:g}_kelvin_hours"
    return Criterion(key, f"more than {max_kelvin_hours:g} K·h above {th:g} °C",
                     float(max_kelvin_hours), "K·h", ComfortValue(key, opts, temperature),
                     "user limit")


def adaptive_criterion(category: str = "II", max_hours: float = 0.0, *, occupied=None,
                       init="first_day", temperature=None) -> Criterion:
    """Fails when occupied hours above the EN 16798-1 adaptive upper limit exceed ``max_hours``.

    Parameters
    ----------
    category : {"I", "II", "III"}, default "II"
    max_hours : float
        Largest number of occupied hours above the category's upper limit that passes [h];
        EN 16798-1 states no pass mark, so this is the user's.
    occupied, temperature
        As for :func:`hours_above_criterion`.
    init : {"first_day", "periodic"} or float
        Running-mean history (:func:`thermonet.comfort.running_mean_outdoor`).

    Returns
    -------
    Criterion
        Key ``adaptive_<cat>_hours_above_h``.

    References
    ----------
    EN 16798-1:2019, adaptive criteria (see :func:`thermonet.comfort.adaptive_assessment`).
    """
    key = f"adaptive_{str(category).lower()}_hours_above_h"
    opts = dict(_NO_OUTDOOR, adaptive_category=category, occupied=occupied, init=init)
    return Criterion(key, f"more than {max_hours:g} h above the EN 16798-1 category "
                     f"{category} upper limit", float(max_hours), "h",
                     ComfortValue(key, opts, temperature),
                     "EN 16798-1:2019 adaptive limits; the hours allowed are the user's")


def tm52_criterion(category: str = "II", *, occupied=None, init="first_day",
                   temperature=None) -> Criterion:
    """CIBSE TM52: the run fails when two or more of the three criteria fail.

    Parameters
    ----------
    category : {"I", "II", "III"}, default "II"
    occupied, init, temperature
        As for :func:`adaptive_criterion`; TM52 judges the operative temperature, so give
        ``temperature=`` (or the study's) as the room's operative temperature.

    Returns
    -------
    Criterion
        Key ``tm52_failed_criteria`` (0–3), limit 1.

    References
    ----------
    CIBSE TM52 (2013), section 6 (see :func:`thermonet.comfort.tm52`).
    """
    opts = dict(_NO_OUTDOOR, tm52_category=category, occupied=occupied, init=init)
    return Criterion("tm52_failed_criteria", f"CIBSE TM52 category {category} (fails 2 of 3)",
                     1.0, "criteria failed",
                     ComfortValue("tm52_failed_criteria", opts, temperature),
                     "CIBSE TM52 (2013)")


def tm59_criterion(room_type: str = "living", *, ventilation: str = "natural", occupied=None,
                   init="first_day", temperature=None) -> Criterion:
    """CIBSE TM59: the run fails when any criterion of the room type fails.

    Parameters
    ----------
    room_type : {"living", "kitchen", "bedroom"}, default "living"
        Bedrooms add criterion (b), hours above 26 °C at night (22:00–07:00).
    ventilation : {"natural", "mechanical"}, default "natural"
    occupied, init, temperature
        As for :func:`tm52_criterion`; ``occupied=None`` uses TM59's default occupancy of
        the room type.

    Returns
    -------
    Criterion
        Key ``tm59_failed_criteria`` (``<room>:`` in front for a bedroom or kitchen), limit 0.

    References
    ----------
    CIBSE TM59 (2017) (see :func:`thermonet.comfort.tm59`).
    """
    prefix = "" if room_type == "living" else f"{room_type}:"
    opts = dict(_NO_OUTDOOR, tm59_room=room_type, tm59_ventilation=ventilation,
                occupied=occupied, init=init, prefix=prefix)
    key = f"{prefix}tm59_failed_criteria"
    return Criterion(key, f"CIBSE TM59 {room_type}, {ventilation} ventilation", 0.0,
                     "criteria failed", ComfortValue(key, opts, temperature),
                     "CIBSE TM59 (2017)")


# ============================================================================ sampling
def _distribution(name: str, spec):
    """A frozen scipy distribution from a (low, high) range or a frozen distribution."""
    from scipy import stats

    if hasattr(spec, "ppf") and hasattr(spec, "dist"):
        return spec
    if isinstance(spec, (tuple, list)) and len(spec) == 2:
        try:
            lo, hi = float(spec[0]), float(spec[1])
        except (TypeError, ValueError):
            lo = hi = math.nan
        if math.isfinite(lo) and math.isfinite(hi) and lo < hi:
            return stats.uniform(loc=lo, scale=hi - lo)
    raise StudyError(f"uncertain input {name!r}: give a frozen scipy.stats distribution "
                     "(e.g. stats.norm(300, 50)) or a (low, high) range with finite "
                     f"low < high for a uniform distribution; got {spec!r}")


def _describe(dist) -> str:
    name = dist.dist.name
    if name == "uniform":
        lo, hi = dist.support()
        return f"uniform {lo:g} – {hi:g}"
    args = ", ".join(f"{a:g}" for a in dist.args)
    kw = ", ".join(f"{k}={v:g}" for k, v in dist.kwds.items())
    return f"{name}({', '.join(s for s in (args, kw) if s)})"


def _unit_cube(n: int, d: int, sampler: str, seed: int) -> np.ndarray:
    from scipy.stats import qmc

    if sampler == "random":
        return np.random.default_rng(seed).random((n, d))
    cls = qmc.LatinHypercube if sampler == "lhs" else qmc.Sobol
    try:
        engine = cls(d, scramble=True, rng=seed)
    except TypeError:   # scipy < 1.15 names the argument seed
        engine = cls(d, scramble=True, seed=seed)
    if sampler == "sobol":
        return engine.random_base2(int(math.log2(n)))
    return engine.random(n)


def sample_inputs(uncertain: Mapping, n: int, *, sampler: str = "lhs",
                  seed: int | None = None) -> pd.DataFrame:
    """Sample uncertain inputs: Latin hypercube, scrambled Sobol' or random, seeded.

    Parameters
    ----------
    uncertain : dict
        ``{name: distribution}``: a frozen ``scipy.stats`` distribution or a ``(low, high)``
        range (uniform), in the input's own unit.
    n : int
        Number of samples (a power of 2 for ``"sobol"``).
    sampler : {"lhs", "sobol", "random"}, default "lhs"
        Latin hypercube [1]_ (``scipy.stats.qmc.LatinHypercube``), scrambled Sobol'
        sequence [2]_ [3]_ (``scipy.stats.qmc.Sobol``) or independent uniform numbers.
    seed : int, optional
        Seed; the same seed, inputs (in the same order) and scipy version give the same
        table.

    Returns
    -------
    pandas.DataFrame
        ``n`` rows (index ``sample``), one column per input in the order given.

    Raises
    ------
    StudyError
        a bad distribution, ``n`` < 2, a non-power of 2 for Sobol', or an input whose
        inverse CDF gives non-finite values (e.g. an unbounded distribution at 0 or 1).

    Notes
    -----
    Each point u of the unit cube becomes x_j = F_j⁻¹(u_j) (inverse transform); the inputs
    are sampled independently (no correlation between them).
    """
    if not isinstance(uncertain, Mapping) or not uncertain:
        raise StudyError("uncertain must be a dict {input name: distribution or (low, high)} "
                         "with at least one input")
    if sampler not in SAMPLERS:
        raise StudyError(f"sampler must be one of {', '.join(map(repr, SAMPLERS))}, got "
                         f"{sampler!r}")
    if not isinstance(n, (int, np.integer)) or n < 2:
        raise StudyError(f"n_samples must be an integer ≥ 2, got {n!r}")
    if sampler == "sobol" and (n & (n - 1)) != 0:
        low = 2 ** int(math.log2(n))
        raise StudyError(f"sampler='sobol' needs a power of 2 samples (the sequence's balance "
                         f"properties hold for 2^m points), got {n}; use {low} or {2 * low}")
    dists = {}
    for name, spec in uncertain.items():
        if not isinstance(name, str) or not name:
            raise StudyError(f"uncertain: input names are build() keyword arguments and must "
                             f"be non-empty strings, got {name!r}")
        dists[name] = _distribution(name, spec)
    u = _unit_cube(int(n), len(dists), sampler, seed)
    cols = {}
    for j, (name, dist) in enumerate(dists.items()):
        x = np.asarray(dist.ppf(u[:, j]), dtype=float)
        if not np.isfinite(x).all():
            raise StudyError(f"uncertain input {name!r}: the inverse CDF gave non-finite "
                             f"values for {int((~np.isfinite(x)).sum())} sample(s); use a "
                             "bounded or truncated distribution")
        cols[name] = x
    return pd.DataFrame(cols, index=pd.RangeIndex(int(n), name="sample"))


# ============================================================================ statistics
def binomial_interval(k: int, n: int, confidence: float = 0.95,
                      method: str = "wilson") -> tuple[float, float]:
    """Two-sided confidence interval of a probability from k failures in n runs.

    Parameters
    ----------
    k : int
        Number of runs that failed, 0 ≤ k ≤ n.
    n : int
        Number of runs, ≥ 1.
    confidence : float, default 0.95
        Confidence level, 0 < confidence < 1.
    method : {"wilson", "clopper-pearson"}, default "wilson"
        Wilson's score interval [4]_ or the Clopper–Pearson ("exact") interval [5]_.

    Returns
    -------
    (float, float)
        Lower and upper bound of the probability [–].

    Notes
    -----
    Wilson: the p with |p̂ − p| ≤ z·sqrt(p(1 − p)/n), z the normal quantile of
    (1 + confidence)/2 — close to the nominal coverage on average, sensible at k = 0 or n.
    Clopper–Pearson inverts the two one-sided binomial tests: its coverage is never below
    the nominal level, at the price of wider intervals. Newcombe [9]_ compares the two.
    Computed by :meth:`scipy.stats.binomtest(k, n).proportion_ci
    <scipy.stats._result_classes.BinomTestResult.proportion_ci>`.
    """
    from scipy.stats import binomtest

    if method not in INTERVALS:
        raise StudyError(f"interval must be one of {', '.join(map(repr, INTERVALS))}, got "
                         f"{method!r}")
    if not (isinstance(confidence, (int, float)) and 0.0 < confidence < 1.0):
        raise StudyError(f"confidence must lie strictly between 0 and 1 (e.g. 0.95), got "
                         f"{confidence!r}")
    if not (0 <= int(k) <= int(n) and int(n) >= 1):
        raise StudyError(f"binomial_interval needs 0 ≤ k ≤ n and n ≥ 1, got k={k}, n={n}")
    ci = binomtest(int(k), int(n)).proportion_ci(confidence_level=float(confidence),
                                                  method=INTERVALS[method])
    return float(ci.low), float(ci.high)


def failure_drivers(inputs: pd.DataFrame, failed, values=None) -> pd.DataFrame:
    """Which uncertain inputs separate failing from passing runs (Monte Carlo filtering).

    Parameters
    ----------
    inputs : pandas.DataFrame
        One row per run, one column per uncertain input (its sampled values).
    failed : array-like of bool
        Whether each run failed.
    values : array-like of float, optional
        The criterion's value per run, for Spearman's rank correlation.

    Returns
    -------
    pandas.DataFrame
        One row per input, most decisive first: ``input``, ``ks_statistic`` (two-sample
        Kolmogorov–Smirnov distance D between the input's values in failing and passing
        runs [–], 0 … 1), ``ks_pvalue`` [–], ``direction`` (``"higher fails more"``,
        ``"lower fails more"`` or ``"–"``, from the medians of the two groups),
        ``spearman_rho`` [–] (input against the criterion's value; NaN without ``values``
        or when either is constant), ``n_failed``, ``n_passed``. With no failing or no
        passing run, D and p are NaN (there is nothing to separate).

    Notes
    -----
    Monte Carlo filtering [6]_ [7]_: an input decides the outcome when its distribution in
    the failing runs differs from that in the passing runs. D = sup_x |F_fail(x) −
    F_pass(x)| of the two empirical CDFs; the p-value is that of
    :func:`scipy.stats.ks_2samp` (exact for small groups), a screening aid: with many inputs
    some small p-values arise by chance, and samples of a Latin hypercube are not strictly
    independent.
    """
    from scipy.stats import ks_2samp, spearmanr

    f = np.asarray(failed, dtype=bool)
    if len(f) != len(inputs):
        raise StudyError(f"failure_drivers: {len(f)} outcomes for {len(inputs)} runs")
    v = None if values is None else np.asarray(values, dtype=float)
    n_fail, n_pass = int(f.sum()), int((~f).sum())
    recs = []
    for name in inputs.columns:
        x = inputs[name].to_numpy(dtype=float)
        d = p = math.nan
        direction = "–"
        if n_fail and n_pass:
            r = ks_2samp(x[f], x[~f])
            d, p = float(r.statistic), float(r.pvalue)
            mf, mp = float(np.median(x[f])), float(np.median(x[~f]))
            direction = ("higher fails more" if mf > mp else
                         "lower fails more" if mf < mp else "–")
        rho = math.nan
        if v is not None and np.ptp(x) > 0 and np.ptp(v) > 0:
            rho = float(spearmanr(x, v).statistic)
        recs.append(dict(input=name, ks_statistic=d, ks_pvalue=p, direction=direction,
                         spearman_rho=rho, n_failed=n_fail, n_passed=n_pass))
    out = pd.DataFrame(recs)
    order = out.assign(_d=out["ks_statistic"].fillna(-1.0),
                       _r=out["spearman_rho"].abs().fillna(-1.0))
    order = order.sort_values(["_d", "_r"], ascending=False, kind="stable")
    return out.loc[order.index].reset_index(drop=True)


# ============================================================================ the runs
def _name_of(obj) -> str:
    if isinstance(obj, str):
        return obj
    return (f"{getattr(obj, '__module__', '?')}."
            f"{getattr(obj, '__qualname__', type(obj).__name__)}")


class RiskJudge:
    """Judge one run on its hourly results: the ``judge=`` of :func:`run_variants`.

    :func:`overheating_risk` sends every (option, sample) through
    :func:`thermonet.studies.run_variants`: the networks of a chunk are stepped together by
    the engine's batch path (:func:`thermonet.engine.batch.run_batch`, traces kept for the
    chunk), and this object evaluates every :class:`Criterion` on each run. It returns
    ``{criterion key: value}``. The ``comfort_outputs`` calls of the criteria are merged
    (:func:`comfort_plan`), one per judged temperature and setting. Its ``__qualname__``
    names the criteria and the judged temperature, so an ``out=`` folder refuses a
    different study.

    Parameters
    ----------
    criteria : sequence of Criterion
    temperature : str or callable
        The study's judged temperature (see :class:`RiskRun`).
    """

    def __init__(self, criteria, temperature):
        self.criteria = tuple(criteria)
        self.temperature = temperature
        self.plan = comfort_plan(self.criteria)
        crit = ",".join(f"{c.key}>{c.limit:g}" for c in self.criteria)
        self.__qualname__ = (f"overheating_risk[criteria={crit}; "
                             f"temperature={_name_of(temperature)}]")
        self.__module__ = __name__

    def __call__(self, results, handles, row: dict, weather: pd.DataFrame) -> dict:
        """``{criterion key: value}`` of one run.

        Parameters
        ----------
        results : thermonet.Results
            The run's hourly results.
        handles : object
            What ``build`` returned beside the network, or None.
        row : dict
            The run's build arguments and, when sampled, :data:`WARMING` [K].
        weather : pandas.DataFrame
            The weather the run was simulated with.

        Returns
        -------
        dict

        Raises
        ------
        StudyError
            A criterion failed (its key and the cause are named).
        """
        run = RiskRun(results, handles, weather, dict(row), self.temperature, self.plan)
        out = {}
        for c in self.criteria:
            try:
                out[c.key] = c.evaluate(run)
            except Exception as exc:
                raise StudyError(f"criterion {c.key!r} failed: {type(exc).__name__}: "
                                 f"{exc}") from exc
        return out


# ============================================================================ checks
def _check_options(options) -> dict:
    if not isinstance(options, Mapping) or not options:
        raise StudyError("options must be a dict {option name: {build argument: value}} with "
                         "at least one option, e.g. {'as designed': {}, 'blinds': "
                         "{'blinds': True}}")
    out, keys = {}, None
    for name, fixed in options.items():
        if not isinstance(name, str) or not name:
            raise StudyError(f"options: names must be non-empty strings, got {name!r}")
        if not isinstance(fixed, Mapping):
            raise StudyError(f"options[{name!r}] must be a dict of build arguments, got "
                             f"{type(fixed).__name__}")
        if keys is None:
            keys, first = set(fixed), name
        elif set(fixed) != keys:
            diff = sorted(set(fixed) ^ keys)
            raise StudyError(f"options[{name!r}] and options[{first!r}] set different "
                             f"parameters ({diff}); give every option the same parameters "
                             "(write the base value out where an option keeps it)")
        out[name] = dict(fixed)
    return out


def _check_criteria(criteria, occupied) -> tuple:
    if criteria is None:
        return (hours_above_criterion(26.0, max_pct=3.0, occupied=occupied),)
    if isinstance(criteria, Criterion):
        criteria = [criteria]
    crits = tuple(criteria)
    if not crits or not all(isinstance(c, Criterion) for c in crits):
        raise StudyError("criteria must be a Criterion or a non-empty list of them (see "
                         "hours_above_criterion, tm52_criterion, tm59_criterion, Criterion)")
    keys = [c.key for c in crits]
    dup = sorted({k for k in keys if keys.count(k) > 1})
    if dup:
        raise StudyError(f"criteria: keys {dup} appear twice; each criterion needs its own "
                         "key (column name)")
    return crits


def _check_names(opts: dict, spec: dict, crits: tuple, pass_weather: bool):
    fixed = set(next(iter(opts.values())))
    both = sorted(fixed & set(spec))
    if both:
        raise StudyError(f"{both} are both option parameters and uncertain inputs; an input "
                         "is either fixed by the option or sampled")
    taken = fixed | set(spec)
    clash = sorted(taken & {c.key for c in crits} | taken & {ERROR, "option", "sample"})
    if clash:
        raise StudyError(f"parameter names {clash} are reserved for results (criterion "
                         "keys, 'error', 'option', 'sample'); rename them")
    if pass_weather and "weather" in taken:
        raise StudyError("pass_weather=True passes 'weather' to build, which is also an "
                         "option parameter or uncertain input; rename that one")


def _check_weather(weather, warming, columns):
    if not isinstance(weather, pd.DataFrame):
        raise TypeError(f"weather must be a pandas DataFrame, got {type(weather).__name__}")
    if warming is None:
        return
    missing = [c for c in columns if c not in weather.columns]
    if missing:
        raise StudyError(f"warming_columns {missing} are not columns of the weather (it has "
                         f"{', '.join(map(str, weather.columns))}); the warming offset is "
                         "added to these")


# ============================================================================ the study
def _run_table(opts: dict, samples: pd.DataFrame) -> pd.DataFrame:
    """Every (option, sample): the option's parameters, then the sampled inputs."""
    names = list(opts)
    n = len(samples)
    fixed = pd.DataFrame([opts[o] for o in names], index=range(len(names)))
    rep = fixed.iloc[np.repeat(np.arange(len(names)), n)].reset_index(drop=True)
    smp = pd.concat([samples] * len(names), ignore_index=True)
    params = pd.concat([rep, smp], axis=1)
    params.index = pd.MultiIndex.from_product([names, range(n)], names=["option", "sample"])
    return params


def overheating_risk(build, options: Mapping, uncertain: Mapping, weather: pd.DataFrame, *,
                     temperature, criteria=None, occupied=None, warming=None,
                     warming_columns=("temp_air",), n_samples: int = 64, sampler: str = "lhs",
                     seed: int | None = None, confidence: float = 0.95,
                     interval: str = "wilson", pass_weather: bool = False,
                     warmup_days: float = 14.0, step=None, executor=None,
                     chunk_size: int = 64, progress="auto", out=None,
                     errors: str = "collect") -> RiskResult:
    """Probability that each design option fails each criterion, under uncertain inputs.

    Parameters
    ----------
    build : callable
        ``build(**parameters)`` → :class:`thermonet.Network` or ``(Network, handles)``;
        called with an option's parameters and one sample of the uncertain inputs as
        keyword arguments. For a process-pool executor it must be importable.
    options : dict
        ``{option name: {build argument: value}}``, the design options; every option sets
        the same arguments (``{"base": {}}`` for a single design).
    uncertain : dict
        ``{build argument: distribution}``: a frozen ``scipy.stats`` distribution or a
        ``(low, high)`` range (uniform), in the argument's unit — occupant gains [W],
        infiltration n50 [1/h], g-value [–], probability that blinds are used [–], ...
    weather : pandas.DataFrame
        As for :func:`thermonet.simulate`.
    temperature : str or callable
        The judged temperature: a node name (its step-mean temperature) or a function
        ``f(results, handles) -> Series`` [°C], e.g. the room's operative temperature.
    criteria : Criterion or list of Criterion, optional
        Default: :func:`hours_above_criterion` ``(26.0, max_pct=3.0, occupied=occupied)``,
        more than 3 % of the occupied hours above 26 °C fails. Add
        :func:`tm52_criterion`, :func:`tm59_criterion`, :func:`adaptive_criterion`,
        :func:`degree_hours_criterion` or your own :class:`Criterion`.
    occupied : None, (start, end) or pandas.Series of bool, optional
        Occupied rows of the default criterion (e.g. ``("09:00", "22:00")``); default all.
    warming : distribution or (low, high), optional
        A warming offset [K] sampled like the other inputs and added to the weather's
        ``warming_columns`` for the run (not passed to ``build``; column :data:`WARMING`).
    warming_columns : tuple of str, default ("temp_air",)
        Weather columns the offset is added to (add ``"temp_dew"`` or a ``"temp_sky"``
        column the network reads to shift them alike).
    n_samples : int, default 64
        Samples of the inputs; each option runs all of them (a power of 2 for Sobol').
    sampler : {"lhs", "sobol", "random"}, default "lhs"
        See :func:`sample_inputs`.
    seed : int, optional
        Seed of the sampler. None draws one from the operating system and records it in
        :attr:`RiskResult.seed`, so any study can be repeated.
    confidence : float, default 0.95
        Level of the confidence intervals.
    interval : {"wilson", "clopper-pearson"}, default "wilson"
        See :func:`binomial_interval`.
    pass_weather : bool, default False
        Also pass ``weather=`` (the run's warmed weather) to ``build``, for networks that
        derive series from it.
    warmup_days, step
        As for :func:`thermonet.simulate`.
    executor, progress, out, errors
        As for :func:`thermonet.studies.run_variants`.
    chunk_size : int, default 64
        Runs per chunk of :func:`~thermonet.studies.run_variants`.

    Returns
    -------
    RiskResult
        ``risk`` (probability of failing with its interval per option and criterion),
        ``drivers`` (Monte Carlo filtering per option, criterion and input), ``runs``,
        ``samples``, :meth:`~RiskResult.summary` and :meth:`~RiskResult.plot`.

    Raises
    ------
    StudyError
        Bad options, inputs, criteria or names; with ``errors="raise"`` the first failed run.

    Notes
    -----
    See the module docstring for the method, its reading and references. Runs that fail
    (build, simulation or a criterion raising) are left out of the probabilities and
    counted in ``n_errors``; :func:`~thermonet.studies.run_variants` warns about them.
    """
    if not callable(build):
        raise TypeError(f"build must be a function returning a thermonet Network, got "
                        f"{type(build).__name__}")
    opts = _check_options(options)
    crits = _check_criteria(criteria, occupied)
    if not isinstance(uncertain, Mapping):
        raise StudyError(f"uncertain must be a dict {{input: distribution}}, got "
                         f"{type(uncertain).__name__}")
    spec = dict(uncertain)
    if warming is not None:
        if WARMING in spec:
            raise StudyError(f"{WARMING!r} is the name of the warming offset; rename that "
                             "uncertain input or give the offset as warming=")
        spec[WARMING] = warming
    _check_weather(weather, warming, warming_columns)
    _check_names(opts, spec, crits, pass_weather)
    binomial_interval(0, 1, confidence, interval)   # checks both before any run
    if not (isinstance(temperature, str) or callable(temperature)):
        raise TypeError("temperature must be a node name or a function (results, handles) "
                        f"-> Series [°C], got {type(temperature).__name__}")
    if seed is None:
        seed = int(np.random.SeedSequence().entropy)
    samples = sample_inputs(spec, n_samples, sampler=sampler, seed=seed)
    params = _run_table(opts, samples)
    runs = run_variants(build, params, weather, judge=RiskJudge(crits, temperature),
                        outputs=[c.key for c in crits], warming=WARMING if warming is not None
                        else None, warming_columns=warming_columns, pass_weather=pass_weather,
                        warmup_days=warmup_days, step=step, executor=executor,
                        chunk_size=chunk_size, progress=progress, out=out, errors=errors)
    dists = {k: _describe(_distribution(k, v)) for k, v in spec.items()}
    return _tabulate(runs, opts, crits, samples, dists, dict(
        seed=seed, sampler=sampler, confidence=confidence, interval=interval))


def _tabulate(runs, opts, crits, samples, dists, meta) -> RiskResult:
    """Failure flags, probabilities with intervals, and drivers from the run table."""
    ok = runs[ERROR].isna().to_numpy()
    for c in crits:
        if c.key not in runs.columns:   # no run finished: run_variants has no value column
            runs.insert(len(runs.columns) - 1, c.key, np.full(len(runs), np.nan))
        flags = pd.Series(c.fails(runs[c.key].to_numpy()), index=runs.index, dtype="boolean")
        runs[f"failed:{c.key}"] = flags.where(ok, pd.NA)
    names = list(samples.columns)
    risk, drivers = [], []
    for option in opts:
        sel = runs.index.get_level_values("option") == option
        good = sel & ok
        for c in crits:
            failed = runs.loc[good, f"failed:{c.key}"].to_numpy(dtype=bool)
            n, k = int(good.sum()), int(failed.sum())
            lo, hi = (binomial_interval(k, n, meta["confidence"], meta["interval"]) if n
                      else (math.nan, math.nan))
            risk.append(dict(option=option, criterion=c.key, label=c.label, limit=c.limit,
                             unit=c.unit, n_runs=n, n_failed=k,
                             probability=k / n if n else math.nan, ci_low=lo, ci_high=hi,
                             confidence=meta["confidence"], interval=meta["interval"],
                             n_errors=int((sel & ~ok).sum())))
            if n:
                d = failure_drivers(runs.loc[good, names], failed,
                                    runs.loc[good, c.key].to_numpy(dtype=float))
                d.insert(0, "criterion", c.key)
                d.insert(0, "option", option)
                d.insert(3, "rank", np.arange(1, len(d) + 1))
                drivers.append(d)
    drv = pd.concat(drivers, ignore_index=True) if drivers else pd.DataFrame(
        columns=["option", "criterion", "input", "rank", "ks_statistic", "ks_pvalue",
                 "direction", "spearman_rho", "n_failed", "n_passed"])
    return RiskResult(risk=pd.DataFrame(risk), drivers=drv, runs=runs, samples=samples,
                      criteria=crits, options=opts, inputs=dists, n_samples=len(samples),
                      **meta)


def _pct(p: float) -> str:
    if not math.isfinite(p):
        return "n/a"
    return f"{100 * p:.1f} %" if 0 < p < 0.1 else f"{100 * p:.0f} %"


@dataclass(eq=False)
class RiskResult:
    """Overheating risk per design option (see :func:`overheating_risk`).

    Attributes
    ----------
    risk : pandas.DataFrame
        One row per (option, criterion): ``option``, ``criterion`` (key), ``label``,
        ``limit``, ``unit``, ``n_runs`` (runs that finished), ``n_failed``,
        ``probability`` [–] (n_failed / n_runs), ``ci_low``, ``ci_high`` [–] (the
        confidence interval), ``confidence``, ``interval`` (method), ``n_errors`` (runs
        that did not finish, left out).
    drivers : pandas.DataFrame
        One row per (option, criterion, uncertain input), most decisive first
        (:func:`failure_drivers`): ``rank``, ``ks_statistic``, ``ks_pvalue``,
        ``direction``, ``spearman_rho``, ``n_failed``, ``n_passed``.
    runs : pandas.DataFrame
        Index (option, sample): the build arguments, the sampled inputs, each criterion's
        value (column = its key, in its unit), ``failed:<key>`` (boolean, NA where the run
        failed) and ``error``.
    samples : pandas.DataFrame
        The sampled inputs (index ``sample``), common to every option.
    criteria : tuple of Criterion
    options : dict
    inputs : dict
        ``{input: description of its distribution}``.
    n_samples : int
    seed : int
        The sampler's seed (give it back as ``seed=`` to repeat the study).
    sampler, interval : str
    confidence : float
    caution : str
        :data:`thermonet.constants.CAUTION`.
    """

    risk: pd.DataFrame
    drivers: pd.DataFrame
    runs: pd.DataFrame
    samples: pd.DataFrame
    criteria: tuple
    options: dict
    inputs: dict
    n_samples: int
    seed: int
    sampler: str
    confidence: float
    interval: str
    caution: str = CAUTION

    def _driver_text(self, option: str, key: str) -> str:
        d = self.drivers[(self.drivers["option"] == option) & (self.drivers["criterion"] == key)]
        if not len(d) or not math.isfinite(float(d["ks_statistic"].iloc[0])):
            return "every run gave the same verdict: no split to rank the inputs by"
        top = d.iloc[0]
        if not top["ks_pvalue"] < 0.05:
            return ("no input separates failing from passing runs clearly at this sample "
                    f"size (largest KS distance {top['ks_statistic']:.2f}, "
                    f"{top['input']}, p = {top['ks_pvalue']:.2g})")
        p = top["ks_pvalue"]
        ptxt = "p < 0.001" if p < 0.001 else f"p = {p:.2g}"
        return (f"driven most by {top['input']} ({top['direction']}; KS distance "
                f"{top['ks_statistic']:.2f}, {ptxt})")

    def summary(self) -> str:
        """A short text: the risks with their intervals, the main driver, the cautions."""
        method = {"wilson": "Wilson score", "clopper-pearson": "Clopper–Pearson"}[self.interval]
        sampler = {"lhs": "Latin hypercube", "sobol": "scrambled Sobol'",
                   "random": "random"}[self.sampler]
        lines = ["Overheating risk under uncertainty (ESTIMATES)", self.caution,
                 f"{self.n_samples} samples per option ({sampler}, seed {self.seed}), the same "
                 "for every option. Uncertain inputs: "
                 + "; ".join(f"{k}: {v}" for k, v in self.inputs.items()) + ".",
                 f"Probability of failing, with {100 * self.confidence:g} % {method} "
                 "confidence intervals:"]
        for option in self.options:
            lines.append(f"  {option}:")
            for _, r in self.risk[self.risk["option"] == option].iterrows():
                err = f", {r['n_errors']} run(s) failed to finish" if r["n_errors"] else ""
                if not r["n_runs"]:
                    lines.append(f"    {r['label']}: not estimated, no run finished (see the "
                                 "'error' column of runs)")
                    continue
                lines.append(
                    f"    {r['label']}: {_pct(r['probability'])} ({_pct(r['ci_low'])} – "
                    f"{_pct(r['ci_high'])}), {r['n_failed']} of {r['n_runs']} runs{err}; "
                    f"{self._driver_text(option, r['criterion'])}")
        lines.append("These are estimates: they hold for this model, this weather and the "
                     "input distributions assumed; the intervals cover the sampling error of "
                     "a finite number of runs only.")
        return "\n".join(lines)

    def plot(self, ax=None):
        """Probability of failing each criterion per option, with confidence intervals.

        Parameters
        ----------
        ax : matplotlib Axes, optional

        Returns
        -------
        (Figure, Axes)
            One bar per (criterion, option), one colour per option (the series colours of
            :mod:`thermonet.plots`), error bars from ``ci_low`` to ``ci_high``.
        """
        import textwrap

        import matplotlib.pyplot as plt

        from thermonet.plots import SERIES_COLORS

        options, crits = list(self.options), list(self.criteria)
        if ax is None:
            wide = 2.5 + max(4.0, 0.8 * len(crits) * (len(options) + 1))
            fig, ax = plt.subplots(figsize=(wide, 4.8), layout="constrained")
        else:
            fig = ax.figure
        width = 0.8 / len(options)
        x = np.arange(len(crits))
        top = 0.0
        for j, option in enumerate(options):
            r = self.risk[self.risk["option"] == option].set_index("criterion")
            r = r.loc[[c.key for c in crits]]
            p = 100.0 * r["probability"].to_numpy(dtype=float)
            lo = 100.0 * r["ci_low"].to_numpy(dtype=float)
            hi = 100.0 * r["ci_high"].to_numpy(dtype=float)
            xs = x - 0.4 + width * (j + 0.5)
            color = SERIES_COLORS[j % len(SERIES_COLORS)]
            ax.bar(xs, p, width * 0.9, color=color, label=option, edgecolor="white")
            ax.errorbar(xs, p, yerr=[p - lo, hi - p], fmt="none", ecolor="black",
                        capsize=4, linewidth=1.1)
            for xi, pi, hii, k, n in zip(xs, p, hi, r["n_failed"], r["n_runs"], strict=True):
                ax.text(xi, hii + 1.0, f"{pi:.0f} %\n({k}/{n})", ha="center", va="bottom",
                        fontsize=8)
            top = max(top, float(np.nanmax(hi)) if len(hi) else 0.0)
        ax.set_xticks(x, [textwrap.fill(c.label, 26) for c in crits])
        ax.set_ylim(0.0, min(100.0, top * 1.2 + 8.0) if top < 80.0 else 112.0)
        ax.set_yticks(np.arange(0, 101, 20))
        ax.set_ylabel("Probability of failing the criterion [%]")
        ax.set_xlabel("Criterion (a run fails when it exceeds the limit)")
        method = {"wilson": "Wilson score", "clopper-pearson": "Clopper–Pearson"}[self.interval]
        ax.set_title(f"Estimated overheating risk per design option\n"
                     f"{self.n_samples} sampled runs per option; error bars: "
                     f"{100 * self.confidence:g} % {method} confidence intervals", fontsize=10)
        ax.legend(title="Design option", frameon=False, loc="upper left",
                  bbox_to_anchor=(1.0, 1.0))
        ax.grid(axis="y", alpha=0.3)
        return fig, ax
