//! Loop margins found numerically from a complex loop gain: every gain crossover, the phase
//! margin at each, the phase crossover and the gain margin, on a logarithmic grid refined by
//! bisection (no asymptotes).

use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::positive;
use crate::units::{si, Frequency};
use num_complex::Complex64;

/// Fewest grid points [`loop_margins`] accepts.
pub const MIN_POINTS: usize = 16;
/// Most grid points [`loop_margins`] accepts.
pub const MAX_POINTS: usize = 100_000;

/// Crossover, phase and gain margin of a loop.
#[derive(Clone, Debug, PartialEq)]
pub struct LoopMargins {
    /// Every frequency where |T| crosses 1, lowest first.
    pub crossovers: Vec<Frequency>,
    /// Phase margin at each crossover, degrees: 180° + ∠T, the phase unwrapped from the low
    /// end of the band.
    pub phase_margins: Vec<f64>,
    /// Frequency where the phase first reaches −180° (mod 360°) above the first crossover,
    /// if it does within the band.
    pub phase_crossover: Option<Frequency>,
    /// Gain margin, dB: −20·log10|T| at the phase crossover, or at the band's upper edge when
    /// the phase does not reach −180° within the band (then flagged by
    /// `phase_crossover = None`).
    pub gain_margin: f64,
    /// Upper edge of the band searched.
    pub band_high: Frequency,
}

impl LoopMargins {
    /// The first (lowest) crossover.
    pub fn crossover(&self) -> Option<Frequency> {
        self.crossovers.first().copied()
    }
    /// The smallest phase margin over the crossovers (None without a crossover).
    pub fn phase_margin(&self) -> Option<f64> {
        self.phase_margins.iter().copied().reduce(f64::min)
    }
}

fn wrap(mut deg: f64, near: f64) -> f64 {
    while deg - near > 180.0 {
        deg -= 360.0;
    }
    while deg - near < -180.0 {
        deg += 360.0;
    }
    deg
}

/// Finds the gain crossovers, phase margins, phase crossover and gain margin of a loop gain.
///
/// Method: T is evaluated at `points` frequencies spaced logarithmically over
/// [`low`, `high`]; the phase is unwrapped from the low end (each step taken within ±180° of
/// the last); each bracket where |T| − 1 changes sign is refined by 60 bisections on log f,
/// as is the first bracket above the first crossover where the unwrapped phase crosses
/// −180° − k·360°. Phase margin = 180° + ∠T at a crossover; gain margin = −20·log10|T| at
/// the phase crossover (or at `high` when there is none: a bound, not a crossing).
/// Assumes no feature narrower than the grid spacing (a resonance of Q above about
/// `points`/20 per decade may be missed). Errors: non-positive or unordered band, `points`
/// outside 16 … 100 000, a non-finite T.
/// Reference: the Nyquist-based definitions of crossover and margins, Erickson & Maksimović,
/// 3rd ed. (2020), section 9.4 (phase margin) — recalled from memory.
pub fn loop_margins(
    loop_gain: impl Fn(Frequency) -> Complex64,
    low: Frequency,
    high: Frequency,
    points: usize,
) -> Result<LoopMargins> {
    let lo = positive("band_low", low)?.value;
    let hi = positive("band_high", high)?.value;
    if hi <= lo {
        return Err(Error::invalid(format!(
            "the band's upper end ({}) must be above its lower end ({})",
            super::divider::show(high),
            super::divider::show(low)
        )));
    }
    if !(MIN_POINTS..=MAX_POINTS).contains(&points) {
        return Err(Error::out_of_range(format!(
            "`points` must be {MIN_POINTS} … {MAX_POINTS}, got {points}"
        )));
    }
    let eval = |f: f64| -> Result<Complex64> {
        let t = loop_gain(si(f));
        if t.re.is_finite() && t.im.is_finite() && t.norm() > 0.0 {
            Ok(t)
        } else {
            Err(Error::invalid(format!(
                "the loop gain is not finite (or zero) at {}",
                super::divider::show(si::<Frequency>(f))
            )))
        }
    };
    let ratio = (hi / lo).ln();
    let freq = |k: usize| lo * (ratio * k as f64 / (points - 1) as f64).exp();
    let mut fs = Vec::with_capacity(points);
    let mut mags = Vec::with_capacity(points);
    let mut phases: Vec<f64> = Vec::with_capacity(points);
    for k in 0..points {
        let f = freq(k);
        let t = eval(f)?;
        let p = t.arg().to_degrees();
        let p = match phases.last() {
            Some(&last) => wrap(p, last),
            None => p,
        };
        fs.push(f);
        mags.push(t.norm());
        phases.push(p);
    }
    // refine a bracket [a, b] on log f for g(f) = 0, g(a) and g(b) of opposite sign
    let refine = |a: f64, b: f64, g: &dyn Fn(f64) -> Result<f64>| -> Result<f64> {
        let (mut a, mut b) = (a.ln(), b.ln());
        let ga = g(a.exp())?;
        for _ in 0..60 {
            let m = 0.5 * (a + b);
            let gm = g(m.exp())?;
            if (gm > 0.0) == (ga > 0.0) {
                a = m;
            } else {
                b = m;
            }
        }
        Ok((0.5 * (a + b)).exp())
    };
    let mut crossovers = Vec::new();
    let mut margins = Vec::new();
    for k in 0..points - 1 {
        let (m0, m1) = (mags[k].ln(), mags[k + 1].ln());
        if m0 == 0.0 || (m0 > 0.0) != (m1 > 0.0) {
            let f = if m0 == 0.0 {
                fs[k]
            } else {
                refine(fs[k], fs[k + 1], &|f| Ok(eval(f)?.norm().ln()))?
            };
            let p = wrap(eval(f)?.arg().to_degrees(), phases[k]);
            crossovers.push(si::<Frequency>(f));
            margins.push(180.0 + p);
        }
    }
    let start = crossovers.first().map(|f| f.value).unwrap_or(lo);
    let mut phase_crossover = None;
    let mut gain_margin = -20.0 * eval(hi)?.norm().log10();
    for k in 0..points - 1 {
        if fs[k + 1] < start {
            continue;
        }
        // the odd multiple of 180° below phases[k], if phases[k + 1] is past it
        let level = ((phases[k] + 180.0) / 360.0).floor() * 360.0 - 180.0;
        if phases[k + 1] <= level && phases[k] > level {
            let pk = phases[k];
            let g = |f: f64| -> Result<f64> { Ok(wrap(eval(f)?.arg().to_degrees(), pk) - level) };
            let f = refine(fs[k], fs[k + 1], &g)?;
            phase_crossover = Some(si::<Frequency>(f));
            gain_margin = -20.0 * eval(f)?.norm().log10();
            break;
        }
    }
    Ok(LoopMargins {
        crossovers,
        phase_margins: margins,
        phase_crossover,
        gain_margin,
        band_high: high,
    })
}

