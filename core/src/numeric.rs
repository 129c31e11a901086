//! Bracketed root finding shared by the domains: Brent's method for a function alone, and a
//! safeguarded Newton method where the derivative is cheap. Both keep a sign-changing bracket,
//! so they cannot leave the range the caller gave, and both are bounded in evaluations.
//!
//! The solvers work on plain SI numbers: a domain converts its `uom` quantities at the call and
//! back on the result, so no dimensioned value crosses a public API as a bare `f64` (the
//! module is crate-private for that reason).
//!
//! Evaluations are counted, and a bracket end the caller already evaluated is passed in as a
//! [`Sample`], so no point is evaluated twice.

use crate::error::{Error, Result};

/// A point where the function is known: `x` and `f(x)`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Sample {
    /// The argument.
    pub x: f64,
    /// The function's value there.
    pub f: f64,
}

impl Sample {
    /// A sample at `x` with value `f`.
    pub fn new(x: f64, f: f64) -> Self {
        Self { x, f }
    }
}

/// When to stop: the bracket is narrower than `absolute + relative·|x|`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Tolerance {
    /// Absolute width, in the unit of x.
    pub absolute: f64,
    /// Width relative to |x|.
    pub relative: f64,
}

impl Tolerance {
    /// A purely relative tolerance.
    pub const fn relative(relative: f64) -> Self {
        Self {
            absolute: 0.0,
            relative,
        }
    }
    /// A purely absolute tolerance.
    pub const fn absolute(absolute: f64) -> Self {
        Self {
            absolute,
            relative: 0.0,
        }
    }
    /// The allowed bracket width at x (never below a few units of round-off of x).
    fn width(&self, x: f64) -> f64 {
        (self.absolute + self.relative * x.abs()).max(4.0 * f64::EPSILON * x.abs())
    }
}

/// A converged root: the best estimate, the final bracket (in x order) and the work done.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Root {
    /// The best estimate of the root (the end of the final bracket with the smaller |f|, or
    /// the Newton iterate).
    pub x: f64,
    /// The final bracket end with the smaller x.
    pub lo: Sample,
    /// The final bracket end with the larger x.
    pub hi: Sample,
    /// Function evaluations made by the solver (the caller's samples not counted).
    pub evaluations: usize,
}

fn check_bracket(what: &str, a: Sample, b: Sample) -> Result<()> {
    if !(a.x.is_finite() && b.x.is_finite() && a.f.is_finite() && b.f.is_finite()) {
        return Err(Error::infeasible(format!(
            "{what}: the bracket is not finite (f({}) = {}, f({}) = {})",
            a.x, a.f, b.x, b.f
        )));
    }
    if a.f.signum() == b.f.signum() && a.f != 0.0 && b.f != 0.0 {
        return Err(Error::infeasible(format!(
            "{what}: no sign change between {} and {} (f = {} and {})",
            a.x, b.x, a.f, b.f
        )));
    }
    Ok(())
}

fn finite(what: &str, x: f64, f: f64) -> Result<f64> {
    if f.is_finite() {
        Ok(f)
    } else {
        Err(Error::infeasible(format!(
            "{what}: the equation is not finite at {x}"
        )))
    }
}

fn ordered(a: Sample, b: Sample) -> (Sample, Sample) {
    if a.x <= b.x {
        (a, b)
    } else {
        (b, a)
    }
}

