//! Streams: named flows into or out of the body, constant while they run
//! (infusions, drinks, losses, drug doses, tablets), the routes a drug is
//! given by, and the checks on their volumes, durations, rates and doses.

use crate::error::InputError;
use crate::fluids::Fluid;
use crate::model::Inputs;
use crate::params::Params;
use serde::Serialize;

/// A named flow into or out of the body, constant while it runs.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Stream {
    /// Label used to stop it (usually the fluid id, or a name given by the
    /// scenario).
    pub label: String,
    /// Rates while it runs.
    pub rates: Inputs,
    /// How long it runs, h (none: until stopped).
    pub duration_h: Option<f64>,
}

impl Stream {
    /// Infuse (or give by mouth) `volume_l` of a fluid over `duration_h`.
    pub fn give(fluid: &Fluid, volume_l: f64, duration_h: f64) -> Result<Self, InputError> {
        check_volume_duration(volume_l, duration_h)?;
        Ok(Stream {
            label: fluid.id.clone(),
            rates: fluid.given_at(volume_l / duration_h),
            duration_h: Some(duration_h),
        })
    }

    /// Run a fluid at a fixed rate (L/h) until stopped.
    pub fn give_at_rate(fluid: &Fluid, rate_l_h: f64) -> Result<Self, InputError> {
        check_rate(rate_l_h)?;
        Ok(Stream {
            label: fluid.id.clone(),
            rates: fluid.given_at(rate_l_h),
            duration_h: None,
        })
    }

    /// Drink (or give by tube into the gut) `volume_l` of a fluid over
    /// `duration_h`: it reaches plasma as the gut absorbs it.
    pub fn drink(fluid: &Fluid, volume_l: f64, duration_h: f64) -> Result<Self, InputError> {
        check_volume_duration(volume_l, duration_h)?;
        check_drinkable(fluid)?;
        Ok(Stream {
            label: fluid.id.clone(),
            rates: fluid.drunk_at(volume_l / duration_h),
            duration_h: Some(duration_h),
        })
    }

    /// Lose `volume_l` of fluid of a composition over `duration_h`.
    pub fn lose(fluid: &Fluid, volume_l: f64, duration_h: f64) -> Result<Self, InputError> {
        check_volume_duration(volume_l, duration_h)?;
        Ok(Stream {
            label: format!("loss:{}", fluid.id),
            rates: fluid.lost_at(volume_l / duration_h),
            duration_h: Some(duration_h),
        })
    }

    /// Lose `volume_l` of whole blood over `duration_h`.
    pub fn bleed(volume_l: f64, duration_h: f64) -> Result<Self, InputError> {
        check_volume_duration(volume_l, duration_h)?;
        Ok(Stream {
            label: "loss:blood".into(),
            rates: Inputs {
                blood_loss_l_h: volume_l / duration_h,
                ..Default::default()
            },
            duration_h: Some(duration_h),
        })
    }

    /// A dose of desmopressin by a route. Intravenous doses enter the
    /// circulation over 5 min; other routes enter an absorption depot over
    /// 5 min, scaled by their bioavailability (from `params`).
    pub fn desmopressin(dose_ug: f64, route: Route, params: &Params) -> Result<Self, InputError> {
        check_dose("desmopressin dose", dose_ug, 0.0, 1000.0, "ug")?;
        let over_h = 5.0 / 60.0;
        let rates = match route {
            Route::Intravenous => Inputs {
                desmopressin_ug_h: dose_ug / over_h,
                ..Default::default()
            },
            Route::Subcutaneous => Inputs {
                desmopressin_depot_ug_h: dose_ug / over_h,
                ..Default::default()
            },
            Route::Intranasal => Inputs {
                desmopressin_depot_ug_h: dose_ug * params.desmopressin_bioavailability_nasal
                    / over_h,
                ..Default::default()
            },
            Route::Oral => Inputs {
                desmopressin_depot_ug_h: dose_ug * params.desmopressin_bioavailability_oral
                    / over_h,
                ..Default::default()
            },
        };
        Ok(Stream {
            label: "desmopressin".into(),
            rates,
            duration_h: Some(over_h),
        })
    }

    /// An oral dose of a V2 antagonist (mg), absorbed over 2 h.
    pub fn v2_antagonist(dose_mg: f64) -> Result<Self, InputError> {
        check_dose("V2 antagonist dose", dose_mg, 0.0, 500.0, "mg")?;
        Ok(Stream {
            label: "v2_antagonist".into(),
            rates: Inputs {
                v2_antagonist_mg_h: dose_mg / 2.0,
                ..Default::default()
            },
            duration_h: Some(2.0),
        })
    }