impl Record for LoopMargins {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![Field::new("crossover_count", self.crossovers.len() as i64)];
        match (self.crossover(), self.phase_margin()) {
            (Some(f), Some(p)) => {
                v.push(Field::quantity("crossover_frequency", f));
                v.push(Field::new("phase_margin_degrees", p));
            }
            _ => {
                v.push(Field::new("crossover_frequency", "none"));
                v.push(Field::new("phase_margin_degrees", "none"));
            }
        }
        v.push(Field::new("gain_margin_db", self.gain_margin));
        match self.phase_crossover {
            Some(f) => v.push(Field::quantity("phase_crossover_frequency", f)),
            None => v.push(Field::new("phase_crossover_frequency", "beyond band")),
        }
        v
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    #[test]
    fn integrator_crosses_at_its_unity_frequency() {
        // T = ω_c/s: crossover at f_c, phase margin 90° (by definition of the integrator)
        let fc = 1234.0;
        let m = loop_margins(
            |f| Complex64::new(0.0, -fc / f.value),
            si(1.0),
            si(1e6),
            200,
        )
        .unwrap();
        assert_eq!(m.crossovers.len(), 1);
        assert!((m.crossover().unwrap().value / fc - 1.0).abs() < 1e-9);
        assert!((m.phase_margin().unwrap() - 90.0).abs() < 1e-6);
        assert!(m.phase_crossover.is_none());
        // three real poles at 1 kHz and gain 8: phase −180° at √3·1 kHz, |T| = 8/8 = 1 → 0 dB
        let t = |f: Frequency| {
            let s = Complex64::new(1.0, f.value / 1e3);
            Complex64::new(8.0, 0.0) / (s * s * s) * 0.5
        };
        let m = loop_margins(t, si(1.0), si(1e6), 300).unwrap();
        let pc = m.phase_crossover.unwrap().value;
        assert!((pc / (3f64.sqrt() * 1e3) - 1.0).abs() < 1e-9, "{pc}");
        assert!((m.gain_margin - 20.0 * 2f64.log10()).abs() < 1e-6);
        let _ = PI;
    }
}
