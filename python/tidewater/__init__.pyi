"""Type stubs of the tidewater package (units in the names)."""

import os
from typing import Any, Callable, Dict, List, Mapping, Optional, Sequence, Tuple, Union

CAUTION: str
COLUMNS: Tuple[str, ...]
__version__: str

class TidewaterError(Exception):
    """Base of every Tidewater error."""

class InputError(TidewaterError):
    """A bad script, data file, patient, setting or plan value."""

    file: Optional[str]
    """The script, data file or spec the error is in."""
    line: Optional[int]
    """1-based line in ``file``."""
    column: Optional[int]
    """1-based column in ``file``."""
    field: Optional[str]
    """The field named (``na``, ``weight_kg``, ``parameters[2].values``)."""

class SimulationError(TidewaterError):
    """The simulation failed."""

    time_h: Optional[float]
    """Simulated time of the failure, h."""
    pool: Optional[str]
    """The compartment or pool that would have become negative."""
    file: Optional[str]
    """The script, when there is one."""
    line: Optional[int]
    """The script line of the last action started before the failure."""

class RuleError(SimulationError):
    """A rule failed while the simulation ran (its exception is the ``__cause__``)."""

    rule: str
    """The rule's name."""

class Action:
    """Something a plan or a rule does now."""

    @property
    def label(self) -> str:
        """The label of the stream(s) it starts (for a stop: the label stopped)."""
    def labelled(self, label: str) -> "Action":
        """The same action with its stream labelled."""

class Labs:
    """The labs a rule sees: the names of a script rule's ``labs``."""

    time_h: float
    """Simulated time, h."""
    na: float
    """Serum sodium, mmol/L."""
    na_start: float
    """Serum sodium at the start, mmol/L."""
    na_change_since_start: float
    """Change of serum sodium since the start, mmol/L."""
    na_change_24h: float
    """Change of serum sodium over the trailing 24 h, mmol/L."""
    na_change_48h: float
    """Change of serum sodium over the trailing 48 h, mmol/L."""
    k: float
    """Serum potassium, mmol/L."""
    urine_ml_h: float
    """Urine flow, mL/h."""
    urine_osm: float
    """Urine osmolality, mOsm/kg."""
    urine_na: float
    """Urine sodium, mmol/L."""
    def __getattr__(self, name: str) -> float: ...
    def __getitem__(self, name: str) -> float: ...
    def running(self, label: str) -> bool:
        """Whether a stream labelled ``label`` is running now."""
    @property
    def running_streams(self) -> List[str]:
        """Labels of the streams running now."""
    @staticmethod
    def units() -> List[Tuple[str, str]]:
        """Every lab name with its unit."""
    def as_dict(self) -> Dict[str, float]:
        """Every lab by name."""

Rule = Callable[[Labs], Optional[Union[Action, Sequence[Action]]]]

class Patient:
    """A patient; values not given take the engine's defaults."""

    def __init__(
        self,
        sex: str,
        age_years: float,
        weight_kg: float,
        *,
        na: Optional[float] = None,
        k: Optional[float] = None,
        height_cm: Optional[float] = None,
        water_fraction: Optional[float] = None,
        water_method: Optional[str] = None,
        glucose_mmol_l: Optional[float] = None,
        glucose_mg_dl: Optional[float] = None,
        urea_mmol_l: Optional[float] = None,
        bun_mg_dl: Optional[float] = None,
        albumin_g_l: Optional[float] = None,
        hematocrit: Optional[float] = None,
        onset: Optional[str] = None,
        symptoms: Optional[str] = None,
        cause: Optional[str] = None,
    ) -> None: ...
    def describe(self) -> List[Tuple[str, str]]:
        """The resolved patient and its start, as (label, value with unit)."""

