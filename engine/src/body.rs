//! The state of the body: layout of the state vector, named accessors and
//! the mass-balance ledger.
//!
//! Water volumes are litres of water; solute pools are mmol (albumin and
//! globulins in grams, cell osmoles in mOsm). The ledger entries are
//! cumulative amounts that entered (`In*`) or left (`Out*`) the body since
//! the start: the model adds to them exactly what it adds to or removes
//! from the body, so that for every species
//! `content(t) = content(0) + in(t) − out(t)` holds to rounding.

/// A slot of the state vector: the pool, volume or ledger entry each index
/// holds (`y[StateSlot::NaPlasma as usize]`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
#[repr(usize)]
pub enum StateSlot {
    /// Water of tissue cells (brain and red cells excluded), L.
    CellsL,
    /// Red-cell water, L.
    RedCellsL,
    /// Brain-cell water, L.
    BrainL,
    /// Interstitial water, L.
    InterstitiumL,
    /// Plasma water, L.
    PlasmaL,
    /// Plasma sodium, mmol.
    NaPlasma,
    /// Interstitial sodium, mmol.
    NaInterstitium,
    /// Plasma potassium, mmol.
    KPlasma,
    /// Interstitial potassium, mmol.
    KInterstitium,
    /// Tissue-cell potassium, mmol.
    KCells,
    /// Plasma glucose, mmol.
    GlucosePlasma,
    /// Interstitial glucose, mmol.
    GlucoseInterstitium,
    /// Plasma urea, mmol.
    UreaPlasma,
    /// Interstitial urea, mmol.
    UreaInterstitium,
    /// Urea in tissue- and brain-cell water, mmol.
    UreaCells,
    /// Red-cell urea, mmol.
    UreaRedCells,
    /// Plasma albumin, g.
    AlbuminPlasma,
    /// Interstitial albumin, g.
    AlbuminInterstitium,
    /// Plasma globulins (non-albumin protein), g.
    GlobulinPlasma,
    /// Red-cell effective osmoles (their mass: falls only with blood loss), mOsm.
    RedCellOsmoles,
    /// Adaptive brain osmolytes, mOsm.
    BrainOsmolytes,
    /// Desmopressin in an absorption depot (skin, nose, gut), ug.
    DesmopressinDepot,
    /// Desmopressin in the body, ug.
    Desmopressin,
    /// Oral V2 antagonist in the body, mg.
    V2Antagonist,
    /// V2 agonism acting on the collecting duct (lags plasma), pmol/L.
    RenalV2Effect,
    /// Water drunk (or given by tube) not yet absorbed from the gut, L.
    GutWater,
    /// Sodium in the gut lumen not yet absorbed, mmol.
    GutNa,
    /// Potassium in the gut lumen not yet absorbed, mmol.
    GutK,
    /// Urea in the gut lumen not yet absorbed, mmol.
    GutUrea,
    /// Glucose in the gut lumen not yet absorbed, mmol.
    GutGlucose,
    /// Oral loop diuretic not yet absorbed, mg.
    LoopDiureticDepot,
    /// Loop diuretic in the body, mg.
    LoopDiuretic,
    /// Loop diuretic at its site of action (the lumen of the thick
    /// ascending limb, reached by tubular secretion), as mg in the body
    /// that would give it at equilibrium.
    LoopDiureticEffectSite,
    /// Cumulative water in, L.
    InWater,
    /// Cumulative sodium in, mmol.
    InNa,
    /// Cumulative potassium in, mmol.
    InK,
    /// Cumulative urea in (intake and generation), mmol.
    InUrea,
    /// Cumulative glucose in (intake and production), mmol.
    InGlucose,
    /// Cumulative albumin in, g.
    InAlbumin,
    /// Cumulative water out, L.
    OutWater,
    /// Cumulative sodium out, mmol.
    OutNa,
    /// Cumulative potassium out, mmol.
    OutK,
    /// Cumulative urea out, mmol.
    OutUrea,
    /// Cumulative glucose out (urine and metabolism), mmol.
    OutGlucose,
    /// Cumulative albumin out, g.
    OutAlbumin,
    /// Cumulative urine volume, L.
    UrineL,
    /// Cumulative sodium in urine, mmol.
    UrineNa,
    /// Cumulative potassium in urine, mmol.
    UrineK,
    /// Cumulative electrolyte-free water in urine (the integral of the
    /// electrolyte-free water clearance `Q_u·(1 − (U_Na + U_K)/P_Na)`), L.
    UrineFreeWaterL,
    /// Cumulative water given by vein (infusions and boluses), L.
    InfusedWaterL,
    /// Cumulative sodium given by vein, mmol.
    InfusedNa,
    /// Cumulative potassium given by vein, mmol.
    InfusedK,
}