    /// A dose of a loop diuretic (furosemide-equivalent mg), intravenous
    /// (into the circulation over 2 min) or oral (its bioavailable share
    /// into an absorption depot over 5 min); its effect then follows the
    /// amount in the body (docs/model.md, drugs).
    pub fn loop_diuretic(dose_mg: f64, route: Route, params: &Params) -> Result<Self, InputError> {
        check_dose("loop diuretic dose", dose_mg, 0.0, 1000.0, "mg")?;
        let rates = match route {
            Route::Intravenous => {
                let over_h = 2.0 / 60.0;
                (
                    Inputs {
                        loop_diuretic_mg_h: dose_mg / over_h,
                        ..Default::default()
                    },
                    over_h,
                )
            }
            Route::Oral => {
                let over_h = 5.0 / 60.0;
                (
                    Inputs {
                        loop_diuretic_depot_mg_h: dose_mg
                            * params.loop_diuretic_bioavailability_oral
                            / over_h,
                        ..Default::default()
                    },
                    over_h,
                )
            }
            other => {
                return Err(InputError::BadChoice {
                    field: "loop diuretic route".into(),
                    value: format!("{other:?}").to_lowercase(),
                    expected: "iv, oral".into(),
                })
            }
        };
        Ok(Stream {
            label: "loop_diuretic".into(),
            rates: rates.0,
            duration_h: Some(rates.1),
        })
    }

    /// A thiazide taken daily: full effect until stopped.
    pub fn thiazide() -> Self {
        Stream {
            label: "thiazide".into(),
            rates: Inputs {
                thiazide_effect: 1.0,
                ..Default::default()
            },
            duration_h: None,
        }
    }

    /// Tablets or sachets by mouth: sodium (as salt), potassium (as its
    /// chloride) and urea, swallowed over 1 h into the gut, absorbed from
    /// there.
    pub fn tablets(na_mmol: f64, k_mmol: f64, urea_g: f64) -> Result<Self, InputError> {
        check_dose("sodium", na_mmol, 0.0, 2000.0, "mmol")?;
        check_dose("potassium", k_mmol, 0.0, 500.0, "mmol")?;
        check_dose("urea", urea_g, 0.0, 200.0, "g")?;
        if na_mmol + k_mmol + urea_g <= 0.0 {
            return Err(InputError::Missing {
                field: "tablets".into(),
                why: "give an amount of sodium, potassium or urea".into(),
            });
        }
        Ok(Stream {
            label: "tablets".into(),
            rates: Inputs {
                oral_na_mmol_h: na_mmol,
                oral_k_mmol_h: k_mmol,
                oral_urea_mmol_h: urea_g * 1000.0 / crate::units::UREA_G_PER_MOL,
                ..Default::default()
            },
            duration_h: Some(1.0),
        })
    }

    /// Give the stream another label.
    pub fn labelled(mut self, label: &str) -> Self {
        self.label = label.to_string();
        self
    }
}

/// A colloid is not a drink: albumin by mouth is digested, so the model
/// would silently drop it.
fn check_drinkable(fluid: &Fluid) -> Result<(), InputError> {
    if fluid.albumin_g_l > 0.0 {
        return Err(InputError::BadChoice {
            field: "drink".into(),
            value: fluid.id.clone(),
            expected: "a fluid without albumin (albumin by mouth is digested, not absorbed as albumin; infuse it instead)".into(),
        });
    }
    Ok(())
}

fn check_volume_duration(volume_l: f64, duration_h: f64) -> Result<(), InputError> {
    if !(volume_l.is_finite() && volume_l > 0.0 && volume_l <= 50.0) {
        return Err(InputError::OutOfRange {
            field: "volume".into(),
            value: volume_l,
            min: 0.0,
            max: 50.0,
            unit: "L".into(),
        });
    }
    if !(duration_h.is_finite() && (1.0 / 3600.0..=24.0 * 365.0).contains(&duration_h)) {
        return Err(InputError::OutOfRange {
            field: "duration".into(),
            value: duration_h,
            min: 1.0 / 3600.0,
            max: 24.0 * 365.0,
            unit: "h".into(),
        });
    }
    check_rate(volume_l / duration_h)
}

fn check_dose(field: &str, value: f64, min: f64, max: f64, unit: &str) -> Result<(), InputError> {
    if value.is_finite() && value >= min && value <= max {
        Ok(())
    } else {
        Err(InputError::OutOfRange {
            field: field.into(),
            value,
            min,
            max,
            unit: unit.into(),
        })
    }
}

/// How a drug is given.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum Route {
    /// Into a vein.
    Intravenous,
    /// Under the skin.
    Subcutaneous,
    /// Into the nose.
    Intranasal,
    /// By mouth.
    Oral,
}

impl Route {
    /// Parse "iv", "sc", "nasal", "oral" (and long forms).
    pub fn parse(text: &str) -> Result<Self, InputError> {
        match text.trim().to_ascii_lowercase().as_str() {
            "iv" | "intravenous" => Ok(Route::Intravenous),
            "sc" | "subcutaneous" => Ok(Route::Subcutaneous),
            "nasal" | "intranasal" | "in" => Ok(Route::Intranasal),
            "oral" | "po" => Ok(Route::Oral),
            _ => Err(InputError::BadChoice {
                field: "route".into(),
                value: text.into(),
                expected: "iv, sc, nasal, oral".into(),
            }),
        }
    }
}

fn check_rate(rate_l_h: f64) -> Result<(), InputError> {
    if !(rate_l_h.is_finite() && rate_l_h > 0.0 && rate_l_h <= 20.0) {
        return Err(InputError::OutOfRange {
            field: "rate".into(),
            value: rate_l_h,
            min: 0.0,
            max: 20.0,
            unit: "L/h".into(),
        });
    }
    Ok(())
}