/// Finds a root of `f` inside the bracket `[a, b]` by Brent's method.
///
/// Method: each step takes inverse quadratic interpolation through the last three points (a
/// secant step when only two are distinct), and falls back to bisection whenever the
/// interpolated step leaves the bracket or shrinks more slowly than bisection would; the
/// bracket always keeps a sign change. Convergence is superlinear on smooth functions and never
/// slower than about twice bisection's evaluation count.
/// Assumes f is continuous on the bracket and `f(a)`, `f(b)` differ in sign (or one is zero).
/// Stops when the bracket is narrower than the tolerance at the estimate, or f is exactly zero.
/// Errors (naming `what`): a bracket without a sign change, a non-finite value, or more than
/// `max_evaluations` evaluations. Reference: R. P. Brent's algorithm (1973) as commonly taught
/// in numerical-analysis courses; written from memory, checked against closed-form roots in the
/// tests.
pub(crate) fn brent(
    what: &str,
    mut f: impl FnMut(f64) -> Result<f64>,
    a: Sample,
    b: Sample,
    tol: Tolerance,
    max_evaluations: usize,
) -> Result<Root> {
    check_bracket(what, a, b)?;
    let (mut a, mut fa, mut b, mut fb) = (a.x, a.f, b.x, b.f);
    if fa == 0.0 {
        return Ok(Root {
            x: a,
            lo: Sample::new(a, fa),
            hi: Sample::new(a, fa),
            evaluations: 0,
        });
    }
    // c is the other end of the bracket [b, c]; b is the best estimate
    let (mut c, mut fc) = (a, fa);
    let mut d = b - a;
    let mut e = d;
    let mut evaluations = 0;
    loop {
        if fb != 0.0 && fb.signum() == fc.signum() {
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
        let tol1 = 0.5 * tol.width(b);
        let xm = 0.5 * (c - b);
        if xm.abs() <= tol1 || fb == 0.0 {
            let (lo, hi) = ordered(Sample::new(b, fb), Sample::new(c, fc));
            return Ok(Root {
                x: b,
                lo,
                hi,
                evaluations,
            });
        }
        if evaluations >= max_evaluations {
            return Err(Error::infeasible(format!(
                "{what}: no convergence in {max_evaluations} evaluations (bracket {} to {})",
                b.min(c),
                b.max(c)
            )));
        }
        if e.abs() >= tol1 && fa.abs() > fb.abs() {
            let s = fb / fa;
            let (mut p, mut q);
            if a == c {
                p = 2.0 * xm * s;
                q = 1.0 - s;
            } else {
                let qa = fa / fc;
                let r = fb / fc;
                p = s * (2.0 * xm * qa * (qa - r) - (b - a) * (r - 1.0));
                q = (qa - 1.0) * (r - 1.0) * (s - 1.0);
            }
            if p > 0.0 {
                q = -q;
            }
            p = p.abs();
            let min1 = 3.0 * xm * q - (tol1 * q).abs();
            let min2 = (e * q).abs();
            if 2.0 * p < min1.min(min2) {
                e = d;
                d = p / q;
            } else {
                d = xm;
                e = d;
            }
        } else {
            d = xm;
            e = d;
        }
        a = b;
        fa = fb;
        b += if d.abs() > tol1 { d } else { tol1.copysign(xm) };
        fb = finite(what, b, f(b)?)?;
        evaluations += 1;
    }
}

/// Finds a root of `f` inside the bracket `[a, b]` by Newton's method with bisection as a
/// safeguard; `f` returns the value and the derivative.
///
/// Method: from `guess` (the bracket's middle if none, or if it lies outside), each step is a
/// Newton step x − f/f′ unless it would leave the bracket or fails to halve the step before
/// last, in which case it bisects; every evaluation narrows the bracket. Quadratic convergence
/// near a simple root, so a warm start from a nearby earlier solution takes two or three steps.
/// Assumes f is continuous with a finite derivative inside the bracket and changes sign across
/// it. Stops when a step is below the tolerance at the iterate (the error is then of the order of
/// the step squared) or f is exactly zero.
/// Errors (naming `what`): a bracket without a sign change, a non-finite value or derivative,
/// or more than `max_evaluations` evaluations.
/// Reference: Newton's method safeguarded by bisection, common practice in numerical analysis
/// (no single published source); checked against closed-form roots in the tests.
#[inline]
pub(crate) fn newton_bracketed(
    what: &str,
    mut f: impl FnMut(f64) -> Result<(f64, f64)>,
    a: Sample,
    b: Sample,
    guess: Option<f64>,
    tol: Tolerance,
    max_evaluations: usize,
) -> Result<Root> {
    check_bracket(what, a, b)?;
    for s in [a, b] {
        if s.f == 0.0 {
            return Ok(Root {
                x: s.x,
                lo: s,
                hi: s,
                evaluations: 0,
            });
        }
    }
    // neg has f < 0, pos has f > 0 (either may be the larger x)
    let (mut neg, mut pos) = if a.f < 0.0 { (a, b) } else { (b, a) };
    let (lo_x, hi_x) = (a.x.min(b.x), a.x.max(b.x));
    let mut x = match guess {
        Some(g) if g > lo_x && g < hi_x => g,
        _ => 0.5 * (a.x + b.x),
    };
    let mut step_before = (b.x - a.x).abs();
    let mut step = step_before;
    let mut evaluations = 0;
    loop {
        if evaluations >= max_evaluations {
            return Err(Error::infeasible(format!(
                "{what}: no convergence in {max_evaluations} evaluations (bracket {} to {})",
                neg.x.min(pos.x),
                neg.x.max(pos.x)
            )));
        }
        let (fx, dfx) = f(x)?;
        evaluations += 1;
        let fx = finite(what, x, fx)?;
        let dfx = finite(what, x, dfx)?;
        if fx == 0.0 {
            let here = Sample::new(x, fx);
            return Ok(Root {
                x,
                lo: here,
                hi: here,
                evaluations,
            });
        }
        if fx < 0.0 {
            neg = Sample::new(x, fx);
        } else {
            pos = Sample::new(x, fx);
        }
        let newton_leaves = ((x - pos.x) * dfx - fx) * ((x - neg.x) * dfx - fx) > 0.0;
        let too_slow = (2.0 * fx).abs() > (step_before * dfx).abs();
        step_before = step;
        if newton_leaves || too_slow || dfx == 0.0 {
            step = 0.5 * (pos.x - neg.x);
            x = neg.x + step;
        } else {
            step = fx / dfx;
            x -= step;
        }
        if step.abs() <= tol.width(x) {
            let (lo, hi) = ordered(neg, pos);
            return Ok(Root {
                x,
                lo,
                hi,
                evaluations,
            });
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use proptest::prelude::*;

    fn ok(x: f64) -> Result<f64> {
        Ok(x)
    }

    #[test]
    fn brent_finds_the_square_root_of_two() {
        // exact value: the positive root of x² − 2 is √2
        let f = |x: f64| ok(x * x - 2.0);
        let r = brent(
            "x² − 2",
            f,
            Sample::new(0.0, -2.0),
            Sample::new(2.0, 2.0),
            Tolerance::relative(1e-12),
            100,
        )
        .unwrap();
        assert!((r.x - 2f64.sqrt()).abs() < 1e-11, "{r:?}");
        assert!(r.lo.f <= 0.0 && r.hi.f >= 0.0);
        assert!(
            r.evaluations < 12,
            "superlinear: {} evaluations",
            r.evaluations
        );
    }

    #[test]
    fn brent_handles_a_cosine_and_a_flat_cubic() {
        // exact values: cos x = x at the Dottie number 0.739085133215160…; x³ = 0 at 0
        let r = brent(
            "cos x − x",
            |x: f64| ok(x.cos() - x),
            Sample::new(0.0, 1.0),
            Sample::new(1.0, 1f64.cos() - 1.0),
            Tolerance::absolute(1e-14),
            100,
        )
        .unwrap();
        assert!((r.x - 0.739_085_133_215_160_6).abs() < 1e-13);
        let r = brent(
            "x³",
            |x: f64| ok(x * x * x),
            Sample::new(-1.0, -1.0),
            Sample::new(2.0, 8.0),
            Tolerance::absolute(1e-9),
            200,
        )
        .unwrap();
        assert!(r.x.abs() < 1e-8, "{r:?}");
    }

    #[test]
    fn brent_refuses_a_bracket_without_sign_change_and_bounds_its_work() {
        let e = brent(
            "x² + 1",
            |x: f64| ok(x * x + 1.0),
            Sample::new(-1.0, 2.0),
            Sample::new(1.0, 2.0),
            Tolerance::relative(1e-9),
            50,
        )
        .unwrap_err();
        assert!(e.message().contains("x² + 1: no sign change"), "{e}");
        let e = brent(
            "x − 1/3",
            |x: f64| ok(x - 1.0 / 3.0),
            Sample::new(0.0, -1.0 / 3.0),
            Sample::new(1.0, 2.0 / 3.0),
            Tolerance::absolute(0.0),
            0,
        )
        .unwrap_err();
        assert!(
            e.message().contains("no convergence in 0 evaluations"),
            "{e}"
        );
        let e = brent(
            "1/x",
            |x: f64| ok(if x > 0.5 { f64::INFINITY } else { -1.0 }),
            Sample::new(0.0, -1.0),
            Sample::new(1.0, 1.0),
            Tolerance::absolute(1e-9),
            50,
        )
        .unwrap_err();
        assert!(e.message().contains("not finite"), "{e}");
    }

    #[test]
    fn newton_converges_from_a_warm_start_in_few_steps() {
        // exact value: the root of x² − 2 is √2; from 1.4 Newton needs three steps to 1e-12
        let f = |x: f64| Ok((x * x - 2.0, 2.0 * x));
        let r = newton_bracketed(
            "x² − 2",
            f,
            Sample::new(0.0, -2.0),
            Sample::new(2.0, 2.0),
            Some(1.4),
            Tolerance::relative(1e-12),
            50,
        )
        .unwrap();
        assert!((r.x - 2f64.sqrt()).abs() < 1e-12, "{r:?}");
        assert!(r.evaluations <= 4, "{} evaluations", r.evaluations);
    }

    #[test]
    fn newton_stays_in_the_bracket_where_newton_alone_would_leave() {
        // atan x has its root at 0; plain Newton from x = 2 diverges, the safeguard bisects
        let f = |x: f64| Ok((x.atan(), 1.0 / (1.0 + x * x)));
        let r = newton_bracketed(
            "atan",
            f,
            Sample::new(-1.0, (-1f64).atan()),
            Sample::new(3.0, 3f64.atan()),
            Some(2.0),
            Tolerance::absolute(1e-12),
            60,
        )
        .unwrap();
        assert!(r.x.abs() < 1e-12, "{r:?}");
        let e = newton_bracketed(
            "atan",
            f,
            Sample::new(-1.0, (-1f64).atan()),
            Sample::new(3.0, 3f64.atan()),
            None,
            Tolerance::absolute(0.0),
            3,
        )
        .unwrap_err();
        assert!(e.message().contains("atan: no convergence in 3"), "{e}");
    }

    proptest! {
        // invariant: for any monotone cubic with a root inside the bracket, both solvers
        // return a point within the tolerance of the root, and the bracket keeps the sign
        // change (common practice, no published source: the root is known by construction)
        #[test]
        fn both_solvers_find_a_constructed_root(
            root in -50.0f64..50.0,
            scale in 0.01f64..100.0,
            cubic in 0.0f64..3.0,
            left in 0.01f64..40.0,
            right in 0.01f64..40.0,
            guess in 0.0f64..1.0,
        ) {
            let g = move |x: f64| scale * ((x - root) + cubic * (x - root).powi(3));
            let dg = move |x: f64| scale * (1.0 + 3.0 * cubic * (x - root).powi(2));
            let (a, b) = (root - left, root + right);
            let tol = Tolerance { absolute: 1e-9, relative: 1e-9 };
            let allowed = 1e-9 + 1e-9 * root.abs() + 1e-12;
            let r = brent("cubic", |x| Ok(g(x)), Sample::new(a, g(a)), Sample::new(b, g(b)), tol, 200)
                .unwrap();
            prop_assert!((r.x - root).abs() <= allowed * 2.0, "brent {r:?} vs {root}");
            prop_assert!(r.lo.f <= 0.0 && r.hi.f >= 0.0);
            prop_assert!(r.lo.x <= root + allowed && r.hi.x >= root - allowed);
            let start = a + guess * (b - a);
            let r = newton_bracketed(
                "cubic",
                |x| Ok((g(x), dg(x))),
                Sample::new(a, g(a)),
                Sample::new(b, g(b)),
                Some(start),
                tol,
                200,
            )
            .unwrap();
            prop_assert!((r.x - root).abs() <= allowed * 2.0, "newton {r:?} vs {root}");
        }
    }
}
