"""Cross-check of the Tidewater engine against an independent implementation
of the same equations (tidewater_ref.py, written from docs/equations.md)
integrated by a general-purpose reference library: SciPy's
`scipy.integrate.solve_ivp` with the stiff methods BDF and LSODA.

Both read the same model dump (every parameter, calibration constant,
initial state and input segment), so a disagreement means either the engine
does not solve its own equations accurately, or the page and the engine say
different things.

The engine's samples and dumps come from the example `crosscheck_export`
(run here, or read from the folder named by TIDEWATER_XCHECK_DIR).

Caution: Tidewater is a simulation for planning and teaching, not a medical
device. Defer to local protocols and licensed clinicians, and re-measure
serum sodium.
"""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent.parent
sys.path.insert(0, str(HERE))

import tidewater_ref as ref  # noqa: E402

PLANS = ["reference", "closed_hypertonic", "antidiuresis_drugs",
         "elderly_hypernatremia", "bleed_albumin"]
METHODS = ["BDF", "LSODA"]

# The engine runs at rtol 1e-8 (set by the export); the reference at 1e-10
# with atol = 1e-10 x the state's scale, so the reference's own error is far
# below the comparison threshold.
REF_RTOL = 1e-10
REF_ATOL_FRACTION = 1e-10

# Largest admissible relative difference, every column, every sample.
REL_TOL = 1e-4

# Absolute floors of the denominator |reference| for columns that pass
# through zero or are differences of larger terms: net capillary filtration
# and lymph (mL/h), urine flow and the clearances (zero when the kidneys are
# off; free-water clearances change sign), urine concentrations (zero without
# urine), interstitial pressure (crosses 0 mmHg as the interstitium fills)
# and the trailing sodium change (starts at 0). Near zero a relative
# difference is meaningless; with these floors a difference passes when it
# is below REL_TOL x floor in absolute terms (e.g. 1e-4 mL/h, 1e-5 mmHg,
# 1e-5 mmol/L), far below anything measurable. Net filtration has its own
# floor, the patient's resting lymph flow (1000 x calibration.lymph0_l_h,
# ~100 mL/h; at rest filtration equals lymph, so this is the column's natural
# scale): filtration is K_f (~0.35 L/h/mmHg) times a difference of Starling
# pressures of 15-25 mmHg, a difference of terms of several L/h, so a
# relative error of 1e-8 in the volumes becomes ~1e-3 mL/h where it crosses
# zero after a bleed or a diuretic (measured: 1.3e-3 mL/h at -11.5 mL/h).
# With this floor a filtration difference passes below ~0.01 mL/h.
FLOORS = {
    "lymph_ml_h": 1.0,
    "urine_ml_h": 1.0,
    "efwc_ml_h": 1.0,
    "osmolar_clearance_ml_h": 1.0,
    "free_water_clearance_ml_h": 1.0,
    "urine_osm_mosm_kg": 1.0,
    "urine_na_mmol_l": 0.1,
    "urine_k_mmol_l": 0.1,
    "interstitial_mmhg": 0.1,
    "na_change_24h_mmol_l": 0.1,
    "vasopressin_pmol_l": 0.01,
}
DEFAULT_FLOOR = 1e-12


def export_dir() -> Path:
    """Folder holding <plan>.dump.json / .samples.csv / .timing.json."""
    given = os.environ.get("TIDEWATER_XCHECK_DIR")
    if given:
        out = Path(given)
        missing = [p for p in PLANS if not (out / f"{p}.samples.csv").is_file()]
        if missing:
            pytest.fail(f"TIDEWATER_XCHECK_DIR={out} lacks the export of {missing}")
        return out
    out = Path(os.environ.get("CARGO_TARGET_DIR", ROOT / "target")) / "crosscheck"
    subprocess.run(
        ["cargo", "run", "--quiet", "--release", "-p", "tidewater-engine",
         "--example", "crosscheck_export", "--", str(out)],
        cwd=ROOT, check=True)
    return out


_CACHE: dict = {}


def engine_and_reference(plan: str, method: str, overrides=None):
    key = (plan, method, tuple(sorted((overrides or {}).items())))
    if key not in _CACHE:
        out = _CACHE.setdefault("dir", None) or export_dir()
        _CACHE["dir"] = out
        dump = ref.load_dump(str(out / f"{plan}.dump.json"))
        engine = ref.read_csv(str(out / f"{plan}.samples.csv"))
        model = ref.Model(dump, overrides or {})
        cols, _stats = model.samples(method, REF_RTOL, REF_ATOL_FRACTION)
        _CACHE[key] = (engine, cols, model)
    return _CACHE[key]