/// Number of entries that describe the body (the rest is the ledger).
pub const N_STATES_BODY: usize = StateSlot::InWater as usize;

/// Number of entries in the state vector.
pub const N_STATES: usize = StateSlot::InfusedK as usize + 1;

/// Name of each state for messages, in layout order.
pub const STATE_NAMES: [&str; N_STATES] = [
    "tissue-cell water",
    "red-cell water",
    "brain-cell water",
    "interstitial water",
    "plasma water",
    "plasma sodium",
    "interstitial sodium",
    "plasma potassium",
    "interstitial potassium",
    "cell potassium",
    "plasma glucose",
    "interstitial glucose",
    "plasma urea",
    "interstitial urea",
    "cell urea",
    "red-cell urea",
    "plasma albumin",
    "interstitial albumin",
    "plasma globulins",
    "red-cell osmoles",
    "brain adaptive osmolytes",
    "desmopressin depot",
    "desmopressin",
    "V2 antagonist",
    "renal V2 effect",
    "gut water",
    "gut sodium",
    "gut potassium",
    "gut urea",
    "gut glucose",
    "loop diuretic depot",
    "loop diuretic",
    "loop diuretic at its site of action",
    "cumulative water in",
    "cumulative sodium in",
    "cumulative potassium in",
    "cumulative urea in",
    "cumulative glucose in",
    "cumulative albumin in",
    "cumulative water out",
    "cumulative sodium out",
    "cumulative potassium out",
    "cumulative urea out",
    "cumulative glucose out",
    "cumulative albumin out",
    "cumulative urine",
    "cumulative urine sodium",
    "cumulative urine potassium",
    "cumulative electrolyte-free urine water",
    "cumulative infused water",
    "cumulative infused sodium",
    "cumulative infused potassium",
];

/// The species the ledger balances.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Species {
    /// Water, L.
    Water,
    /// Sodium, mmol.
    Sodium,
    /// Potassium (exchangeable: plasma, interstitium, tissue cells), mmol.
    Potassium,
    /// Urea, mmol.
    Urea,
    /// Glucose, mmol.
    Glucose,
    /// Albumin, g.
    Albumin,
}

impl Species {
    /// All balanced species.
    pub const ALL: [Species; 6] = [
        Species::Water,
        Species::Sodium,
        Species::Potassium,
        Species::Urea,
        Species::Glucose,
        Species::Albumin,
    ];

