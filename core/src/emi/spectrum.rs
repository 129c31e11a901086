//! Harmonic amplitudes of the converter's periodic waveforms by Fourier series: any
//! piecewise-linear period (exact), the primary current (CCM trapezoid, DCM triangle) and the
//! drain-voltage trapezoid with finite rise and fall times.

use super::complex::Complex;
use crate::error::{Error, Result};
use crate::units::validate::{non_negative, positive};
use crate::units::{
    format_number, si, unit_symbol, ElectricCurrent, ElectricPotential, Frequency, Time,
    TypedQuantity,
};
use std::f64::consts::PI;

/// One period of a waveform, piecewise linear between breakpoints.
///
/// Breakpoints are `(phase, value)` with phase the fraction of the period (0 … 1, not
/// decreasing); two points at the same phase make a step. The first point must be at phase 0
/// and the last at phase 1; the waveform is periodic, so the value may step from the last
/// point back to the first.
#[derive(Clone, Debug, PartialEq)]
pub struct PeriodicWaveform<Q: TypedQuantity> {
    points: Vec<(f64, Q)>,
}

impl<Q: TypedQuantity> PeriodicWaveform<Q> {
    /// Builds a waveform, checking the breakpoints (finite, phases 0 … 1 in order, starting at
    /// 0 and ending at 1).
    pub fn new(points: Vec<(f64, Q)>) -> Result<Self> {
        if points.len() < 2 {
            return Err(Error::invalid(
                "a periodic waveform needs at least two breakpoints (phase 0 and phase 1)",
            ));
        }
        let mut last = 0.0;
        for (i, (p, q)) in points.iter().enumerate() {
            if !(p.is_finite() && (0.0..=1.0).contains(p) && *p >= last) {
                return Err(Error::invalid(format!(
                    "breakpoint {i}: the phase must lie in 0 … 1 and not decrease, got {}",
                    format_number(*p)
                )));
            }
            if !q.si_value().is_finite() {
                return Err(Error::invalid(format!(
                    "breakpoint {i}: the value must be finite"
                )));
            }
            last = *p;
        }
        if points[0].0 != 0.0 || points[points.len() - 1].0 != 1.0 {
            return Err(Error::invalid(
                "a periodic waveform's breakpoints must start at phase 0 and end at phase 1",
            ));
        }
        Ok(Self { points })
    }

    /// The breakpoints.
    pub fn points(&self) -> &[(f64, Q)] {
        &self.points
    }

    /// The complex Fourier coefficient c_n = ∫₀¹ x(θ)·e^{−j2πnθ} dθ of the normalised period.
    pub(crate) fn coefficient(&self, n: u32) -> Complex {
        let mut sum = Complex::real(0.0);
        if n == 0 {
            for w in self.points.windows(2) {
                let (t0, y0) = (w[0].0, w[0].1.si_value());
                let (t1, y1) = (w[1].0, w[1].1.si_value());
                sum = sum + Complex::real(0.5 * (y0 + y1) * (t1 - t0));
            }
            return sum;
        }
        let w_n = 2.0 * PI * f64::from(n);
        // antiderivative of (y0 + s(t − t0))·e^{−jωt}:
        // F(t) = −y(t)·e^{−jωt}/(jω) + s·e^{−jωt}/ω²
        for w in self.points.windows(2) {
            let (t0, y0) = (w[0].0, w[0].1.si_value());
            let (t1, y1) = (w[1].0, w[1].1.si_value());
            if t1 <= t0 {
                continue; // a step has no width
            }
            let s = (y1 - y0) / (t1 - t0);
            let f = |t: f64, y: f64| {
                let e = Complex::expj(-w_n * t);
                (e * Complex::new(0.0, 1.0 / w_n)).scale(y) + e.scale(s / (w_n * w_n))
            };
            sum = sum + f(t1, y1) - f(t0, y0);
        }
        sum
    }

    /// The mean (DC) value over a period: c₀ = ∫₀¹ x dθ (trapezoid rule, exact for a
    /// piecewise-linear period). Reference: the Fourier series' DC term, Erickson &
    /// Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020), input filter chapter.
    pub fn mean(&self) -> Q {
        si(self.coefficient(0).re)
    }

