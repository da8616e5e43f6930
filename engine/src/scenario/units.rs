//! Typed quantities of the script language, so that a bare number cannot be
//! misread: a [`Duration`] is not a [`Volume`], a [`Rate`] is not an
//! [`Amount`]. Scripts make them with unit words (`hours(2)`, `ml(500)`,
//! `ml_per_kg(20)`, `ml_per_h(80)`, `mmol(150)`, `micrograms(2)`) and may add,
//! subtract, scale and compare values of the same kind.

use rhai::{Engine, EvalAltResult, NativeCallContext, FLOAT, INT};
use std::fmt;

/// A length of time, held in hours.
#[derive(Debug, Clone, Copy, PartialEq, PartialOrd)]
pub struct Duration {
    /// Hours.
    pub hours: f64,
}

/// A volume, held in litres; `per_kg` volumes are multiplied by the
/// patient's weight when used.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Volume {
    /// Litres (per kg of body weight if `per_kg`).
    pub litres: f64,
    /// Whether the volume is per kg of body weight.
    pub per_kg: bool,
}

/// A flow, held in litres per hour; `per_kg` rates are multiplied by the
/// patient's weight when used.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Rate {
    /// Litres per hour (per kg of body weight if `per_kg`).
    pub l_per_h: f64,
    /// Whether the rate is per kg of body weight.
    pub per_kg: bool,
}

/// What an [`Amount`] measures.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum AmountKind {
    /// Amount of substance, mmol.
    Mmol,
    /// Mass, grams.
    Grams,
}

/// An amount of a drug or solute: mmol or grams.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Amount {
    /// Value in mmol or grams (see `kind`).
    pub value: f64,
    /// Substance amount or mass.
    pub kind: AmountKind,
}

impl Volume {
    /// Litres for a patient of `weight_kg`.
    pub fn litres_for(&self, weight_kg: f64) -> f64 {
        if self.per_kg {
            self.litres * weight_kg
        } else {
            self.litres
        }
    }
}

impl Rate {
    /// Litres per hour for a patient of `weight_kg`.
    pub fn l_per_h_for(&self, weight_kg: f64) -> f64 {
        if self.per_kg {
            self.l_per_h * weight_kg
        } else {
            self.l_per_h
        }
    }
}

impl Amount {
    /// Grams, or an error message naming what was expected.
    pub fn grams(&self, what: &str) -> Result<f64, String> {
        match self.kind {
            AmountKind::Grams => Ok(self.value),
            AmountKind::Mmol => Err(format!(
                "{what} is a mass: write it in grams, mg or micrograms, not mmol"
            )),
        }
    }

    /// mmol, converting a mass with the molar mass `g_per_mol`.
    pub fn mmol(&self, g_per_mol: f64) -> f64 {
        match self.kind {
            AmountKind::Mmol => self.value,
            AmountKind::Grams => self.value * 1000.0 / g_per_mol,
        }
    }
}

fn trim(x: f64) -> String {
    let s = format!("{x:.4}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    s.to_string()
}

impl fmt::Display for Duration {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.hours < 1.0 {
            write!(f, "{} min", trim(self.hours * 60.0))
        } else if self.hours >= 48.0 && (self.hours / 24.0).fract() == 0.0 {
            write!(f, "{} days", trim(self.hours / 24.0))
        } else {
            write!(f, "{} h", trim(self.hours))
        }
    }
}

impl fmt::Display for Volume {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match (self.per_kg, self.litres < 1.0) {
            (true, _) => write!(f, "{} mL/kg", trim(self.litres * 1000.0)),
            (false, true) => write!(f, "{} mL", trim(self.litres * 1000.0)),
            (false, false) => write!(f, "{} L", trim(self.litres)),
        }
    }
}

impl fmt::Display for Rate {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        if self.per_kg {
            write!(f, "{} mL/kg/h", trim(self.l_per_h * 1000.0))
        } else {
            write!(f, "{} mL/h", trim(self.l_per_h * 1000.0))
        }
    }
}

impl fmt::Display for Amount {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.kind {
            AmountKind::Mmol => write!(f, "{} mmol", trim(self.value)),
            AmountKind::Grams if self.value < 1e-3 => {
                write!(f, "{} micrograms", trim(self.value * 1e6))
            }
            AmountKind::Grams if self.value < 1.0 => write!(f, "{} mg", trim(self.value * 1e3)),
            AmountKind::Grams => write!(f, "{} g", trim(self.value)),
        }
    }
}

