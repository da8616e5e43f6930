//! The solver's problem: the model's right-hand side and its
//! Jacobian-vector product as diffsol closures, the absolute tolerance of
//! every state (transit pools included), and the restart after an input
//! change.

use crate::body::{N_STATES, N_STATES_BODY};
use crate::error::SimulationError;
use crate::model::{Inputs, Model, N_INPUTS};
use crate::plan::Tolerances;
use diffsol::{
    BdfState, Closure, ConstantClosure, NalgebraMat, NalgebraVec, NonLinearOp, OdeBuilder,
    OdeEquations, OdeSolverEquations, OdeSolverProblem, OdeSolverState, UnitCallable, VectorCommon,
};
use std::cell::RefCell;
use std::sync::Arc;

pub(super) type T = f64;
type M = NalgebraMat<T>;
pub(super) type V = NalgebraVec<T>;
/// Dense LU of the Newton matrix that factorises only the body block (see
/// [`crate::newton_lu`]).
pub(super) type LS =
    crate::newton_lu::LedgerLu<N_STATES_BODY, { N_STATES - N_STATES_BODY }, N_STATES>;
type RhsFn = Box<dyn Fn(&[T], &[T], T, &mut [T]) + Send>;
type JvpFn = Box<dyn Fn(&[T], &[T], T, &[T], &mut [T]) + Send>;
type InitFn = Box<dyn Fn(&[T], T, &mut [T]) + Send>;
pub(super) type Eqn = OdeSolverEquations<
    M,
    Closure<M, RhsFn, JvpFn>,
    ConstantClosure<M, InitFn>,
    UnitCallable<M>,
    UnitCallable<M>,
    UnitCallable<M>,
>;
pub(super) type Problem = OdeSolverProblem<Eqn>;
pub(super) type State = BdfState<V>;

/// Working memory of the Jacobian-vector product: the last `(x, p, f(x))`
/// evaluated, the perturbed state and its rate.
#[derive(Default)]
struct JvpWork {
    x: Vec<T>,
    p: Vec<T>,
    fx: Vec<T>,
    xp: Vec<T>,
    fp: Vec<T>,
}

/// Finite-difference Jacobian-vector product with a cache of `f(x)`.
///
/// No rate depends on the ledger entries (the states from
/// [`N_STATES_BODY`] on), so a direction that moves only those has a zero
/// product, returned without evaluating the model (the difference would
/// be exactly zero): a Jacobian evaluation costs one model evaluation per
/// body state, not per state.
fn make_jvp(model: Arc<Model>) -> JvpFn {
    let work: RefCell<JvpWork> = RefCell::new(JvpWork::default());
    Box::new(move |x: &[T], p: &[T], _t: T, v: &[T], out: &mut [T]| {
        let mut vn = v.iter().fold(0.0, |m: T, a| m.max(a.abs()));
        if vn == 0.0 && v.iter().any(|a| a.is_nan()) {
            vn = 1.0;
        }
        let body_moves = v[..N_STATES_BODY.min(v.len())].iter().any(|a| *a != 0.0);
        if vn == 0.0 || !body_moves {
            out.iter_mut().for_each(|e| *e = 0.0);
            return;
        }
        let xn = x.iter().fold(0.0, |m: T, a| m.max(a.abs()));
        let eps = T::EPSILON.sqrt() * (1.0 + xn) / vn;
        let u = Inputs::from_slice(p);
        let mut w = work.borrow_mut();
        let w = &mut *w;
        if w.x != x || w.p != p {
            w.x.clear();
            w.x.extend_from_slice(x);
            w.p.clear();
            w.p.extend_from_slice(p);
            w.fx.resize(x.len(), 0.0);
            model.derivative(x, &u, &mut w.fx);
        }
        w.xp.clear();
        w.xp.extend(x.iter().zip(v).map(|(a, b)| a + eps * b));
        w.fp.resize(x.len(), 0.0);
        model.derivative(&w.xp, &u, &mut w.fp);
        for ((o, fp), fx) in out.iter_mut().zip(&w.fp).zip(&w.fx) {
            *o = (fp - fx) / eps;
        }
    })
}

