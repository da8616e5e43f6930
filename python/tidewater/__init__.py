"""Tidewater in-process: whole-body water and sodium simulation for notebooks.

Run a scenario script and get its samples as a DataFrame, build a plan in
Python with rules written as Python functions, run a parameter sweep in
parallel inside the engine, and read the parameter table and fluid library.

    >>> import tidewater
    >>> r = tidewater.run("scenarios/hypovolemic_overcorrection.rhai")
    >>> r.samples.na_mmol_l.iloc[-1]          # serum sodium at 48 h, mmol/L

Units ride in the names: ``samples`` has the columns of ``samples.csv``
(``time_h``, ``na_mmol_l``, ``urine_ml_h``, ...), plan methods take
``volume_ml=``, ``duration_h=``, ``rate_ml_h=``.

Caution: a simulation for planning and teaching, not a medical device.
Defer to local protocols and licensed clinicians, and re-measure serum
sodium.
"""

import json as _json
import os as _os

from . import _native
from ._native import (
    Action,
    InputError,
    Labs,
    Patient,
    RuleError,
    SimulationError,
    TidewaterError,
    change_param,
    desmopressin,
    drink,
    infuse,
    loop_diuretic,
    lose,
    nil_by_mouth,
    resolve_cause,
    restrict,
    stop,
    stop_all,
    tablets,
    thiazide,
    v2_antagonist,
)

__version__ = _native.VERSION

#: The caution every report carries.
CAUTION = _native.CAUTION

#: The columns of ``Result.samples``, in order, units in the names (the
#: columns of ``samples.csv``).
COLUMNS = tuple(_native.COLUMNS)

__all__ = [
    "CAUTION",
    "COLUMNS",
    "Action",
    "InputError",
    "Labs",
    "Patient",
    "Plan",
    "Result",
    "RuleError",
    "SimulationError",
    "TidewaterError",
    "change_param",
    "desmopressin",
    "drink",
    "fluids",
    "infuse",
    "loop_diuretic",
    "lose",
    "nil_by_mouth",
    "params",
    "resolve_cause",
    "restrict",
    "run",
    "stop",
    "stop_all",
    "sweep",
    "tablets",
    "thiazide",
    "v2_antagonist",
]


def _table(columns):
    """A dict of equal-length columns as a DataFrame (pandas), else a dict
    of NumPy arrays (NumPy), else the dict of lists itself."""
    try:
        import pandas
    except ImportError:
        pass
    else:
        return pandas.DataFrame(columns)
    try:
        import numpy
    except ImportError:
        return dict(columns)
    return {k: numpy.asarray(v) for k, v in columns.items()}


def _samples(columns, rows, matrix):
    """The samples from the engine's buffer (rows of native 64-bit floats
    in ``columns`` order): a DataFrame, a dict of arrays or of lists."""
    try:
        import numpy
    except ImportError:
        import array

        values = array.array("d", matrix)
        n = len(columns)
        return {c: values[j::n].tolist() for j, c in enumerate(columns)}
    grid = numpy.frombuffer(matrix, dtype=numpy.float64).reshape(rows, len(columns)).copy()
    try:
        import pandas
    except ImportError:
        return {c: grid[:, j].copy() for j, c in enumerate(columns)}
    return pandas.DataFrame(grid, columns=list(columns))


class Result:
    """A finished run.

    Attributes:
        samples: one row per sample with the columns of ``samples.csv``
            (``COLUMNS``; time in h, concentrations in mmol/L, volumes in L,
            urine in mL/h, cumulative water in L and sodium in mmol): a
            pandas DataFrame, or a dict of NumPy arrays without pandas, or
            a dict of lists without NumPy.
        summary: the content of ``summary.json`` as a dict (sodium at
            start, extremes and end, largest rises, flags, goals, mass
            balance, what each fluid gave, solver statistics,
            expectations, the caution).
        flags: the guideline rules crossed (``summary["flags"]``).
        log: what the run logged (``summary["log"]``).
    """

    __slots__ = ("samples", "summary", "flags", "log")

    def __init__(self, raw):
        self.samples = _samples(raw["columns"], raw["rows"], raw["matrix"])
        self.summary = _json.loads(raw["summary_json"])
        self.flags = self.summary["flags"]
        self.log = self.summary["log"]

    def __repr__(self):
        s = self.summary["sodium"]
        return "<tidewater.Result {!r}: Na {} -> {} mmol/L over {} h, {} flags>".format(
            self.summary["title"],
            s["start"]["mmol_l"],
            s["end"]["mmol_l"],
            self.summary["duration_h"],
            len(self.flags),
        )


