#!/usr/bin/env python3
"""Independent reference implementation of the Tidewater model equations.

Written from docs/equations.md (not from the engine's Rust source) and fed by
a model dump (`tidewater-model-dump/1`, from `tidewater::dump::to_json`):
every parameter, calibration constant, switch, the initial state, the
piecewise-constant input segments and the sample times come from the dump,
so no value is copied by hand.

The equations are integrated with SciPy's general-purpose stiff solvers,
`scipy.integrate.solve_ivp` with method "BDF" (variable-order BDF,
numerical differentiation formulas) or "LSODA" (ODEPACK's automatic
stiff/non-stiff switching), restarted at every segment boundary where the
inputs change.

Usage:
    python tidewater_ref.py DUMP.json [--method BDF|LSODA] [--rtol R]
        [--atol-fraction A] [--set NAME=VALUE]... [--out SAMPLES.csv]

Caution: Tidewater is a simulation for planning and teaching, not a medical
device. Defer to local protocols and licensed clinicians, and re-measure
serum sodium.
"""

from __future__ import annotations

import argparse
import json
import math
import sys
import time
from dataclasses import dataclass, field

import numpy as np
from scipy.integrate import solve_ivp

FORMAT = "tidewater-model-dump/1"
N_STATES = 52
LN2 = math.log(2.0)

# Names the equations page writes without a `params.`/`calibration.` prefix
# resolve to whichever of the two sections holds them. Where the page's name
# differs from the dump key, the mapping is listed here (and reported as a
# wording difference of the page).
ALIASES = {
    "na_excretion0": "na_excretion0_mmol_h",
    "k_excretion0": "k_excretion0_mmol_h",
    "na_excretion_max": "na_excretion_max_mmol_h",
}

# Page names that the page itself places in the calibration section.
CALIBRATION_FIRST = {"urine_osm_max", "urine_osm_min", "avp_threshold_mosm_kg"}


class DumpError(ValueError):
    """A dump that cannot be read or lacks a value the equations need."""


def conc(a: float, v: float) -> float:
    return a / max(v, 1e-9)


def softplus(x: float, w: float) -> float:
    z = x / w
    if z > 30.0:
        return x
    if z < -30.0:
        return w * math.exp(z)
    return w * math.log1p(math.exp(z))


def ramp(x: float, w: float) -> float:
    if x <= -w:
        return 0.0
    if x >= w:
        return x
    return (x + w) ** 2 / (4.0 * w)


def landis_pappenheimer(c_g_dl: float) -> float:
    """Colloid osmotic pressure (mmHg) of protein at c g/dL: Landis and
    Pappenheimer's polynomial 2.1c + 0.16c^2 + 0.009c^3."""
    c = max(c_g_dl, 0.0)
    return 2.1 * c + 0.16 * c * c + 0.009 * c * c * c


@dataclass
class Segment:
    start_h: float
    end_h: float
    u: dict