/// The solver's problem for `model`, starting from `y_init`; the absolute
/// tolerances are scaled on the state at the start of the run, `y0`.
pub(super) fn build_problem(
    model: Arc<Model>,
    y0: &[f64],
    y_init: &[f64],
    tol: &Tolerances,
) -> Result<Problem, SimulationError> {
    // Absolute tolerance per state: a fraction of the state's scale (the
    // ledger entries take the scale of the species they count).
    let mut scale: Vec<f64> = y0.iter().map(|v| v.abs().max(1e-3)).collect();
    for sp in crate::body::Species::ALL {
        let c = sp.content(y0).abs().max(1e-3);
        let (i, o) = sp.ledger();
        scale[i as usize] = c;
        scale[o as usize] = c;
    }
    let water = crate::body::Species::Water.content(y0);
    let sodium = crate::body::Species::Sodium.content(y0);
    let potassium = crate::body::Species::Potassium.content(y0);
    {
        use crate::body::StateSlot;
        for s in [
            StateSlot::UrineL,
            StateSlot::UrineFreeWaterL,
            StateSlot::InfusedWaterL,
        ] {
            scale[s as usize] = water;
        }
        for s in [StateSlot::UrineNa, StateSlot::InfusedNa] {
            scale[s as usize] = sodium;
        }
        for s in [StateSlot::UrineK, StateSlot::InfusedK] {
            scale[s as usize] = potassium;
        }
    }
    // A thousandth of what the species holds in the body.
    scale_transit_pools(y0, &mut scale, 1e-3);
    scale[crate::body::StateSlot::BrainOsmolytes as usize] = scale
        [crate::body::StateSlot::BrainOsmolytes as usize]
        .max(model.calibration.brain_fixed_mosm);
    let atol: Vec<f64> = scale.iter().map(|s| s * tol.atol_fraction).collect();
    let rhs_model = model.clone();
    let rhs: RhsFn = Box::new(move |x: &[T], p: &[T], _t: T, y: &mut [T]| {
        rhs_model.derivative(x, &Inputs::from_slice(p), y);
    });
    let y_init = y_init.to_vec();
    let init: InitFn = Box::new(move |_p: &[T], _t: T, y: &mut [T]| y.copy_from_slice(&y_init));
    let mut problem = OdeBuilder::<M>::new()
        .rtol(tol.rtol)
        .atol(atol)
        .p(vec![0.0; N_INPUTS])
        .rhs_implicit(rhs, make_jvp(model))
        .init(init, N_STATES)
        .build()
        .map_err(|e| SimulationError::Solver {
            time_h: 0.0,
            message: e.to_string(),
        })?;
    problem.ode_options.max_number_timesteps = tol.max_steps;
    // Let the step grow up to 10-fold from one step to the next, as SciPy's
    // BDF does (diffsol's default is 2). After each restart at an input
    // change the solver starts at order 1 from a small step, and the error
    // test, not the growth limit, should decide how fast it gets back to
    // the step size the solution allows.
    problem.ode_options.max_timestep_growth = Some(MAX_STEP_GROWTH);
    Ok(problem)
}

/// Pools that empty to nothing between doses and drinks: the gut lumen,
/// with the species each holds, and the drug depots and amounts, with the
/// drug's usual dose.
const GUT_POOLS: [(crate::body::StateSlot, crate::body::Species); 5] = {
    use crate::body::{Species, StateSlot};
    [
        (StateSlot::GutWater, Species::Water),
        (StateSlot::GutNa, Species::Sodium),
        (StateSlot::GutK, Species::Potassium),
        (StateSlot::GutUrea, Species::Urea),
        (StateSlot::GutGlucose, Species::Glucose),
    ]
};
const DRUG_POOLS: [(crate::body::StateSlot, f64); 6] = {
    use crate::body::StateSlot;
    [
        (StateSlot::LoopDiureticDepot, 40.0),
        (StateSlot::LoopDiuretic, 40.0),
        (StateSlot::LoopDiureticEffectSite, 40.0),
        (StateSlot::V2Antagonist, 15.0),
        (StateSlot::DesmopressinDepot, 2.0),
        (StateSlot::Desmopressin, 2.0),
    ]
};

/// Give the transit pools (gut lumen, drug depots and amounts) a scale
/// that does not vanish with them: `share` of the body content of their
/// species for the gut, `share` of the drug's usual dose for the drugs. The
/// absolute tolerance takes a small share (their error stays small against
/// what they hold); the negative-amount check a large one (a pool decaying
/// to zero may dip below it by the solver's error).
pub(super) fn scale_transit_pools(y0: &[f64], scale: &mut [f64], share: f64) {
    for (pool, species) in GUT_POOLS {
        let i = pool as usize;
        scale[i] = scale[i].max(species.content(y0).abs().max(1.0) * share);
    }
    for (pool, usual) in DRUG_POOLS {
        let i = pool as usize;
        scale[i] = scale[i].max(usual * share);
    }
}

/// The entries of a solver vector, without a copy.
pub(super) fn host(v: &V) -> &[T] {
    v.inner().as_slice()
}

/// Recompute the derivative and a fresh initial step after a discontinuity.
pub(super) fn refresh(problem: &Problem, st: &mut State) {
    {
        let s = st.as_mut();
        problem.eqn.rhs().call_inplace(&*s.y, *s.t, s.dy);
    }
    st.set_step_size(problem.h0, &problem.atol, problem.rtol, &problem.eqn, 1);
    // The standard estimate (Hairer, Nørsett & Wanner, Solving Ordinary
    // Differential Equations I, II.4) sizes a first-order step for a local
    // error of 1 % of the tolerance; that error grows with the square of
    // the step, so ten times that step aims at the tolerance itself. The
    // error test still checks the step and cuts it when it is too long.
    let s = st.as_mut();
    *s.h *= FIRST_STEP_FACTOR;
}

/// Largest growth of the step size from one step to the next.
const MAX_STEP_GROWTH: f64 = 10.0;

/// Factor on the standard first-step estimate after a restart (see
/// [`refresh`]).
const FIRST_STEP_FACTOR: f64 = 10.0;
