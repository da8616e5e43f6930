//! Actions of the script language (infusions, drinks, losses, drugs,
//! tablets, restrictions, stops) and how each becomes engine [`Action`]s.

use super::units::{Amount, Rate, Volume};
use crate::fluids::Fluid;
use crate::model::Inputs;
use crate::params::Params;
use crate::plan::{Action, Route, Stream};
use crate::units::UREA_G_PER_MOL;
use std::fmt;

/// Molar mass of sodium chloride, g/mol (common practice).
pub const NACL_G_PER_MOL: f64 = 58.44;
/// Molar mass of potassium chloride, g/mol (common practice).
pub const KCL_G_PER_MOL: f64 = 74.55;

/// What an action does, before it is turned into engine streams (which
/// needs the final parameters and the patient's weight).
#[derive(Debug, Clone, PartialEq)]
pub enum ActionSpec {
    /// A fluid into a vein (or by mouth): volume over a duration.
    Give {
        /// The fluid.
        fluid: Fluid,
        /// How much.
        volume: Volume,
        /// Over how long, h.
        duration_h: f64,
    },
    /// A fluid drunk (or given by tube into the gut): volume over a
    /// duration.
    Drink {
        /// The fluid.
        fluid: Fluid,
        /// How much.
        volume: Volume,
        /// Over how long, h.
        duration_h: f64,
    },
    /// A fluid at a fixed rate until stopped.
    GiveAtRate {
        /// The fluid.
        fluid: Fluid,
        /// How fast.
        rate: Rate,
    },
    /// A loss of a fluid of a composition (`None`: whole blood).
    Lose {
        /// Composition lost (`None`: blood).
        fluid: Option<Fluid>,
        /// How much.
        volume: Volume,
        /// Over how long, h.
        duration_h: f64,
    },
    /// A dose of desmopressin, micrograms, by a route.
    Desmopressin {
        /// Dose, micrograms.
        dose_ug: f64,
        /// Route.
        route: Route,
    },
    /// An oral V2 antagonist, mg.
    V2Antagonist {
        /// Dose, mg.
        dose_mg: f64,
    },
    /// A loop diuretic, furosemide-equivalent mg.
    LoopDiuretic {
        /// Dose, mg.
        dose_mg: f64,
        /// Route (intravenous or oral).
        route: Route,
    },
    /// A daily thiazide, until stopped.
    Thiazide,
    /// Tablets by mouth.
    Tablets {
        /// Sodium, mmol.
        na_mmol: f64,
        /// Potassium, mmol.
        k_mmol: f64,
        /// Urea, grams.
        urea_g: f64,
    },
    /// Fluid restriction: habitual drinking stops, food (salt, potassium
    /// and the water in it, `food_water_l_day`) goes on, and a daily
    /// allowance of water is drunk evenly.
    Restrict {
        /// Allowance per day, L.
        litres_per_day: f64,
    },
    /// Nothing by mouth: the habitual intake stops.
    NilByMouth,
    /// A parameter changes from now on.
    ChangeParam {
        /// Parameter name.
        name: String,
        /// New value.
        value: f64,
    },
    /// The patient's cause goes away from now on.
    ResolveCause,
    /// Stop every running stream with this label.
    Stop(String),
    /// Stop every running stream.
    StopAll,
}

/// A restriction and nil by mouth also end drinking at will for a patient
/// who was free to drink at the start (thirst on): the patient drinks only
/// what is allowed.
fn no_drinking_at_will(ctx: &BuildContext) -> Option<Action> {
    (ctx.params.thirst_enabled >= 0.5).then(|| Action::SetParam {
        name: "thirst_enabled".into(),
        value: 0.0,
    })
}

/// What is needed to turn an [`ActionSpec`] into engine actions.
#[derive(Debug, Clone)]
pub struct BuildContext {
    /// Final parameters (after the cause and the overrides).
    pub params: Params,
    /// Body weight, kg.
    pub weight_kg: f64,
    /// The habitual intake stream's rates.
    pub habitual: Inputs,
}