@dataclass
class Model:
    """The model of one dump, with optional parameter overrides."""

    dump: dict
    overrides: dict = field(default_factory=dict)

    def __post_init__(self) -> None:
        d = self.dump
        if d.get("format") != FORMAT:
            raise DumpError(f"dump format is {d.get('format')!r}, expected {FORMAT!r}")
        for key in ("params", "calibration", "switches", "state_names",
                    "initial_state", "segments", "sample_times_h", "tolerances"):
            if key not in d:
                raise DumpError(f"dump lacks the field '{key}'")
        if len(d["initial_state"]) != N_STATES or len(d["state_names"]) != N_STATES:
            raise DumpError(
                f"dump has {len(d['initial_state'])} states; the equations page has {N_STATES}")
        if d.get("model_changes"):
            raise DumpError(
                f"the plan changes the model during the run ({d['model_changes']}); "
                "the equations page describes one model")
        self.params = dict(d["params"])
        self.cal = {k: v for k, v in d["calibration"].items() if not isinstance(v, dict)}
        self.interstitium = dict(d["calibration"]["interstitium"])
        for name, value in self.overrides.items():
            self._override(name, value)
        self.switches = d["switches"]
        self.y0 = np.array(d["initial_state"], dtype=float)
        self.segments = [Segment(s["start_h"], s["end_h"], s["inputs"]) for s in d["segments"]]
        self.times = np.array(d["sample_times_h"], dtype=float)
        self._bind()

    # -- values -----------------------------------------------------------
    def _override(self, name: str, value: float) -> None:
        placed = False
        for table in (self.params, self.cal, self.interstitium):
            if name in table:
                table[name] = float(value)
                placed = True
        if not placed:
            raise DumpError(f"cannot override '{name}': no such parameter or calibration value")

    def value(self, name: str) -> float:
        """A constant by the name the equations page uses."""
        key = ALIASES.get(name, name)
        in_p = key in self.params
        in_c = key in self.cal
        if in_c and (name in CALIBRATION_FIRST or not in_p):
            return float(self.cal[key])
        if in_p and not in_c:
            return float(self.params[key])
        if in_p and in_c:
            if self.params[key] != self.cal[key]:
                raise DumpError(
                    f"'{name}' is both params ({self.params[key]}) and calibration "
                    f"({self.cal[key]}); the page does not say which")
            return float(self.cal[key])
        raise DumpError(f"dump has no parameter or calibration value '{name}'")

    def _bind(self) -> None:
        v = self.value
        c = {}
        for name in (
            "rt", "cell_fixed_mosm", "brain_fixed_mosm", "brain_normal_l",
            "cell_conductance", "brain_conductance", "red_cell_conductance",
            "sigma_urea_cells", "sigma_urea_brain", "sigma_urea_rbc",
            "urea_ps_cells", "urea_ps_red_cells", "k_rate", "k_ratio",
            "red_cell_solids_l", "red_cell_osmoles0", "plasma_solids_l",
            "plasma_protein0_g", "capillary0_mmhg", "blood_elastance_mmhg_l",
            "blood_volume0_l", "interstitial_globulin_g", "kf_l_h_mmhg",
            "sigma_albumin", "albumin_escape_per_h", "albumin_return_per_h",
            "lymph0_l_h", "albumin_return_flow_exponent", "small_solute_ps",
            "lymph_max_l_h", "lymph_half_mmhg", "lymph_scale_mmhg",
            "glucose_set_point", "glucose_production_mmol_h",
            "glucose_insulin_independent_fraction", "glucose_uptake_km_mmol_l",
            "insulin_activity", "insulin_gain",
            "brain_osmolyte_loss_h", "brain_osmolyte_regain_h",
            "avp_slope_pmol_l_per_mosm", "avp_threshold_mosm_kg",
            "volume_avp_gain_pmol_l", "blood_volume_normal_l",
            "volume_avp_threshold_fraction", "avp_floor_pmol_l",
            "desmopressin_avp_equiv_pmol_l_per_ug", "v2_antagonist_ki_mg",
            "urine_osm_min", "thiazide_min_urine_osm", "urine_osm_max",
            "avp_half_max_pmol_l", "avp_hill", "loop_diuretic_urine_osm",
            "ecf0_l", "natriuresis_gain", "na_excretion0", "na_excretion_max",
            "loop_diuretic_na_mmol_h", "thiazide_na_mmol_h", "na0_mmol_l",
            "k_excretion0", "k0_mmol_l", "kaliuresis_exponent",
            "loop_diuretic_k_mmol_h", "thiazide_k_mmol_h",
            "urea_fractional_excretion", "gfr_l_h", "glucose_renal_threshold_mmol_l",
            "thirst_enabled", "thirst_max_l_h", "thirst_gain_l_h_per_mosm",
            "thirst_threshold_mosm_kg", "thirst_offset_mosm_kg",
            "thirst_onset_raise_mosm_kg", "insensible_l_h", "metabolic_water_l_h",
            "urea_generation_mmol_h", "desmopressin_absorption_h",
            "desmopressin_half_life_h", "v2_antagonist_half_life_h", "v2_response_h",
            "gut_absorption_per_h", "drug_electrolyte_scale_max",
            "loop_diuretic_ec50_mg", "loop_diuretic_hill", "loop_diuretic_half_life_h",
            "loop_diuretic_absorption_h", "loop_diuretic_effect_delay_h",
            "overfill_albumin_leak_gain",
            "overfill_leak_threshold_fraction",
        ):
            c[name] = v(name)
        for name in ("v_zero_l", "elastance_low_mmhg_l", "elastance_high_mmhg_l", "width_l"):
            if name not in self.interstitium:
                raise DumpError(f"dump lacks calibration.interstitium.{name}")
            c[name] = float(self.interstitium[name])
        sw = self.switches
        c["kidneys"] = bool(sw["kidneys"])
        c["ins"] = c["insensible_l_h"] if sw["insensible_loss"] else 0.0
        c["met"] = c["metabolic_water_l_h"] if sw["metabolic_water"] else 0.0
        c["ureagen"] = c["urea_generation_mmol_h"] if sw["urea_generation"] else 0.0
        self.c = c

    # -- the equations ----------------------------------------------------
    def fluxes(self, y, u: dict) -> dict:
        """Every flux and derived quantity of docs/equations.md at state y
        under inputs u."""
        c = self.c
        (V_c, V_r, V_b, V_i, V_p, Na_p, Na_i, K_p, K_i, K_c, G_p, G_i,
         U_p, U_i, U_c, U_r, A_p, A_i, Gl_p, X_r, O_b, D_dep, D, T, R,
         W_g, Na_g, K_g, U_g, G_g, F_dep, F, F_e) = y[:33]
        na_p, na_i = conc(Na_p, V_p), conc(Na_i, V_i)
        k_p, k_i = conc(K_p, V_p), conc(K_i, V_i)
        g_p, g_i = conc(G_p, V_p), conc(G_i, V_i)
        u_p, u_i = conc(U_p, V_p), conc(U_i, V_i)
        k_c = conc(K_c, V_c)
        u_c = conc(U_c, V_c + V_b)
        u_r = conc(U_r, V_r)

        # Cell membranes (van't Hoff: flux = conductance * RT * difference of
        # effective osmolality).
        eff_i = 2.0 * (na_i + k_i) + g_i
        eff_p = 2.0 * (na_p + k_p) + g_p
        eff_c = conc(2.0 * K_c + c["cell_fixed_mosm"], V_c)
        eff_b = conc(c["brain_fixed_mosm"] + O_b, V_b)
        eff_r = conc(X_r, V_r)
        rt = c["rt"]
        J_c = c["cell_conductance"] * rt * (eff_c - eff_i + c["sigma_urea_cells"] * (u_c - u_i))
        J_b = c["brain_conductance"] * rt * (eff_b - eff_i + c["sigma_urea_brain"] * (u_c - u_i))
        J_r = c["red_cell_conductance"] * rt * (eff_r - eff_p + c["sigma_urea_rbc"] * (u_r - u_p))
        Ju_c = c["urea_ps_cells"] * (u_i - u_c)
        Ju_r = c["urea_ps_red_cells"] * (u_p - u_r)
        Jk = c["k_rate"] * (c["k_ratio"] * k_i - k_c)

        # Capillaries and lymph (Starling).
        x = V_i - c["v_zero_l"]
        P_i = c["elastance_high_mmhg_l"] * x - (
            c["elastance_low_mmhg_l"] - c["elastance_high_mmhg_l"]) * softplus(-x, c["width_l"])
        L = c["lymph_max_l_h"] / (1.0 + math.exp(-(P_i - c["lymph_half_mmhg"]) / c["lymph_scale_mmhg"]))
        RBCvol = V_r + c["red_cell_solids_l"] * X_r / c["red_cell_osmoles0"]
        prot = A_p + Gl_p
        PLvol = V_p + c["plasma_solids_l"] * prot / c["plasma_protein0_g"]
        BV = PLvol + RBCvol
        P_c = c["capillary0_mmhg"] + c["blood_elastance_mmhg_l"] * (BV - c["blood_volume0_l"])
        pi_p = landis_pappenheimer(conc(prot, V_p) / 10.0)
        pi_i = landis_pappenheimer(conc(A_i + c["interstitial_globulin_g"], V_i) / 10.0)
        J_v = c["kf_l_h_mmhg"] * ((P_c - P_i) - c["sigma_albumin"] * (pi_p - pi_i))
        f_o = 1.0 + c["overfill_albumin_leak_gain"] * ramp(
            BV / c["blood_volume_normal_l"] - 1.0 - c["overfill_leak_threshold_fraction"], 0.01)
        E_a = c["albumin_escape_per_h"] * f_o * max(A_p, 0.0)
        R_a = c["albumin_return_per_h"] * max(A_i, 0.0) * max(L / c["lymph0_l_h"], 0.0) ** c[
            "albumin_return_flow_exponent"]
        ps = c["small_solute_ps"]
        T_Na = J_v * na_p - L * na_i + ps * (na_p - na_i)
        T_K = J_v * k_p - L * k_i + ps * (k_p - k_i)
        T_G = J_v * g_p - L * g_i + ps * (g_p - g_i)
        T_U = J_v * u_p - L * u_i + ps * (u_p - u_i)

        # Glucose disposal.
        g = max(g_p, 0.0)
        G0 = c["glucose_set_point"]
        Pg = c["glucose_production_mmol_h"]
        f = c["glucose_insulin_independent_fraction"]
        Km = c["glucose_uptake_km_mmol_l"]
        D_g = Pg * (f * g * (Km + G0) / (G0 * (Km + g))
                    + (1.0 - f) * c["insulin_activity"] * (g / G0) ** c["insulin_gain"])

        # Brain osmolytes.
        O_star = softplus(eff_i * c["brain_normal_l"] - c["brain_fixed_mosm"], 0.5)
        tau = c["brain_osmolyte_loss_h"] if O_star < O_b else c["brain_osmolyte_regain_h"]
        dO_b = (O_star - O_b) / tau

        # Vasopressin and the kidney.
        posm = 2.0 * na_p + g_p + u_p
        avp_osm = c["avp_slope_pmol_l_per_mosm"] * softplus(posm - c["avp_threshold_mosm_kg"], 0.5)
        avp_vol = c["volume_avp_gain_pmol_l"] * ramp(
            1.0 - BV / c["blood_volume_normal_l"] - c["volume_avp_threshold_fraction"], 0.01)
        S = avp_osm + avp_vol
        floor = c["avp_floor_pmol_l"]
        AVP = floor + softplus(S - floor, 0.2) if floor > 0.0 else S
        V2_star = (AVP + c["desmopressin_avp_equiv_pmol_l_per_ug"] * max(D, 0.0)) / (
            1.0 + max(T, 0.0) / c["v2_antagonist_ki_mg"])
        a_F = (max(F_e, 0.0) / c["loop_diuretic_ec50_mg"]) ** c["loop_diuretic_hill"]
        e_L = a_F / (1.0 + a_F)
        e_T = min(max(u["thiazide_effect"], 0.0), 1.0)
        Umin = c["urine_osm_min"] + e_T * max(c["thiazide_min_urine_osm"] - c["urine_osm_min"], 0.0)
        Umax = max(c["urine_osm_max"], Umin)
        h = c["avp_hill"]
        a = max(R, 0.0) ** h
        Uc = Umin + (Umax - Umin) * a / (a + c["avp_half_max_pmol_l"] ** h)
        U_osm = Uc + e_L * (c["loop_diuretic_urine_osm"] - Uc)
        if c["kidneys"]:
            xe = (V_p + V_i - c["ecf0_l"]) / c["ecf0_l"]
            e = math.exp(min(c["natriuresis_gain"] * xe, 50.0))
            n0 = c["na_excretion0"]
            E_Na = n0 * e / (1.0 + n0 * (e - 1.0) / c["na_excretion_max"]) + (
                e_L * c["loop_diuretic_na_mmol_h"] + e_T * c["thiazide_na_mmol_h"]) * min(
                na_p / c["na0_mmol_l"], c["drug_electrolyte_scale_max"])
            E_K = c["k_excretion0"] * (max(k_p, 0.0) / c["k0_mmol_l"]) ** c["kaliuresis_exponent"] + (
                e_L * c["loop_diuretic_k_mmol_h"] + e_T * c["thiazide_k_mmol_h"]) * min(
                k_p / c["k0_mmol_l"], c["drug_electrolyte_scale_max"])
            E_U = c["urea_fractional_excretion"] * c["gfr_l_h"] * max(u_p, 0.0)
            E_G = c["gfr_l_h"] * ramp(g_p - c["glucose_renal_threshold_mmol_l"], 0.5)
            V_u = (2.0 * (E_Na + E_K) + E_U + E_G) / U_osm
        else:
            E_Na = E_K = E_U = E_G = V_u = 0.0
        if c["thirst_enabled"] >= 0.5:
            # The onset: the threshold given, or the own vasopressin
            # threshold plus the offset (and the start's raise).
            onset = c["thirst_threshold_mosm_kg"]
            if onset <= 0.0:
                onset = (c["avp_threshold_mosm_kg"] + c["thirst_offset_mosm_kg"]
                         + c["thirst_onset_raise_mosm_kg"])
            W_t = min(c["thirst_max_l_h"],
                      c["thirst_gain_l_h_per_mosm"] * ramp(posm - onset, 0.5))
        else:
            W_t = 0.0
        kg = c["gut_absorption_per_h"]
        a_W, a_Na, a_K, a_U, a_G = (kg * max(x_, 0.0) for x_ in (W_g, Na_g, K_g, U_g, G_g))
        return dict(
            W_g=W_g, F_dep=F_dep, F=F, F_e=F_e, a_W=a_W, a_Na=a_Na, a_K=a_K, a_U=a_U, a_G=a_G,
            V_c=V_c, V_r=V_r, V_b=V_b, V_i=V_i, V_p=V_p, na_p=na_p, k_p=k_p, g_p=g_p, u_p=u_p,
            A_p=A_p, A_i=A_i, Gl_p=Gl_p, X_r=X_r, O_b=O_b, D_dep=D_dep, D=D, T=T, R=R,
            Na_p=Na_p, K_p=K_p, G_p=G_p, U_p=U_p, U_r=U_r,
            J_c=J_c, J_b=J_b, J_r=J_r, Ju_c=Ju_c, Ju_r=Ju_r, Jk=Jk, P_i=P_i, L=L,
            RBCvol=RBCvol, BV=BV, P_c=P_c, pi_p=pi_p, pi_i=pi_i, J_v=J_v, E_a=E_a, R_a=R_a,
            T_Na=T_Na, T_K=T_K, T_G=T_G, T_U=T_U, D_g=D_g, dO_b=dO_b, posm=posm, AVP=AVP,
            V2_star=V2_star, U_osm=U_osm, E_Na=E_Na, E_K=E_K, E_U=E_U, E_G=E_G, V_u=V_u, W_t=W_t,
        )

    def rhs(self, t: float, y, u: dict):
        c = self.c
        q = self.fluxes(y, u)
        b = u["blood_loss_l_h"] / max(q["BV"], 1e-9)
        ins, met, ureagen = c["ins"], c["met"], c["ureagen"]
        Pg = c["glucose_production_mmol_h"]
        J_c, J_b, J_r, J_v, L = q["J_c"], q["J_b"], q["J_r"], q["J_v"], q["L"]
        V_u, W_t = q["V_u"], q["W_t"]
        a_W, a_Na, a_K, a_U, a_G = q["a_W"], q["a_Na"], q["a_K"], q["a_U"], q["a_G"]
        absorb = max(q["D_dep"], 0.0) / c["desmopressin_absorption_h"]
        dy = np.empty(N_STATES)
        dy[0] = J_c
        dy[1] = J_r - b * q["V_r"]
        dy[2] = J_b
        dy[3] = J_v - L - J_c - J_b
        dy[4] = (-J_v + L - J_r + u["water_in_l_h"] + a_W + met - u["water_out_l_h"] - V_u - ins
                 - b * q["V_p"])
        dy[5] = (-q["T_Na"] + u["na_in_mmol_h"] + a_Na - u["na_out_mmol_h"] - q["E_Na"]
                 - b * q["Na_p"])
        dy[6] = q["T_Na"]
        dy[7] = -q["T_K"] + u["k_in_mmol_h"] + a_K - u["k_out_mmol_h"] - q["E_K"] - b * q["K_p"]
        dy[8] = q["T_K"] - q["Jk"]
        dy[9] = q["Jk"]
        dy[10] = (-q["T_G"] + u["glucose_in_mmol_h"] + a_G + Pg - q["D_g"] - u["glucose_out_mmol_h"]
                  - q["E_G"] - b * q["G_p"])
        dy[11] = q["T_G"]
        dy[12] = (-q["T_U"] - q["Ju_r"] + u["urea_in_mmol_h"] + a_U + ureagen - u["urea_out_mmol_h"]
                  - q["E_U"] - b * q["U_p"])
        dy[13] = q["T_U"] - q["Ju_c"]
        dy[14] = q["Ju_c"]
        dy[15] = q["Ju_r"] - b * q["U_r"]
        dy[16] = -q["E_a"] + q["R_a"] + u["albumin_in_g_h"] - u["albumin_out_g_h"] - b * q["A_p"]
        dy[17] = q["E_a"] - q["R_a"]
        dy[18] = -b * q["Gl_p"]
        dy[19] = -b * q["X_r"]
        dy[20] = q["dO_b"]
        dy[21] = u["desmopressin_depot_ug_h"] - absorb
        dy[22] = (u["desmopressin_ug_h"] + absorb
                  - LN2 / c["desmopressin_half_life_h"] * max(q["D"], 0.0))
        dy[23] = u["v2_antagonist_mg_h"] - LN2 / c["v2_antagonist_half_life_h"] * max(q["T"], 0.0)
        dy[24] = (q["V2_star"] - q["R"]) / c["v2_response_h"]
        # Gut lumen (25-29).
        dy[25] = u["oral_water_l_h"] + W_t - a_W
        dy[26] = u["oral_na_mmol_h"] - a_Na
        dy[27] = u["oral_k_mmol_h"] - a_K
        dy[28] = u["oral_urea_mmol_h"] - a_U
        dy[29] = u["oral_glucose_mmol_h"] - a_G
        # Loop diuretic (30-31).
        f_abs = max(q["F_dep"], 0.0) / c["loop_diuretic_absorption_h"]
        dy[30] = u["loop_diuretic_depot_mg_h"] - f_abs
        dy[31] = (u["loop_diuretic_mg_h"] + f_abs
                  - LN2 / c["loop_diuretic_half_life_h"] * max(q["F"], 0.0))
        dy[32] = (max(q["F"], 0.0) - q["F_e"]) / c["loop_diuretic_effect_delay_h"]
        # Ledger: cumulative in (33-38) and out (39-44), urine (45).
        dy[33] = u["water_in_l_h"] + u["oral_water_l_h"] + W_t + met
        dy[34] = u["na_in_mmol_h"] + u["oral_na_mmol_h"]
        dy[35] = u["k_in_mmol_h"] + u["oral_k_mmol_h"]
        dy[36] = u["urea_in_mmol_h"] + u["oral_urea_mmol_h"] + ureagen
        dy[37] = u["glucose_in_mmol_h"] + u["oral_glucose_mmol_h"] + Pg
        dy[38] = u["albumin_in_g_h"]
        dy[39] = u["water_out_l_h"] + V_u + ins + b * (q["V_p"] + q["V_r"])
        dy[40] = u["na_out_mmol_h"] + q["E_Na"] + b * q["Na_p"]
        dy[41] = u["k_out_mmol_h"] + q["E_K"] + b * q["K_p"]
        dy[42] = u["urea_out_mmol_h"] + q["E_U"] + b * (q["U_p"] + q["U_r"])
        dy[43] = u["glucose_out_mmol_h"] + q["E_G"] + q["D_g"] + b * q["G_p"]
        dy[44] = u["albumin_out_g_h"] + b * q["A_p"]
        dy[45] = V_u
        # Urine sodium and potassium, electrolyte-free urine water, and
        # what was given by vein (46-51).
        dy[46] = q["E_Na"]
        dy[47] = q["E_K"]
        dy[48] = V_u - (q["E_Na"] + q["E_K"]) / q["na_p"]
        dy[49] = u["water_in_l_h"]
        dy[50] = u["na_in_mmol_h"]
        dy[51] = u["k_in_mmol_h"]
        return dy

    # -- observations -----------------------------------------------------
    def observe(self, y, u: dict) -> dict:
        """The observation columns of the engine's samples.

        Columns defined on the equations page (Observations section) are
        computed as written there. The remaining columns of the engine's
        samples are not defined on the page; they are computed from the
        page's named intermediate quantities by their plain meaning (see
        UNDEFINED_ON_PAGE) and reported separately by the tests.
        """
        q = self.fluxes(y, u)
        V_u = q["V_u"]
        kid = self.c["kidneys"]
        obs = {
            "na_mmol_l": q["na_p"],
            "k_mmol_l": q["k_p"],
            "glucose_mmol_l": q["g_p"],
            "urea_mmol_l": q["u_p"],
            "albumin_g_l": conc(q["A_p"], q["V_p"]),
            "osmolality_mosm_kg": q["posm"],
            "tonicity_mosm_kg": 2.0 * q["na_p"] + q["g_p"],
            "cells_l": q["V_c"],
            "red_cells_l": q["V_r"],
            "interstitium_l": q["V_i"],
            "plasma_l": q["V_p"],
            "brain_volume_index": q["V_b"] / self.c["brain_normal_l"],
            "urine_ml_h": 1000.0 * V_u,
            "urine_osm_mosm_kg": q["U_osm"] if kid else 0.0,
            "urine_na_mmol_l": q["E_Na"] / V_u if V_u > 0.0 else 0.0,
            "hematocrit": q["RBCvol"] / q["BV"],
            "efwc_ml_h": (1000.0 * V_u * (1.0 - (q["E_Na"] + q["E_K"]) / (V_u * q["na_p"]))
                          if V_u > 0.0 else 0.0),
            # Not defined on the page (plain meaning of the page's symbols).
            "brain_l": q["V_b"],
            "total_water_l": q["V_c"] + q["V_r"] + q["V_b"] + q["V_i"] + q["V_p"],
            "gut_ml": 1000.0 * q["W_g"],
            "blood_volume_l": q["BV"],
            "capillary_mmhg": q["P_c"],
            "interstitial_mmhg": q["P_i"],
            "plasma_colloid_mmhg": q["pi_p"],
            "interstitial_colloid_mmhg": q["pi_i"],
            "filtration_ml_h": 1000.0 * q["J_v"],
            "lymph_ml_h": 1000.0 * q["L"],
            "vasopressin_pmol_l": q["AVP"],
            "urine_k_mmol_l": q["E_K"] / V_u if V_u > 0.0 else 0.0,
            "osmolar_clearance_ml_h": (1000.0 * V_u * q["U_osm"] / q["posm"]) if V_u > 0.0 else 0.0,
        }
        obs["free_water_clearance_ml_h"] = obs["urine_ml_h"] - obs["osmolar_clearance_ml_h"]
        return obs

    # -- integration ------------------------------------------------------
    def scales(self):
        """Per-state scale for the absolute tolerance, as the page states:
        max(|y0|, 1e-3); ledger entries take the content of their species."""
        y0 = self.y0
        s = np.maximum(np.abs(y0), 1e-3)
        content = {
            "water": y0[0:5].sum() + y0[25],
            "na": y0[5:7].sum() + y0[26],
            "k": y0[7:10].sum() + y0[27],
            "urea": y0[12:16].sum() + y0[28],
            "glucose": y0[10:12].sum() + y0[29],
            "albumin": y0[16:18].sum(),
        }
        order = ["water", "na", "k", "urea", "glucose", "albumin"]
        for j, species in enumerate(order):
            s[33 + j] = max(abs(content[species]), 1e-3)
            s[39 + j] = max(abs(content[species]), 1e-3)
        s[45] = max(abs(content["water"]), 1e-3)
        for j, species in [(46, "na"), (47, "k"), (48, "water"), (49, "water"),
                           (50, "na"), (51, "k")]:
            s[j] = max(abs(content[species]), 1e-3)
        return s

    def simulate(self, method: str = "BDF", rtol: float = 1e-10,
                 atol_fraction: float | None = None, first_step: float | None = None):
        """Integrate segment by segment (restarting at every input change)
        and return (sample times, states at the samples, inputs in force at
        each sample, solver statistics)."""
        if atol_fraction is None:
            atol_fraction = min(self.dump["tolerances"]["atol_fraction"], rtol)
        atol = atol_fraction * self.scales()
        times = self.times
        ys = np.empty((len(times), N_STATES))
        us: list[dict] = [None] * len(times)
        stats = {"nfev": 0, "njev": 0, "nlu": 0, "segments": 0, "solve_s": 0.0}
        y = self.y0.copy()
        # A sample at a segment boundary belongs to the segment that ends
        # there (the engine samples the state reached with the old inputs);
        # the first sample, at 0, belongs to the first segment.
        k = 0
        if len(times) and times[0] <= self.segments[0].start_h + 1e-12:
            ys[0] = y
            us[0] = self.segments[0].u
            k = 1
        for seg in self.segments:
            t0, t1 = seg.start_h, seg.end_h
            if t1 <= t0:
                continue
            j = k
            while j < len(times) and times[j] <= t1 + 1e-9:
                j += 1
            t_eval = np.clip(times[k:j], t0, t1)
            u = seg.u
            start = time.perf_counter()
            sol = solve_ivp(lambda t, yy: self.rhs(t, yy, u), (t0, t1), y, method=method,
                            t_eval=np.append(t_eval, t1) if (len(t_eval) == 0 or t_eval[-1] < t1) else t_eval,
                            rtol=rtol, atol=atol, first_step=first_step)
            stats["solve_s"] += time.perf_counter() - start
            if not sol.success:
                raise RuntimeError(f"solve_ivp ({method}) failed in [{t0}, {t1}] h: {sol.message}")
            stats["nfev"] += int(sol.nfev)
            stats["njev"] += int(sol.njev)
            stats["nlu"] += int(sol.nlu)
            stats["segments"] += 1
            n = j - k
            ys[k:j] = sol.y[:, :n].T
            for m in range(k, j):
                us[m] = u
            y = sol.y[:, -1].copy()
            k = j
        if k != len(times):
            raise RuntimeError(f"segments end before the last sample time {times[-1]} h")
        return times, ys, us, stats

    def samples(self, method: str = "BDF", rtol: float = 1e-10, atol_fraction=None):
        """The observation columns at every sample time (dict of arrays),
        plus the trailing 24-h sodium change, and the solver statistics."""
        times, ys, us, stats = self.simulate(method, rtol, atol_fraction)
        self.last_states = ys
        rows = [self.observe(ys[m], us[m]) for m in range(len(times))]
        cols = {"time_h": times}
        for name in rows[0]:
            cols[name] = np.array([r[name] for r in rows])
        cols["na_change_24h_mmol_l"] = trailing_change(times, cols["na_mmol_l"], 24.0)
        return cols, stats