type Res<T> = Result<T, Box<EvalAltResult>>;

/// A runtime error at the position of the current call.
pub(crate) fn fail<T>(ctx: &NativeCallContext, message: impl Into<String>) -> Res<T> {
    Err(Box::new(EvalAltResult::ErrorRuntime(
        message.into().into(),
        ctx.call_position(),
    )))
}

fn checked(ctx: &NativeCallContext, word: &str, x: f64) -> Res<f64> {
    if x.is_finite() && x >= 0.0 {
        Ok(x)
    } else {
        fail(
            ctx,
            format!(
                "{word}({}): a quantity must be a finite number of zero or more",
                crate::numeric::show(x)
            ),
        )
    }
}

/// Register one unit word for both integer and float arguments.
fn unit_word<T: Clone + Send + Sync + 'static>(
    engine: &mut Engine,
    name: &'static str,
    make: fn(f64) -> T,
) {
    engine.register_fn(name, move |ctx: NativeCallContext, x: INT| -> Res<T> {
        Ok(make(checked(&ctx, name, x as f64)?))
    });
    engine.register_fn(name, move |ctx: NativeCallContext, x: FLOAT| -> Res<T> {
        Ok(make(checked(&ctx, name, x)?))
    });
}

/// Scaling by a plain number, for both integer and float factors.
macro_rules! scale_ops {
    ($engine:expr, $ty:ty, $field:ident) => {
        $engine.register_fn("*", |a: $ty, k: INT| {
            let mut a = a;
            a.$field *= k as f64;
            a
        });
        $engine.register_fn("*", |a: $ty, k: FLOAT| {
            let mut a = a;
            a.$field *= k;
            a
        });
        $engine.register_fn("*", |k: INT, a: $ty| {
            let mut a = a;
            a.$field *= k as f64;
            a
        });
        $engine.register_fn("*", |k: FLOAT, a: $ty| {
            let mut a = a;
            a.$field *= k;
            a
        });
        $engine.register_fn("/", |a: $ty, k: INT| {
            let mut a = a;
            a.$field /= k as f64;
            a
        });
        $engine.register_fn("/", |a: $ty, k: FLOAT| {
            let mut a = a;
            a.$field /= k;
            a
        });
        $engine.register_fn("to_string", |a: &mut $ty| a.to_string());
        $engine.register_fn("to_debug", |a: &mut $ty| a.to_string());
    };
}

/// Sum, difference, ratio and comparisons of two values of one kind whose
/// "flavour" (`per_kg`, mmol or grams) must agree.
macro_rules! same_kind_ops {
    ($engine:expr, $ty:ty, $field:ident, $flavour:expr, $what:expr) => {
        $engine.register_fn("+", |ctx: NativeCallContext, a: $ty, b: $ty| -> Res<$ty> {
            if $flavour(&a) != $flavour(&b) {
                return fail(&ctx, format!("cannot add {a} and {b}: {}", $what));
            }
            let mut a = a;
            a.$field += b.$field;
            Ok(a)
        });
        $engine.register_fn("-", |ctx: NativeCallContext, a: $ty, b: $ty| -> Res<$ty> {
            if $flavour(&a) != $flavour(&b) {
                return fail(&ctx, format!("cannot subtract {b} from {a}: {}", $what));
            }
            let mut a = a;
            a.$field -= b.$field;
            Ok(a)
        });
        $engine.register_fn(
            "/",
            |ctx: NativeCallContext, a: $ty, b: $ty| -> Res<FLOAT> {
                if $flavour(&a) != $flavour(&b) {
                    return fail(&ctx, format!("cannot divide {a} by {b}: {}", $what));
                }
                Ok(a.$field / b.$field)
            },
        );
        $engine.register_fn("==", |a: $ty, b: $ty| {
            $flavour(&a) == $flavour(&b) && a.$field == b.$field
        });
        $engine.register_fn("!=", |a: $ty, b: $ty| {
            $flavour(&a) != $flavour(&b) || a.$field != b.$field
        });
        $engine.register_fn("<", |a: $ty, b: $ty| a.$field < b.$field);
        $engine.register_fn(">", |a: $ty, b: $ty| a.$field > b.$field);
        $engine.register_fn("<=", |a: $ty, b: $ty| a.$field <= b.$field);
        $engine.register_fn(">=", |a: $ty, b: $ty| a.$field >= b.$field);
    };
}