    /// Peak amplitude of harmonic `n` (n ≥ 1): A_n = 2·|c_n|, with
    /// c_n = ∫₀¹ x(θ)·e^{−j2πnθ} dθ evaluated exactly on each linear piece:
    /// ∫ (y₀ + s(θ−θ₀))·e^{−jωθ} dθ = [−y·e^{−jωθ}/(jω) + s·e^{−jωθ}/ω²], ω = 2πn.
    /// Reference: Fourier series of a periodic function, Erickson & Maksimović (2020),
    /// input filter chapter (harmonics of the input current); the closed form is integration
    /// by parts.
    pub fn harmonic_amplitude(&self, n: u32) -> Result<Q> {
        if n == 0 {
            return Err(Error::invalid(
                "`harmonic` must be 1 or more (use mean() for the DC value)",
            ));
        }
        let a = 2.0 * self.coefficient(n).abs();
        if a.is_finite() {
            Ok(si(a))
        } else {
            Err(Error::out_of_range(format!(
                "harmonic {n} of this waveform overflows: its breakpoint values (in {}) are too \
                 large to compute with",
                unit_symbol(Q::dimension())
            )))
        }
    }
}

/// The flyback's primary (switch) current over one switching period.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum PrimaryCurrentShape {
    /// Continuous conduction: the current steps to `valley` at turn-on, ramps to `peak` at
    /// the end of the on-time `duty`·T, and is zero for the rest of the period (a trapezoid).
    Continuous {
        /// Current at turn-on.
        valley: ElectricCurrent,
        /// Current at turn-off.
        peak: ElectricCurrent,
        /// On-time as a fraction of the period (0 … 1).
        duty: f64,
    },
    /// Discontinuous conduction: the current ramps from zero to `peak` over the on-time
    /// `duty`·T and is zero for the rest of the period (a triangle with a vertical fall; the
    /// secondary conduction and idle fractions do not change the primary current).
    Discontinuous {
        /// Current at turn-off.
        peak: ElectricCurrent,
        /// On-time as a fraction of the period (0 … 1).
        duty: f64,
    },
}

fn fraction(name: &str, x: f64) -> Result<f64> {
    if x.is_finite() && x > 0.0 && x < 1.0 {
        Ok(x)
    } else {
        Err(Error::out_of_range(format!(
            "`{name}` must be a fraction of the period between 0 and 1 (exclusive), got {}",
            format_number(x)
        )))
    }
}

impl PrimaryCurrentShape {
    /// The waveform of one period (phase 0 at turn-on).
    ///
    /// Checks: peak > 0, 0 ≤ valley ≤ peak, 0 < duty < 1.
    pub fn waveform(&self) -> Result<PeriodicWaveform<ElectricCurrent>> {
        let z: ElectricCurrent = si(0.0);
        match *self {
            PrimaryCurrentShape::Continuous { valley, peak, duty } => {
                let peak = positive("peak_current", peak)?;
                let valley = non_negative("valley_current", valley)?;
                if valley.value > peak.value {
                    return Err(Error::invalid(format!(
                        "`valley_current` ({} A) must not exceed `peak_current` ({} A)",
                        format_number(valley.value),
                        format_number(peak.value)
                    )));
                }
                let d = fraction("duty", duty)?;
                PeriodicWaveform::new(vec![(0.0, valley), (d, peak), (d, z), (1.0, z)])
            }
            PrimaryCurrentShape::Discontinuous { peak, duty } => {
                let peak = positive("peak_current", peak)?;
                let d = fraction("duty", duty)?;
                PeriodicWaveform::new(vec![(0.0, z), (d, peak), (d, z), (1.0, z)])
            }
        }
    }

    /// Peak amplitude of harmonic `n` (n ≥ 1) of the primary current: A_n = 2·|c_n| of the
    /// period built by [`PrimaryCurrentShape::waveform`], integrated exactly piece by piece
    /// (see [`PeriodicWaveform::harmonic_amplitude`]). Assumes ideal edges (the current steps
    /// at turn-off and, in CCM, at turn-on; the leading-edge spike is left out). Valid: the
    /// checks of `waveform`; an overflowing result is an error.
    /// Reference: Erickson & Maksimović (2020), input filter chapter (harmonics of the
    /// converter's input current).
    pub fn harmonic_amplitude(&self, n: u32) -> Result<ElectricCurrent> {
        self.waveform()?.harmonic_amplitude(n)
    }
}