def trailing_change(times, values, window_h: float):
    """value(t) - value(max(0, t - window)), linear interpolation between
    samples (the page's definition of na_change_24h_mmol_l)."""
    back = np.maximum(times - window_h, 0.0)
    return values - np.interp(back, times, values)


# Columns of the engine's samples that the page's Observations section does
# not define; the reference computes them by the plain meaning of the page's
# symbols (see Model.observe).
UNDEFINED_ON_PAGE = (
    "brain_l", "total_water_l", "blood_volume_l", "capillary_mmhg", "interstitial_mmhg",
    "plasma_colloid_mmhg", "interstitial_colloid_mmhg", "filtration_ml_h", "lymph_ml_h",
    "vasopressin_pmol_l", "urine_k_mmol_l", "osmolar_clearance_ml_h",
    "free_water_clearance_ml_h",
)


def load_dump(path: str) -> dict:
    try:
        with open(path, encoding="utf-8") as fh:
            return json.load(fh)
    except OSError as e:
        raise DumpError(f"{path}: cannot read: {e}") from e
    except json.JSONDecodeError as e:
        raise DumpError(f"{path}: line {e.lineno}: not JSON: {e.msg}") from e


def read_csv(path: str) -> dict:
    """A samples CSV (header of column names, numbers) as a dict of arrays."""
    with open(path, encoding="utf-8") as fh:
        header = fh.readline().strip().split(",")
    data = np.loadtxt(path, delimiter=",", skiprows=1, ndmin=2)
    if data.shape[1] != len(header):
        raise ValueError(f"{path}: {len(header)} column names but {data.shape[1]} columns")
    return {name: data[:, j] for j, name in enumerate(header)}