def compare(engine: dict, reference: dict, model) -> dict:
    """Per column: (largest relative difference, time at which it occurs)."""
    floors = dict(FLOORS, filtration_ml_h=1000.0 * model.c["lymph0_l_h"])
    assert np.allclose(engine["time_h"], reference["time_h"], rtol=0, atol=1e-12), \
        "sample times differ"
    result = {}
    for name, want in reference.items():
        if name == "time_h":
            continue
        assert name in engine, f"the engine's samples lack the column {name}"
        got = engine[name]
        floor = floors.get(name, DEFAULT_FLOOR)
        rel = np.abs(got - want) / np.maximum(np.abs(want), floor)
        k = int(np.argmax(rel))
        result[name] = (float(rel[k]), float(reference["time_h"][k]))
    extra = set(engine) - set(reference)
    assert not extra, f"engine columns the reference does not compute: {sorted(extra)}"
    return result


def write_report(plan: str, method: str, diffs: dict) -> None:
    out = _CACHE.get("dir")
    if out is None:
        return
    path = Path(out) / f"{plan}.{method}.diff.tsv"
    with open(path, "w", encoding="utf-8") as fh:
        fh.write("column\tmax_rel_diff\tat_h\tdefined_on_page\n")
        for name, (d, t) in diffs.items():
            fh.write(f"{name}\t{d:.3e}\t{t:g}\t{name not in ref.UNDEFINED_ON_PAGE}\n")


@pytest.mark.parametrize("method", METHODS)
@pytest.mark.parametrize("plan", PLANS)
def test_engine_matches_scipy_reference(plan, method):
    """Every column at every sample within REL_TOL of SciPy (solve_ivp
    BDF / LSODA) on the same equations and inputs."""
    engine, cols, model = engine_and_reference(plan, method)
    diffs = compare(engine, cols, model)
    write_report(plan, method, diffs)
    bad = {n: v for n, v in diffs.items() if v[0] > REL_TOL}
    assert not bad, f"{plan} ({method}): columns beyond {REL_TOL}: " + ", ".join(
        f"{n} {d:.2e} at {t:g} h" for n, (d, t) in sorted(bad.items(), key=lambda x: -x[1][0]))


@pytest.mark.parametrize("plan,name,factor", [
    ("reference", "natriuresis_gain", 1.10),
    ("closed_hypertonic", "kf_l_h_mmhg", 1.10),
])
def test_a_perturbed_parameter_is_detected(plan, name, factor):
    """The comparison has teeth: changing one parameter by 10 % on the
    reference side only must push some column beyond REL_TOL."""
    engine, _, model = engine_and_reference(plan, "BDF")
    base = model.c[name]
    _, perturbed, _ = engine_and_reference(plan, "BDF", {name: base * factor})
    diffs = compare(engine, perturbed, model)
    worst = max(diffs.items(), key=lambda x: x[1][0])
    print(f"{plan} with {name} x {factor}: worst column {worst[0]} "
          f"rel diff {worst[1][0]:.2e} at {worst[1][1]:g} h; serum sodium "
          f"{diffs['na_mmol_l'][0]:.2e} at {diffs['na_mmol_l'][1]:g} h")
    assert worst[1][0] > 100 * REL_TOL, worst


@pytest.mark.parametrize("plan", PLANS)
def test_reference_balances_its_own_ledger(plan):
    """Sanity of the reference itself: body content of every species equals
    initial + cumulative in - cumulative out (the ledger of the page) at the
    end of the run, to 1e-8 of the content."""
    _, _, model = engine_and_reference(plan, "BDF")
    y0, y1 = model.y0, model.last_states[-1]
    pools = {"water": [*range(0, 5), 25], "sodium": [5, 6, 26], "potassium": [7, 8, 9, 27],
             "urea": [*range(12, 16), 28], "glucose": [10, 11, 29], "albumin": range(16, 18)}
    for j, (species, idx) in enumerate(pools.items()):
        content0 = sum(y0[i] for i in idx)
        content1 = sum(y1[i] for i in idx)
        expect = content0 + (y1[33 + j] - y0[33 + j]) - (y1[39 + j] - y0[39 + j])
        assert abs(content1 - expect) <= 1e-8 * abs(content0), (species, content1, expect)