class Plan:
    """A plan for a patient; every builder method returns the plan."""

    def __init__(
        self,
        patient: Patient,
        *,
        hours: float = 48.0,
        sample_every_h: Optional[float] = None,
        limits: str = "europe-2014",
        high_risk: bool = False,
        title: Optional[str] = None,
    ) -> None: ...
    def run_for(self, hours: float) -> "Plan":
        """Set the run length, h."""
    def at(self, time_h: float, action: Action) -> "Plan":
        """Take ``action`` at ``time_h`` (h from the start)."""
    def infuse(
        self,
        fluid_id: str,
        volume_ml: Optional[float] = None,
        duration_h: Optional[float] = None,
        *,
        rate_ml_h: Optional[float] = None,
        at_h: float = 0.0,
        label: Optional[str] = None,
    ) -> "Plan":
        """Infuse ``volume_ml`` over ``duration_h`` (or at ``rate_ml_h``) from ``at_h``."""
    def drink(
        self,
        fluid_id: str,
        volume_ml: float,
        duration_h: float,
        *,
        at_h: float = 0.0,
        label: Optional[str] = None,
    ) -> "Plan":
        """Drink ``volume_ml`` over ``duration_h`` from ``at_h``."""
    def set_param(self, name: str, value: float) -> "Plan":
        """Override a model parameter (in its unit)."""
    def every(
        self,
        *,
        rule: Rule,
        hours: Optional[float] = None,
        minutes: Optional[float] = None,
        name: Optional[str] = None,
    ) -> "Plan":
        """Call ``rule(labs)`` every ``hours`` (or ``minutes``)."""
    def run(self) -> "Result":
        """Simulate the plan."""

class Result:
    """A finished run."""

    samples: Any
    """The columns of ``samples.csv`` (DataFrame; dict of arrays or lists without pandas)."""
    summary: Dict[str, Any]
    """The content of ``summary.json``."""
    flags: List[Dict[str, Any]]
    """The guideline rules crossed."""
    log: List[str]
    """What the run logged."""

def run(
    script: Union[str, "os.PathLike[str]"],
    settings: Optional[Mapping[str, float]] = None,
    **more_settings: float,
) -> Result:
    """Run a scenario script (file or text) with settings."""

def sweep(spec_path: Union[str, "os.PathLike[str]"], threads: int = 1) -> Any:
    """Run a sweep spec in parallel; one row per member (DataFrame)."""

def params() -> Any:
    """Every model parameter with unit, default, range, meaning and source."""

def fluids() -> Any:
    """The bundled fluid library with compositions."""

def infuse(
    fluid_id: str,
    volume_ml: Optional[float] = None,
    duration_h: Optional[float] = None,
    *,
    rate_ml_h: Optional[float] = None,
    label: Optional[str] = None,
) -> Action:
    """An infusion: ``volume_ml`` over ``duration_h``, or at ``rate_ml_h``."""

def drink(fluid_id: str, volume_ml: float, duration_h: float, *, label: Optional[str] = None) -> Action:
    """A drink of ``volume_ml`` over ``duration_h``."""

def lose(fluid_id: str, volume_ml: float, duration_h: float, *, label: Optional[str] = None) -> Action:
    """A loss of ``volume_ml`` over ``duration_h`` (``"blood"``: whole blood)."""

def desmopressin(dose_ug: float, route: str = "iv", *, label: Optional[str] = None) -> Action:
    """Desmopressin, micrograms."""

def loop_diuretic(dose_mg: float, route: str = "iv", *, label: Optional[str] = None) -> Action:
    """A loop diuretic, furosemide-equivalent mg."""

def v2_antagonist(dose_mg: float, *, label: Optional[str] = None) -> Action:
    """An oral V2 antagonist, mg."""

def thiazide(*, label: Optional[str] = None) -> Action:
    """A daily thiazide until stopped."""

def tablets(*, na_mmol: float = 0.0, k_mmol: float = 0.0, urea_g: float = 0.0, label: Optional[str] = None) -> Action:
    """Tablets: sodium and potassium in mmol, urea in g."""

def restrict(litres_per_day: float, *, label: Optional[str] = None) -> Action:
    """Fluid restriction to ``litres_per_day``."""

def nil_by_mouth() -> Action:
    """Nothing by mouth."""

def stop(label: str) -> Action:
    """Stop every running stream labelled ``label``."""

def stop_all() -> Action:
    """Stop every running stream."""

def change_param(name: str, value: float) -> Action:
    """Change a model parameter from now on."""

def resolve_cause() -> Action:
    """The patient's cause goes away from now on."""