def write_csv(path: str, cols: dict) -> None:
    names = list(cols)
    data = np.column_stack([cols[n] for n in names])
    np.savetxt(path, data, delimiter=",", header=",".join(names), comments="", fmt="%.17e")


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("dump")
    ap.add_argument("--method", choices=["BDF", "LSODA", "Radau"], default="BDF")
    ap.add_argument("--rtol", type=float, default=1e-10)
    ap.add_argument("--atol-fraction", type=float, default=None,
                    help="absolute tolerance per unit of state scale (default: min(dump, rtol))")
    ap.add_argument("--set", action="append", default=[], metavar="NAME=VALUE",
                    help="override a parameter or calibration value")
    ap.add_argument("--out", help="write the samples as CSV here")
    args = ap.parse_args(argv)
    overrides = {}
    for item in args.set:
        name, sep, value = item.partition("=")
        try:
            if not sep:
                raise ValueError
            overrides[name] = float(value)
        except ValueError:
            print(f"tidewater_ref: --set '{item}': expected NAME=NUMBER", file=sys.stderr)
            return 2
    try:
        model = Model(load_dump(args.dump), overrides)
        cols, stats = model.samples(args.method, args.rtol, args.atol_fraction)
    except (DumpError, RuntimeError) as e:
        print(f"tidewater_ref: {args.dump}: {e}", file=sys.stderr)
        return 1
    if args.out:
        write_csv(args.out, cols)
    print(json.dumps({"method": args.method, "rtol": args.rtol, **stats}))
    return 0


if __name__ == "__main__":
    sys.exit(main())