/// The switch's drain-to-source voltage over one period: zero during the on-time `duty`·T,
/// then a linear rise over `rise_time` to `amplitude` (input plus reflected voltage), flat,
/// and a linear fall over `fall_time` back to zero at the next turn-on (a trapezoid; the
/// leakage spike and DCM ringing are left out).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DrainVoltageShape {
    /// Off-state drain voltage (bulk voltage plus reflected voltage).
    pub amplitude: ElectricPotential,
    /// On-time as a fraction of the period (0 … 1).
    pub duty: f64,
    /// Rise time of the drain voltage at turn-off.
    pub rise_time: Time,
    /// Fall time of the drain voltage at turn-on.
    pub fall_time: Time,
}

impl DrainVoltageShape {
    /// The waveform of one period at a switching frequency (phase 0 at turn-on).
    ///
    /// Checks: amplitude > 0, 0 < duty < 1, rise and fall ≥ 0 and
    /// duty·T + rise + fall ≤ T.
    pub fn waveform(
        &self,
        switching_frequency: Frequency,
    ) -> Result<PeriodicWaveform<ElectricPotential>> {
        let v = positive("drain_voltage", self.amplitude)?;
        let d = fraction("duty", self.duty)?;
        let fsw = positive("switching_frequency", switching_frequency)?.value;
        let r = non_negative("rise_time", self.rise_time)?.value * fsw;
        let f = non_negative("fall_time", self.fall_time)?.value * fsw;
        if d + r + f > 1.0 {
            return Err(Error::invalid(format!(
                "the on-time ({} of the period) plus rise and fall times ({} and {} of the period) \
                 must fit in one period; shorten `rise_time` / `fall_time`",
                format_number(d),
                format_number(r),
                format_number(f)
            )));
        }
        let z: ElectricPotential = si(0.0);
        PeriodicWaveform::new(vec![(0.0, z), (d, z), (d + r, v), (1.0 - f, v), (1.0, z)])
    }

    /// Peak amplitude of harmonic `n` (n ≥ 1) of the drain voltage: A_n = 2·|c_n| of the
    /// trapezoid of [`DrainVoltageShape::waveform`]. With equal rise and fall times t_r it
    /// equals 2·V·(τ/T)·|sinc(nπτ/T)|·|sinc(nπt_r/T)| (τ the width between the 50 % points),
    /// whose envelope is flat to 1/(πτ), falls 20 dB/decade to 1/(πt_r) and 40 dB/decade
    /// above. Valid: the checks of `waveform`.
    /// Reference: Fourier series of a trapezoid (integration by parts); the envelope corners
    /// are common practice, no published source.
    pub fn harmonic_amplitude(
        &self,
        switching_frequency: Frequency,
        n: u32,
    ) -> Result<ElectricPotential> {
        self.waveform(switching_frequency)?.harmonic_amplitude(n)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn square_wave_fundamental() {
        // ±1 square wave: b1 = 4/π (Fourier series of a square wave), even harmonics vanish
        let one: ElectricPotential = si(1.0);
        let m: ElectricPotential = si(-1.0);
        let w = PeriodicWaveform::new(vec![(0.0, one), (0.5, one), (0.5, m), (1.0, m)]).unwrap();
        assert!((w.harmonic_amplitude(1).unwrap().value - 4.0 / PI).abs() < 1e-12);
        assert!(w.harmonic_amplitude(2).unwrap().value < 1e-12);
        assert!((w.harmonic_amplitude(3).unwrap().value - 4.0 / (3.0 * PI)).abs() < 1e-12);
        assert!(w.mean().value.abs() < 1e-12);
    }

    #[test]
    fn bad_shapes_are_errors() {
        let s = PrimaryCurrentShape::Continuous {
            valley: si(2.0),
            peak: si(1.0),
            duty: 0.4,
        };
        assert!(s.waveform().is_err());
        let d = DrainVoltageShape {
            amplitude: si(400.0),
            duty: 0.5,
            rise_time: si(5e-6),
            fall_time: si(5e-6),
        };
        assert!(d.waveform(si(100e3)).is_err());
    }
}
