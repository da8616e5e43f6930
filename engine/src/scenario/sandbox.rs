//! The sandbox scripts run in: an engine with the standard package and our
//! words, no imports, bounded operations, call depth, sizes and wall-clock
//! time, strict variables, `print` and `debug` to the run log, and words
//! that must not do here what they do elsewhere (`sleep`, `exit`).

use super::units::fail;
use super::words::{self, Phase, Shared};
use rhai::packages::{Package, StandardPackage};
use rhai::{Dynamic, Engine, EvalAltResult, NativeCallContext, Position, FLOAT, INT};
use std::cell::{Cell, RefCell};
use std::rc::Rc;
use std::time::{Duration as WallDuration, Instant};

type Res<T> = Result<T, Box<EvalAltResult>>;

/// Largest number of script operations in one pass of the top level or one
/// call of a rule.
pub const MAX_OPERATIONS: u64 = 2_000_000;
/// Largest wall-clock time of one pass of the top level or one rule call.
pub const MAX_WALL_TIME: WallDuration = WallDuration::from_secs(5);
/// Deepest nesting of function calls.
pub const MAX_CALL_LEVELS: usize = 32;

/// Refuses every `import`: a script is self-contained.
struct NoImports;

impl rhai::ModuleResolver for NoImports {
    fn resolve(
        &self,
        _engine: &Engine,
        _source: Option<&str>,
        path: &str,
        pos: Position,
    ) -> Result<rhai::Shared<rhai::Module>, Box<EvalAltResult>> {
        Err(Box::new(EvalAltResult::ErrorRuntime(
            format!("import \"{path}\": scenario scripts cannot import other files or modules")
                .into(),
            pos,
        )))
    }
}

/// A sandboxed engine with every word registered. The words act on
/// `state`; `source` is the script text; `print` and `debug` write to `log`;
/// `clock` holds the start of the current pass (top level or rule call),
/// `None` between passes.
pub(super) fn sandboxed_engine(
    state: &Shared,
    source: Rc<str>,
    log: Rc<RefCell<super::RunLog>>,
    clock: Rc<Cell<Option<Instant>>>,
) -> Engine {
    let mut engine = Engine::new_raw();
    thread_local! {
        // Building the standard package registers hundreds of functions:
        // once per thread, shared by every engine of the thread.
        static STANDARD: rhai::Shared<rhai::Module> = StandardPackage::new().as_shared_module();
    }
    engine.register_global_module(STANDARD.with(|m| m.clone()));
    engine
        .set_max_operations(MAX_OPERATIONS)
        .set_max_call_levels(MAX_CALL_LEVELS)
        .set_max_expr_depths(64, 32)
        .set_max_string_size(10_000)
        .set_max_array_size(10_000)
        .set_max_map_size(1_000)
        .set_max_variables(1_000)
        .set_max_functions(500)
        .set_strict_variables(true)
        .set_module_resolver(NoImports);
    engine.disable_symbol("eval");
    engine.on_progress(move |ops| {
        if ops % 1024 == 0 {
            if let Some(start) = clock.get() {
                if start.elapsed() > MAX_WALL_TIME {
                    return Some(Dynamic::from("wall clock"));
                }
            }
        }
        None
    });
    let st = state.clone();
    let print_log = log.clone();
    engine.on_print(move |text| {
        let prefix = match st.try_borrow().map(|s| s.phase) {
            Ok(Phase::InRule { time_h }) => format!("t = {time_h:.2} h: "),
            _ => String::new(),
        };
        print_log.borrow_mut().push(format!("{prefix}{text}"));
    });
    let debug_log = log;
    engine.on_debug(move |text, _source, pos| {
        debug_log
            .borrow_mut()
            .push(format!("debug (line {}): {text}", pos.line().unwrap_or(0)));
    });
    super::units::register(&mut engine);
    words::register(&mut engine, state, source);
    register_refusals(&mut engine);
    engine
}

/// Words that must not do in a scenario what they do elsewhere.
fn register_refusals(engine: &mut Engine) {
    const NO_SLEEP: &str = "sleep() is not available in scenario scripts: simulated time moves with at(...) and every(...)";
    engine.register_fn("sleep", |ctx: NativeCallContext, _x: INT| -> Res<()> {
        fail(&ctx, NO_SLEEP)
    });
    engine.register_fn("sleep", |ctx: NativeCallContext, _x: FLOAT| -> Res<()> {
        fail(&ctx, NO_SLEEP)
    });
    engine.register_fn("sleep", |ctx: NativeCallContext, _x: Dynamic| -> Res<()> {
        fail(&ctx, NO_SLEEP)
    });
    for arity in [0, 1] {
        let f = |ctx: NativeCallContext| -> Res<()> {
            fail(&ctx, "exit() is not available in scenario scripts: the script describes a case, and the run decides when it ends (run_for)")
        };
        if arity == 0 {
            engine.register_fn("exit", f);
        } else {
            engine.register_fn("exit", move |ctx: NativeCallContext, _v: Dynamic| f(ctx));
        }
    }
}