    /// Lower-case name for tables and JSON.
    pub fn name(self) -> &'static str {
        match self {
            Species::Water => "water",
            Species::Sodium => "sodium",
            Species::Potassium => "potassium",
            Species::Urea => "urea",
            Species::Glucose => "glucose",
            Species::Albumin => "albumin",
        }
    }

    /// What the ledger counts as entering the body: more than what was
    /// given for water (thirst, metabolism), urea (made from protein) and
    /// glucose (made by the liver).
    pub fn inflow(self) -> &'static str {
        match self {
            Species::Water => "given, drunk and made by metabolism",
            Species::Sodium | Species::Potassium => "given and eaten",
            Species::Urea => "given and made from protein",
            Species::Glucose => "given, eaten and made by the liver",
            Species::Albumin => "given",
        }
    }

    /// Unit of the amounts.
    pub fn unit(self) -> &'static str {
        match self {
            Species::Water => "L",
            Species::Albumin => "g",
            _ => "mmol",
        }
    }

    fn pools(self) -> &'static [StateSlot] {
        match self {
            Species::Water => &[
                StateSlot::CellsL,
                StateSlot::RedCellsL,
                StateSlot::BrainL,
                StateSlot::InterstitiumL,
                StateSlot::PlasmaL,
                StateSlot::GutWater,
            ],
            Species::Sodium => &[
                StateSlot::NaPlasma,
                StateSlot::NaInterstitium,
                StateSlot::GutNa,
            ],
            Species::Potassium => &[
                StateSlot::KPlasma,
                StateSlot::KInterstitium,
                StateSlot::KCells,
                StateSlot::GutK,
            ],
            Species::Urea => &[
                StateSlot::UreaPlasma,
                StateSlot::UreaInterstitium,
                StateSlot::UreaCells,
                StateSlot::UreaRedCells,
                StateSlot::GutUrea,
            ],
            Species::Glucose => &[
                StateSlot::GlucosePlasma,
                StateSlot::GlucoseInterstitium,
                StateSlot::GutGlucose,
            ],
            Species::Albumin => &[StateSlot::AlbuminPlasma, StateSlot::AlbuminInterstitium],
        }
    }

    /// Ledger entries (cumulative in, cumulative out) of the species.
    pub fn ledger(self) -> (StateSlot, StateSlot) {
        match self {
            Species::Water => (StateSlot::InWater, StateSlot::OutWater),
            Species::Sodium => (StateSlot::InNa, StateSlot::OutNa),
            Species::Potassium => (StateSlot::InK, StateSlot::OutK),
            Species::Urea => (StateSlot::InUrea, StateSlot::OutUrea),
            Species::Glucose => (StateSlot::InGlucose, StateSlot::OutGlucose),
            Species::Albumin => (StateSlot::InAlbumin, StateSlot::OutAlbumin),
        }
    }

    /// Amount of the species held in the body, the gut lumen included
    /// (what was swallowed has entered the ledger).
    pub fn content(self, y: &[f64]) -> f64 {
        self.pools().iter().map(|&s| y[s as usize]).sum()
    }

    /// Cumulative amount that entered the body.
    pub fn cumulative_in(self, y: &[f64]) -> f64 {
        y[self.ledger().0 as usize]
    }

    /// Cumulative amount that left the body.
    pub fn cumulative_out(self, y: &[f64]) -> f64 {
        y[self.ledger().1 as usize]
    }

    /// Relative mass-balance residual: `(content − content₀ − in + out)`
    /// divided by the largest of the amounts involved.
    pub fn residual(self, y0: &[f64], y: &[f64]) -> f64 {
        self.residual_from(self.content(y0), y)
    }

    /// [`Species::residual`] with the content at the start given (to
    /// check many states against one start).
    pub fn residual_from(self, c0: f64, y: &[f64]) -> f64 {
        let c = self.content(y);
        let (i, o) = (self.cumulative_in(y), self.cumulative_out(y));
        let scale = c0.abs().max(c.abs()).max(i.abs()).max(o.abs()).max(1e-300);
        (c - c0 - i + o) / scale
    }
}

/// Total body water of a state vector: tissue cells, red cells, brain,
/// interstitium and plasma (not the water still in the gut lumen), L.
pub fn total_water_l(y: &[f64]) -> f64 {
    y[StateSlot::CellsL as usize]
        + y[StateSlot::RedCellsL as usize]
        + y[StateSlot::BrainL as usize]
        + y[StateSlot::InterstitiumL as usize]
        + y[StateSlot::PlasmaL as usize]
}

/// A body state: the state vector with named read access.
#[derive(Debug, Clone, PartialEq)]
pub struct Body {
    /// The state vector, laid out as [`StateSlot`].
    pub y: Vec<f64>,
}

impl Body {
    /// Value of one state.
    pub fn get(&self, s: StateSlot) -> f64 {
        self.y[s as usize]
    }

    /// Total body water (cells, interstitium, plasma; not the water still
    /// in the gut lumen), L.
    pub fn total_water_l(&self) -> f64 {
        total_water_l(&self.y)
    }

    /// Extracellular water (plasma + interstitium), L.
    pub fn extracellular_l(&self) -> f64 {
        self.get(StateSlot::PlasmaL) + self.get(StateSlot::InterstitiumL)
    }

    /// Intracellular water (tissue cells, red cells, brain), L.
    pub fn intracellular_l(&self) -> f64 {
        self.get(StateSlot::CellsL) + self.get(StateSlot::RedCellsL) + self.get(StateSlot::BrainL)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn layout_and_names_agree() {
        assert_eq!(STATE_NAMES.len(), N_STATES);
        assert_eq!(STATE_NAMES[StateSlot::PlasmaL as usize], "plasma water");
        assert_eq!(STATE_NAMES[StateSlot::UrineL as usize], "cumulative urine");
    }

    #[test]
    fn residual_is_zero_when_the_ledger_matches() {
        let y0 = vec![1.0; N_STATES];
        let mut y = y0.clone();
        y[StateSlot::PlasmaL as usize] += 0.5;
        y[StateSlot::InWater as usize] += 0.5;
        assert_eq!(Species::Water.residual(&y0, &y), 0.0);
        y[StateSlot::InWater as usize] += 0.1;
        assert!(Species::Water.residual(&y0, &y) < -0.01);
    }
}