def _is_path(script):
    if isinstance(script, _os.PathLike):
        return True
    if "\n" in script or ";" in script:
        return False
    return _os.path.exists(script) or script.endswith(".rhai")


def run(script, settings=None, **more_settings):
    """Run a scenario script and return its ``Result``.

    Args:
        script: a script file (``str`` or ``os.PathLike``; fluid files it
            names are found beside it) or the script's text (any text
            holding a newline or a ``;``; its data files are found in the
            working folder).
        settings: values by name, as a sweep spec names them:
            ``"script.<name>"`` for the script's ``setting(name, default)``,
            ``"patient.<field>"`` for a numeric patient field (``na``,
            ``weight_kg``, ...), any other name a model parameter
            (``tidewater.params()``), each in its unit.
        **more_settings: more of the same (``**{"patient.na": 121}``).

    Raises:
        InputError: a bad script, data file or setting (``file``, ``line``,
            ``column``, ``field``).
        SimulationError: the simulation failed (``time_h``, ``pool``).
    """
    values = dict(settings or {})
    values.update(more_settings)
    pairs = [(str(k), float(v)) for k, v in values.items()]
    path = _is_path(script)
    text = _os.fspath(script) if path else script
    return Result(_native.run_script(text, path, pairs))


class Plan(_native.Plan):
    """A plan for a ``Patient``, built in Python.

    ``Plan(patient, hours=48, sample_every_h=None, limits="europe-2014",
    high_risk=False, title=None)``; then ``.infuse(fluid, volume_ml=,
    duration_h=, at_h=)`` (or ``rate_ml_h=``), ``.drink(...)``,
    ``.at(time_h, action)``, ``.set_param(name, value)``,
    ``.every(hours=|minutes=, rule=fn)`` (``fn(labs)`` returns a list of
    actions), ``.run_for(hours)``; each returns the plan. ``.run()``
    simulates it and returns a ``Result``.
    """

    def run(self):
        """Simulate the plan and return its ``Result``.

        Raises:
            InputError: a bad value in the plan (``field`` names it).
            RuleError: a rule raised (``rule``, ``time_h``; the rule's own
                exception is the ``__cause__``).
            SimulationError: the simulation failed (``time_h``, ``pool``).
        """
        return Result(self._run())


def sweep(spec_path, threads=1):
    """Run the sweep of a spec file (YAML, as ``tidewater sweep`` reads) on
    ``threads`` worker threads inside the engine, the interpreter released,
    and return its results (one row per member, the columns of the result
    file ``tidewater sweep`` writes, units in the names) as a DataFrame
    (or, without pandas, a dict of columns of numbers and text)."""
    text = _native.sweep_csv(_os.fspath(spec_path), int(threads))
    return _csv_table(text)


def _csv_table(text):
    try:
        import pandas
    except ImportError:
        pass
    else:
        import io

        return pandas.read_csv(io.StringIO(text))
    import csv
    import io

    rows = list(csv.reader(io.StringIO(text)))
    header, body = rows[0], rows[1:]

    def cell(x):
        try:
            return float(x)
        except ValueError:
            return x

    return _table({h: [cell(r[i]) for r in body] for i, h in enumerate(header)})


def params():
    """Every model parameter: name, unit, default, min, max, meaning,
    source (a DataFrame, or columns without pandas)."""
    return _table(_native.params_table())


def fluids():
    """The bundled fluid library: id, name, kind and composition (mmol/L;
    albumin g/L; osmolarity mOsm/L) (a DataFrame, or columns without
    pandas)."""
    return _table(_native.fluids_table())