fn vol(litres: f64, per_kg: bool) -> Volume {
    Volume { litres, per_kg }
}

fn grams(g: f64) -> Amount {
    Amount {
        value: g,
        kind: AmountKind::Grams,
    }
}

/// Register the unit types, unit words and their arithmetic.
pub(crate) fn register(engine: &mut Engine) {
    engine.register_type_with_name::<Duration>("duration");
    engine.register_type_with_name::<Volume>("volume");
    engine.register_type_with_name::<Rate>("rate");
    engine.register_type_with_name::<Amount>("amount");

    unit_word(engine, "minutes", |x| Duration { hours: x / 60.0 });
    unit_word(engine, "hours", |x| Duration { hours: x });
    unit_word(engine, "days", |x| Duration { hours: x * 24.0 });

    unit_word(engine, "ml", |x| vol(x / 1000.0, false));
    unit_word(engine, "litres", |x| vol(x, false));
    unit_word(engine, "liters", |x| vol(x, false));
    unit_word(engine, "ml_per_kg", |x| vol(x / 1000.0, true));

    unit_word(engine, "ml_per_h", |x| Rate {
        l_per_h: x / 1000.0,
        per_kg: false,
    });
    unit_word(engine, "litres_per_h", |x| Rate {
        l_per_h: x,
        per_kg: false,
    });
    unit_word(engine, "ml_per_kg_per_h", |x| Rate {
        l_per_h: x / 1000.0,
        per_kg: true,
    });

    unit_word(engine, "mmol", |x| Amount {
        value: x,
        kind: AmountKind::Mmol,
    });
    unit_word(engine, "grams", grams);
    unit_word(engine, "mg", |x| grams(x / 1000.0));
    unit_word(engine, "micrograms", |x| grams(x / 1e6));

    scale_ops!(engine, Duration, hours);
    scale_ops!(engine, Volume, litres);
    scale_ops!(engine, Rate, l_per_h);
    scale_ops!(engine, Amount, value);
    same_kind_ops!(engine, Duration, hours, |_: &Duration| true, "");
    same_kind_ops!(
        engine,
        Volume,
        litres,
        |v: &Volume| v.per_kg,
        "one is per kg of body weight and the other is not"
    );
    same_kind_ops!(
        engine,
        Rate,
        l_per_h,
        |v: &Rate| v.per_kg,
        "one is per kg of body weight and the other is not"
    );
    same_kind_ops!(
        engine,
        Amount,
        value,
        |a: &Amount| a.kind,
        "one is in mmol and the other a mass"
    );
    engine.register_fn("/", |v: Volume, d: Duration| Rate {
        l_per_h: v.litres / d.hours,
        per_kg: v.per_kg,
    });
    engine.register_fn("*", |r: Rate, d: Duration| Volume {
        litres: r.l_per_h * d.hours,
        per_kg: r.per_kg,
    });

    engine.register_get("hours", |d: &mut Duration| d.hours);
    engine.register_get("minutes", |d: &mut Duration| d.hours * 60.0);
    engine.register_get("days", |d: &mut Duration| d.hours / 24.0);
    engine.register_get("ml", |v: &mut Volume| v.litres * 1000.0);
    engine.register_get("litres", |v: &mut Volume| v.litres);
    engine.register_get("ml_per_h", |r: &mut Rate| r.l_per_h * 1000.0);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn display_is_readable() {
        assert_eq!(Duration { hours: 0.5 }.to_string(), "30 min");
        assert_eq!(Duration { hours: 72.0 }.to_string(), "3 days");
        assert_eq!(
            Volume {
                litres: 0.15,
                per_kg: false
            }
            .to_string(),
            "150 mL"
        );
        assert_eq!(
            Amount {
                value: 2e-6,
                kind: AmountKind::Grams
            }
            .to_string(),
            "2 micrograms"
        );
    }

    #[test]
    fn conversions() {
        // 9 g of sodium chloride at 58.44 g/mol is 154 mmol (common practice).
        let salt = Amount {
            value: 9.0,
            kind: AmountKind::Grams,
        };
        assert!((salt.mmol(58.44) - 154.0).abs() < 0.1);
        let v = Volume {
            litres: 0.02,
            per_kg: true,
        };
        assert!((v.litres_for(70.0) - 1.4).abs() < 1e-12);
    }
}