impl ActionSpec {
    /// The label the stream(s) of this action will carry by default.
    pub fn default_label(&self) -> String {
        match self {
            ActionSpec::Give { fluid, .. }
            | ActionSpec::Drink { fluid, .. }
            | ActionSpec::GiveAtRate { fluid, .. } => fluid.id.clone(),
            ActionSpec::Lose { fluid: Some(f), .. } => format!("loss:{}", f.id),
            ActionSpec::Lose { fluid: None, .. } => "loss:blood".into(),
            ActionSpec::Desmopressin { .. } => "desmopressin".into(),
            ActionSpec::V2Antagonist { .. } => "v2_antagonist".into(),
            ActionSpec::LoopDiuretic { .. } => "loop_diuretic".into(),
            ActionSpec::Thiazide => "thiazide".into(),
            ActionSpec::Tablets { .. } => "tablets".into(),
            ActionSpec::Restrict { .. } => "allowance".into(),
            ActionSpec::NilByMouth => "habitual".into(),
            ActionSpec::ChangeParam { name, .. } => format!("change:{name}"),
            ActionSpec::ResolveCause => "resolve_cause".into(),
            ActionSpec::Stop(l) => l.clone(),
            ActionSpec::StopAll => String::new(),
        }
    }

    /// Whether the action starts something (and so can carry a label).
    pub fn starts_something(&self) -> bool {
        !matches!(
            self,
            ActionSpec::Stop(_)
                | ActionSpec::StopAll
                | ActionSpec::NilByMouth
                | ActionSpec::ChangeParam { .. }
                | ActionSpec::ResolveCause
        )
    }

    /// Engine actions for this action.
    pub fn build(
        &self,
        label: Option<&str>,
        ctx: &BuildContext,
    ) -> Result<Vec<Action>, crate::InputError> {
        let w = ctx.weight_kg;
        let stream = match self {
            ActionSpec::Give {
                fluid,
                volume,
                duration_h,
            } => Stream::give(fluid, volume.litres_for(w), *duration_h)?,
            ActionSpec::Drink {
                fluid,
                volume,
                duration_h,
            } => Stream::drink(fluid, volume.litres_for(w), *duration_h)?,
            ActionSpec::GiveAtRate { fluid, rate } => {
                Stream::give_at_rate(fluid, rate.l_per_h_for(w))?
            }
            ActionSpec::Lose {
                fluid: Some(f),
                volume,
                duration_h,
            } => Stream::lose(f, volume.litres_for(w), *duration_h)?,
            ActionSpec::Lose {
                fluid: None,
                volume,
                duration_h,
            } => Stream::bleed(volume.litres_for(w), *duration_h)?,
            ActionSpec::Desmopressin { dose_ug, route } => {
                Stream::desmopressin(*dose_ug, *route, &ctx.params)?
            }
            ActionSpec::V2Antagonist { dose_mg } => Stream::v2_antagonist(*dose_mg)?,
            ActionSpec::LoopDiuretic { dose_mg, route } => {
                Stream::loop_diuretic(*dose_mg, *route, &ctx.params)?
            }
            ActionSpec::Thiazide => Stream::thiazide(),
            ActionSpec::Tablets {
                na_mmol,
                k_mmol,
                urea_g,
            } => Stream::tablets(*na_mmol, *k_mmol, *urea_g)?,
            ActionSpec::Restrict { litres_per_day } => {
                let mut out = vec![Action::Stop("habitual".into())];
                // Meals go on: their salt, potassium and the water in the
                // food (never more than the habitual intake held).
                let food_water_l_h =
                    (ctx.params.food_water_l_day / 24.0).min(ctx.habitual.oral_water_l_h);
                let diet = Inputs {
                    oral_water_l_h: food_water_l_h,
                    oral_na_mmol_h: ctx.habitual.oral_na_mmol_h,
                    oral_k_mmol_h: ctx.habitual.oral_k_mmol_h,
                    ..Default::default()
                };
                if diet != Inputs::default() {
                    out.push(Action::Start(Stream {
                        label: "diet".into(),
                        rates: diet,
                        duration_h: None,
                    }));
                }
                if *litres_per_day > 0.0 {
                    out.push(Action::Start(Stream {
                        label: label.unwrap_or("allowance").to_string(),
                        rates: Inputs {
                            oral_water_l_h: litres_per_day / 24.0,
                            ..Default::default()
                        },
                        duration_h: None,
                    }));
                }
                out.extend(no_drinking_at_will(ctx));
                return Ok(out);
            }
            ActionSpec::NilByMouth => {
                let mut out = vec![Action::Stop("habitual".into())];
                out.extend(no_drinking_at_will(ctx));
                return Ok(out);
            }
            ActionSpec::ChangeParam { name, value } => {
                return Ok(vec![Action::SetParam {
                    name: name.clone(),
                    value: *value,
                }])
            }
            ActionSpec::ResolveCause => return Ok(vec![Action::ResolveCause]),
            ActionSpec::Stop(l) => return Ok(vec![Action::Stop(l.clone())]),
            ActionSpec::StopAll => return Ok(vec![Action::StopAll]),
        };
        let stream = match label {
            Some(l) => stream.labelled(l),
            None => stream,
        };
        Ok(vec![Action::Start(stream)])
    }
}

