//! A safeguarded root finder for a function of one dose: Brent's method
//! (inverse quadratic interpolation and secant steps, falling back to
//! bisection whenever a step would leave the bracket or shrink it too
//! slowly), after R. P. Brent, *Algorithms for Minimization without
//! Derivatives* (1973), chapter 4. Every evaluation of the function is a
//! full simulation, so the finder counts them and stops at a tolerance on
//! the dose or on the function's value, whichever comes first.

/// Where a root search ended.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Root {
    /// The dose at the end of the search.
    pub x: f64,
    /// The function's value there.
    pub fx: f64,
    /// The bracket that still holds the root, `lo < hi`.
    pub bracket: (f64, f64),
    /// Evaluations made by the search (the two ends of the bracket not
    /// counted).
    pub evaluations: usize,
}

/// Tolerances of a search.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerance {
    /// Stop when the bracket is narrower than this (units of the dose).
    pub x: f64,
    /// Stop when |f| is below this (units of the function).
    pub f: f64,
    /// Stop after this many evaluations.
    pub max_evaluations: usize,
}

/// Find a root of `f` in `[a, b]`, given `fa = f(a)` and `fb = f(b)` of
/// opposite signs (or one of them zero). The function may fail (a
/// simulation that could not finish): the error is passed on.
pub fn brent<E>(
    mut f: impl FnMut(f64) -> Result<f64, E>,
    a: f64,
    fa: f64,
    b: f64,
    fb: f64,
    tol: Tolerance,
) -> Result<Root, E> {
    debug_assert!(fa * fb <= 0.0, "the ends must bracket a root");
    let done = |x: f64, fx: f64, lo: f64, hi: f64, n: usize| Root {
        x,
        fx,
        bracket: (lo.min(hi), lo.max(hi)),
        evaluations: n,
    };
    if fa == 0.0 {
        return Ok(done(a, fa, a, a, 0));
    }
    if fb == 0.0 {
        return Ok(done(b, fb, b, b, 0));
    }
    // b is the best estimate, a the previous one, c the other end of the
    // bracket (f(b) and f(c) of opposite signs).
    let (mut a, mut fa, mut b, mut fb) = (a, fa, b, fb);
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    let mut n = 0;
    loop {
        if fb.signum() == fc.signum() {
            c = a;
            fc = fa;
            d = b - a;
            e = d;
        }
        if fc.abs() < fb.abs() {
            a = b;
            b = c;
            c = a;
            fa = fb;
            fb = fc;
            fc = fa;
        }
        let half = 0.5 * (c - b);
        if fb.abs() <= tol.f || half.abs() <= 0.5 * tol.x || n >= tol.max_evaluations {
            return Ok(done(b, fb, b, c, n));
        }
        if e.abs() >= 0.5 * tol.x && fa.abs() > fb.abs() {
            // Try interpolation: secant when only two points differ,
            // inverse quadratic otherwise.
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * half * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * half * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            } else {
                p = -p;
            }
            // Accept the step only when it stays well inside the bracket
            // and shrinks faster than the step before last.
            if 2.0 * p < (3.0 * half * q - (0.5 * tol.x * q).abs()).min((e * q).abs()) {
                e = d;
                d = p / q;
            } else {
                d = half;
                e = d;
            }
        } else {
            d = half;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > 0.5 * tol.x {
            d
        } else {
            (0.5 * tol.x).copysign(half)
        };
        fb = f(b)?;
        n += 1;
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::convert::Infallible;

    fn tol() -> Tolerance {
        Tolerance {
            x: 1e-10,
            f: 0.0,
            max_evaluations: 100,
        }
    }

    fn solve(f: impl Fn(f64) -> f64, a: f64, b: f64) -> Root {
        brent(|x| Ok::<_, Infallible>(f(x)), a, f(a), b, f(b), tol()).unwrap()
    }

    #[test]
    fn cube_root_of_two() {
        // x³ − 2 = 0 at 2^(1/3) = 1.259921049894873 (exact value).
        let r = solve(|x| x * x * x - 2.0, 0.0, 2.0);
        assert!((r.x - 2f64.cbrt()).abs() < 1e-9, "{r:?}");
        assert!(r.evaluations < 15, "{r:?}");
    }

    #[test]
    fn transcendental_root() {
        // cos x = x at 0.7390851332151607 (the Dottie number, common
        // practice as a root-finder test).
        let r = solve(|x| x.cos() - x, 0.0, 1.0);
        assert!((r.x - 0.739_085_133_215_160_7).abs() < 1e-9, "{r:?}");
    }

    #[test]
    fn a_flat_then_steep_function_still_converges() {
        // A step-like response (a dose that does little until a threshold,
        // as a water diuresis that starts once vasopressin falls): the
        // safeguard falls back to bisection and keeps the bracket.
        let f = |x: f64| (20.0 * (x - 0.7)).tanh() + 0.01 * x;
        let r = solve(f, 0.0, 5.0);
        assert!(f(r.x).abs() < 1e-8, "{r:?}");
        assert!(r.evaluations < 60, "{r:?}");
    }

    #[test]
    fn decreasing_functions_and_tolerances() {
        let r = brent(
            |x| Ok::<_, Infallible>(3.0 - x),
            0.0,
            3.0,
            10.0,
            -7.0,
            Tolerance {
                x: 0.01,
                f: 0.05,
                max_evaluations: 50,
            },
        )
        .unwrap();
        assert!((r.x - 3.0).abs() < 0.05, "{r:?}");
        assert!(r.bracket.0 <= r.x && r.x <= r.bracket.1);
    }

    #[test]
    fn errors_pass_through() {
        let r = brent(|_| Err::<f64, _>("failed"), 0.0, -1.0, 1.0, 1.0, tol());
        assert_eq!(r, Err("failed"));
    }
}