impl fmt::Display for ActionSpec {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let h = |x: &f64| super::units::Duration { hours: *x };
        match self {
            ActionSpec::Give {
                fluid,
                volume,
                duration_h,
            } => write!(f, "give {volume} of {} over {}", fluid.id, h(duration_h)),
            ActionSpec::Drink {
                fluid,
                volume,
                duration_h,
            } => write!(f, "drink {volume} of {} over {}", fluid.id, h(duration_h)),
            ActionSpec::GiveAtRate { fluid, rate } => write!(f, "run {} at {rate}", fluid.id),
            ActionSpec::Lose {
                fluid,
                volume,
                duration_h,
            } => write!(
                f,
                "lose {volume} of {} over {}",
                fluid.as_ref().map_or("blood", |x| x.id.as_str()),
                h(duration_h)
            ),
            ActionSpec::Desmopressin { dose_ug, route } => {
                write!(f, "desmopressin {dose_ug} micrograms {route:?}")
            }
            ActionSpec::V2Antagonist { dose_mg } => write!(f, "V2 antagonist {dose_mg} mg"),
            ActionSpec::LoopDiuretic { dose_mg, route } => {
                write!(f, "loop diuretic {dose_mg} mg {route:?}")
            }
            ActionSpec::Thiazide => write!(f, "thiazide daily"),
            ActionSpec::Tablets {
                na_mmol,
                k_mmol,
                urea_g,
            } => write!(
                f,
                "tablets (sodium {na_mmol:.0} mmol, potassium {k_mmol:.0} mmol, urea {urea_g} g)"
            ),
            ActionSpec::Restrict { litres_per_day } => {
                write!(f, "fluid restriction to {litres_per_day} L/day")
            }
            ActionSpec::NilByMouth => write!(f, "nil by mouth"),
            ActionSpec::ChangeParam { name, value } => write!(f, "set {name} to {value}"),
            ActionSpec::ResolveCause => write!(f, "the cause resolves"),
            ActionSpec::Stop(l) => write!(f, "stop {l}"),
            ActionSpec::StopAll => write!(f, "stop everything"),
        }
    }
}

/// Salt as mmol of sodium from an amount (mmol, or grams of NaCl).
pub fn salt_mmol(a: &Amount) -> f64 {
    a.mmol(NACL_G_PER_MOL)
}

/// Potassium as mmol from an amount (mmol, or grams of KCl).
pub fn potassium_mmol(a: &Amount) -> f64 {
    a.mmol(KCL_G_PER_MOL)
}

/// Urea as grams from an amount (grams, or mmol).
pub fn urea_grams(a: &Amount) -> f64 {
    match a.kind {
        super::units::AmountKind::Grams => a.value,
        super::units::AmountKind::Mmol => a.value * UREA_G_PER_MOL / 1000.0,
    }
}
